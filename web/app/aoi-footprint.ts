// Whether an area meets a scene at all (bounding boxes in the scene's CRS), to warn about an AOI that lies
// outside every open scene when it is imported (the CLI refuses such an AOI: 'aoi-outside').
import type { AoiRecord, SceneEntry } from './state.ts';
import type { SceneInfo } from '../core/scene-source.ts';
import { reprojectAoi } from '../core/aoi.ts';
import { pixelToMap } from '../core/geotransform.ts';

/** True when the AOI's bounding box and the scene's footprint box overlap in the scene CRS. */
export function aoiMeetsScene(aoi: AoiRecord, info: SceneInfo): boolean {
  const g = info.georef;
  let pts;
  try { pts = reprojectAoi(aoi, g.epsg).polygons.flat(2); } catch { return false; }
  const corners = [[0, 0], [info.widthPx, 0], [info.widthPx, info.heightPx], [0, info.heightPx]].map(([x, y]) => pixelToMap(g.geoTransform, x, y));
  const box = (ps: ReadonlyArray<readonly [number, number]>) => ({
    minX: Math.min(...ps.map((p) => p[0])), maxX: Math.max(...ps.map((p) => p[0])),
    minY: Math.min(...ps.map((p) => p[1])), maxY: Math.max(...ps.map((p) => p[1])),
  });
  const a = box(pts), s = box(corners);
  return a.minX <= s.maxX && a.maxX >= s.minX && a.minY <= s.maxY && a.maxY >= s.minY;
}

/** AOIs among `aois` that meet none of `scenes` (none when no scene is open yet). */
export function aoisOutsideScenes(aois: readonly AoiRecord[], scenes: readonly SceneEntry[]): AoiRecord[] {
  if (scenes.length === 0) return [];
  return aois.filter((a) => !scenes.some((s) => aoiMeetsScene(a, s.info)));
}
