// Truth labels of a scene: every vehicle and PV array whose centre lies in the imaged footprint, with tree occlusion.
import type { SceneParams } from './scene-params.ts';
import { worldOf, type World } from './world.ts';
import type { TruthObject } from './objects.ts';
import { footprintTestMap } from './footprint.ts';
import { createTransform } from '../web/core/crs.ts';
import { boxRingLonLat } from '../web/core/export-geojson.ts';

/** Share of an oriented box not covered by tree crowns, from an 8 × 4 grid of sample points. */
export function visibleFraction(o: TruthObject, crowns: number[]): number {
  const c = Math.cos(o.angleRad);
  const s = Math.sin(o.angleRad);
  const near: number[] = [];
  const reach = Math.max(o.lengthM, o.widthM) / 2;
  for (let k = 0; k < crowns.length; k += 3) {
    if (Math.hypot(crowns[k] - o.cxM, crowns[k + 1] - o.cyM) < crowns[k + 2] + reach) near.push(crowns[k], crowns[k + 1], crowns[k + 2]);
  }
  if (near.length === 0) return 1;
  let seen = 0;
  const nu = 8;
  const nv = 4;
  for (let i = 0; i < nu; i++) {
    for (let j = 0; j < nv; j++) {
      const u = ((i + 0.5) / nu - 0.5) * o.lengthM;
      const v = ((j + 0.5) / nv - 0.5) * o.widthM;
      const x = o.cxM + u * c - v * s;
      const y = o.cyM + u * s + v * c;
      let hidden = false;
      for (let k = 0; k < near.length; k += 3) {
        const dx = x - near[k];
        const dy = y - near[k + 1];
        if (dx * dx + dy * dy < near[k + 2] * near[k + 2]) { hidden = true; break; }
      }
      if (!hidden) seen++;
    }
  }
  return seen / (nu * nv);
}

/**
 * Visit the scene's truth objects block by block (row-major in the world grid), so a huge scene's truth can be
 * written out without holding it all. An object belongs to the scene when its centre lies in the imaged footprint.
 */
export function forEachTruth(p: SceneParams, visit: (o: TruthObject) => void, world: World = worldOf(p)): void {
  const inside = footprintTestMap(p);
  const minX = p.originXM;
  const maxX = p.originXM + p.widthPx * p.gsdM;
  const maxY = p.originYM;
  const minY = p.originYM - p.heightPx * p.gsdM;
  // Strips 8 blocks wide, row by row inside a strip: a block's 3 × 3 neighbourhood stays in a small cache.
  const blocks = world.blocksFor(minX, minY, maxX, maxY).sort((a, b) => Math.floor(a[0] / 8) - Math.floor(b[0] / 8) || a[1] - b[1] || a[0] - b[0]);
  for (const [bx, by] of blocks) {
    const content = world.block(bx, by);
    const keep = content.truth.filter((o) => inside(o.cxM, o.cyM));
    if (keep.length === 0) continue;
    const crowns: number[] = [];
    for (let dy = -1; dy <= 1; dy++) for (let dx = -1; dx <= 1; dx++) crowns.push(...world.block(bx + dx, by + dy).crowns);
    for (const o of keep) visit({ ...o, visibleFraction: visibleFraction(o, crowns) });
  }
}

/** All truth objects of a scene (convenience; use forEachTruth for very large scenes). */
export function sceneTruth(p: SceneParams): TruthObject[] {
  const out: TruthObject[] = [];
  forEachTruth(p, (o) => out.push(o));
  return out;
}

const r6 = (v: number) => Math.round(v * 1e6) / 1e6;

/** One RFC 7946 feature (lon/lat polygon, counter-clockwise) with the object's scene-CRS box in its properties. */
export function truthFeature(o: TruthObject, toLonLat: (xy: readonly [number, number]) => readonly [number, number]): object {
  const ring = boxRingLonLat(o.cxM, o.cyM, o.lengthM, o.widthM, o.angleRad, toLonLat, 7);
  const props: Record<string, unknown> = {
    class: o.cls, kind: o.kind, cxM: r6(o.cxM), cyM: r6(o.cyM), lengthM: r6(o.lengthM), widthM: r6(o.widthM),
    angleRad: r6(o.angleRad), heightM: r6(o.heightM), visibleFraction: o.visibleFraction ?? 1,
  };
  if (o.moduleCount !== undefined) props.moduleCount = o.moduleCount;
  return { type: 'Feature', geometry: { type: 'Polygon', coordinates: [ring] }, properties: props };
}

/** Header fields of the truth collection (written before the features). */
export function truthHeader(p: SceneParams): Record<string, unknown> {
  return {
    type: 'FeatureCollection',
    name: p.name,
    crsEpsg: p.epsg,
    scene: { file: `${p.name}.tif`, date: p.date, gsdM: p.gsdM, widthPx: p.widthPx, heightPx: p.heightPx, originXM: p.originXM, originYM: p.originYM, seed: p.seed, scenario: p.scenario, bands: p.bands, bits: p.bits, sunAzimuthDeg: p.sunAzimuthDeg, sunElevationDeg: p.sunElevationDeg },
    countingRule: 'An object belongs to the scene when its box centre lies inside the imaged (non-nodata) footprint.',
  };
}

/** Stream the truth GeoJSON as text chunks (header, features, footer), bounded memory. */
export function writeTruthGeoJson(p: SceneParams, emit: (text: string) => void, world: World = worldOf(p)): number {
  const toLonLat = createTransform(p.epsg, 4326);
  const head = JSON.stringify(truthHeader(p));
  emit(`${head.slice(0, -1)},"features":[\n`);
  let n = 0;
  forEachTruth(p, (o) => {
    emit(`${n === 0 ? '' : ',\n'}${JSON.stringify(truthFeature(o, toLonLat))}`);
    n++;
  }, world);
  emit('\n]}\n');
  return n;
}
