// "Areas only": which planned tiles of a scene touch any AOI (their window, in scene map units, meets an AOI ring).
import type { PlannedTile, TilePlan } from '../core/tiling.ts';
import type { SceneInfo } from '../core/scene-source.ts';
import type { AoiRecord } from './state.ts';
import { reprojectAoi } from '../core/aoi.ts';
import { pixelToMap } from '../core/geotransform.ts';
import { pointInMultiPolygon } from '../core/point-in-polygon.ts';
import type { MapXY } from '../core/types.ts';

function segmentsCross(a: MapXY, b: MapXY, c: MapXY, d: MapXY): boolean {
  const o = (p: MapXY, q: MapXY, r: MapXY) => Math.sign((q[0] - p[0]) * (r[1] - p[1]) - (q[1] - p[1]) * (r[0] - p[0]));
  return o(a, b, c) !== o(a, b, d) && o(c, d, a) !== o(c, d, b);
}

/** Tiles whose window (as a quadrilateral in the scene CRS) overlaps any of `aois`. */
export function tilesTouchingAois(plan: TilePlan, info: SceneInfo, aois: readonly AoiRecord[]): PlannedTile[] {
  const g = info.georef;
  const polys = aois.map((a) => reprojectAoi(a, g.epsg).polygons);
  const rings = polys.flat(1);
  return plan.tiles.filter((t) => {
    const w = t.windowScenePx;
    const quad: MapXY[] = [
      pixelToMap(g.geoTransform, w.minXPx, w.minYPx), pixelToMap(g.geoTransform, w.maxXPx, w.minYPx),
      pixelToMap(g.geoTransform, w.maxXPx, w.maxYPx), pixelToMap(g.geoTransform, w.minXPx, w.maxYPx),
    ];
    const minX = Math.min(...quad.map((p) => p[0])), maxX = Math.max(...quad.map((p) => p[0]));
    const minY = Math.min(...quad.map((p) => p[1])), maxY = Math.max(...quad.map((p) => p[1]));
    for (const mp of polys) if (quad.some((p) => pointInMultiPolygon(p[0], p[1], mp))) return true;
    for (const poly of rings) {
      for (const ring of poly) {
        for (let i = 0; i + 1 < ring.length; i++) {
          const p = ring[i];
          if (p[0] >= minX && p[0] <= maxX && p[1] >= minY && p[1] <= maxY) return true;
          for (let k = 0; k < 4; k++) if (segmentsCross(p, ring[i + 1], quad[k], quad[(k + 1) % 4])) return true;
        }
      }
    }
    return false;
  });
}
