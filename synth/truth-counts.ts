// Truth counts per AOI and date: objects of all scenes of a date, de-duplicated, counted when their centre is inside.
import type { SceneParams } from './scene-params.ts';
import { forEachTruth } from './truth.ts';
import type { TruthClass } from './objects.ts';
import { createTransform } from '../web/core/crs.ts';

type Ring = [number, number][];
interface AoiFeature { id?: string | number; properties?: { id?: string } | null; geometry: { type: 'Polygon'; coordinates: Ring[] } | { type: 'MultiPolygon'; coordinates: Ring[][] } }

/** Even-odd ray casting (W. R. Franklin's PNPOLY rule) over all rings of all polygons. */
function inside(x: number, y: number, polys: Ring[][]): boolean {
  let c = false;
  for (const poly of polys) {
    for (const ring of poly) {
      for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
        const [xi, yi] = ring[i];
        const [xj, yj] = ring[j];
        if (yi > y !== yj > y && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi) c = !c;
      }
    }
  }
  return c;
}

export type TruthCounts = Record<string, Record<TruthClass, number>>;

/**
 * Count truth objects per AOI for scenes of ONE date (an object seen in two overlapping scenes counts once: the
 * world places it at the same coordinates in both). AOIs are RFC 7946 lon/lat features; the rule is centre-inside.
 */
export function truthCountsPerAoi(scenes: readonly SceneParams[], aois: { features: AoiFeature[] }): TruthCounts {
  if (scenes.length === 0) return {};
  const epsg = scenes[0].epsg;
  const toMap = createTransform(4326, epsg);
  const prepared = aois.features.map((f, k) => {
    const polys: Ring[][] = f.geometry.type === 'Polygon' ? [f.geometry.coordinates] : f.geometry.coordinates;
    const mapPolys = polys.map((p) => p.map((r) => r.map(([lon, lat]) => toMap([lon, lat]) as [number, number])));
    const xs = mapPolys.flat(2).map((q) => q[0]);
    const ys = mapPolys.flat(2).map((q) => q[1]);
    return { id: String(f.properties?.id ?? f.id ?? k), polys: mapPolys, minX: Math.min(...xs), maxX: Math.max(...xs), minY: Math.min(...ys), maxY: Math.max(...ys) };
  });
  const counts: TruthCounts = {};
  for (const a of prepared) counts[a.id] = { vehicle: 0, solar_panel: 0 };
  const seen = new Set<string>();
  for (const p of scenes) {
    if (p.epsg !== epsg) throw new Error(`scenes of one date must share a CRS for truth counting (EPSG:${p.epsg} vs EPSG:${epsg})`);
    forEachTruth(p, (o) => {
      const key = `${o.cls}:${o.cxM.toFixed(4)},${o.cyM.toFixed(4)}`;
      if (seen.has(key)) return;
      seen.add(key);
      for (const a of prepared) {
        if (o.cxM < a.minX || o.cxM > a.maxX || o.cyM < a.minY || o.cyM > a.maxY) continue;
        if (inside(o.cxM, o.cyM, a.polys)) counts[a.id][o.cls]++;
      }
    });
  }
  return counts;
}
