// Truth labels: vehicles are where the pixels say (each unoccluded car's box differs from its surroundings, random
// empty boxes mostly do not); GeoJSON is valid RFC 7946; per-AOI counts equal a brute-force turf count.
import { describe, expect, it, beforeAll, afterAll } from 'vitest';
import { mkdtempSync, rmSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import proj4 from 'proj4';
import { booleanPointInPolygon } from '@turf/boolean-point-in-polygon';
import { polygon as turfPolygon, point as turfPoint } from '@turf/helpers';
import gjv from 'geojson-validation';
import { makeSceneParams, type SceneParams } from '../../../synth/scene-params.ts';
import { SceneRenderer } from '../../../synth/render.ts';
import { sceneTruth } from '../../../synth/truth.ts';
import { synthToDir } from '../../../cli/synth.ts';
import { demoAoisGeoJson, demoSceneParams } from '../../../synth/demo.ts';
import { truthCountsPerAoi } from '../../../synth/truth-counts.ts';
import { MAX_ARRAY_EXTENT_M } from '../../../synth/solar.ts';
import type { TruthObject } from '../../../synth/objects.ts';
import { Rng } from '../../../synth/rng.ts';

let dir: string;
beforeAll(() => { dir = mkdtempSync(join(tmpdir(), 'seamtally-truth-')); });
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Box-frame coordinates of a map point: along the length, across the width. */
function local(o: { cxM: number; cyM: number; angleRad: number }, x: number, y: number): [number, number] {
  const c = Math.cos(o.angleRad);
  const s = Math.sin(o.angleRad);
  const dx = x - o.cxM;
  const dy = y - o.cyM;
  return [dx * c + dy * s, -dx * s + dy * c];
}

/**
 * Contrast of a box against a ring 0.25–0.7 m outside it (other vehicles excluded), in DN summed over bands: the
 * larger of |mean inside − mean of ring| and the extra spread inside (windscreens, roofs) over the ring's spread.
 */
function contrast(p: SceneParams, img: Uint8Array | Uint16Array, nb: number, o: { cxM: number; cyM: number; angleRad: number; lengthM: number; widthM: number }, others: TruthObject[]): number {
  const inner: number[][] = [];
  const ring: number[][] = [];
  const r = Math.hypot(o.lengthM, o.widthM) / 2 + 1;
  const x0 = Math.floor((o.cxM - r - p.originXM) / p.gsdM);
  const y0 = Math.floor((p.originYM - o.cyM - r) / p.gsdM);
  const n = Math.ceil((2 * r) / p.gsdM);
  for (let y = Math.max(0, y0); y < Math.min(p.heightPx, y0 + n); y++) {
    for (let x = Math.max(0, x0); x < Math.min(p.widthPx, x0 + n); x++) {
      const mx = p.originXM + (x + 0.5) * p.gsdM;
      const my = p.originYM - (y + 0.5) * p.gsdM;
      const [a, b] = local(o, mx, my);
      const v = Array.from({ length: nb }, (_, k) => img[(y * p.widthPx + x) * nb + k]);
      if (Math.abs(a) < o.lengthM * 0.4 && Math.abs(b) < o.widthM * 0.4) inner.push(v);
      else if (Math.abs(a) < o.lengthM / 2 + 0.7 && Math.abs(b) < o.widthM / 2 + 0.7 && (Math.abs(a) > o.lengthM / 2 + 0.25 || Math.abs(b) > o.widthM / 2 + 0.25)) {
        const inOther = others.some((q) => { const [qa, qb] = local(q, mx, my); return Math.abs(qa) < q.lengthM / 2 + 0.1 && Math.abs(qb) < q.widthM / 2 + 0.1; });
        if (!inOther) ring.push(v);
      }
    }
  }
  if (inner.length < 4 || ring.length < 4) return NaN;
  const mean = Array.from({ length: nb }, (_, k) => ring.reduce((s, v) => s + v[k], 0) / ring.length);
  const dev = (vs: number[][]) => vs.reduce((s, v) => s + v.reduce((t, x, k) => t + Math.abs(x - mean[k]), 0), 0) / vs.length;
  const inMean = Array.from({ length: nb }, (_, k) => inner.reduce((s, v) => s + v[k], 0) / inner.length);
  const meanDiff = inMean.reduce((s, v, k) => s + Math.abs(v - mean[k]), 0);
  return Math.max(meanDiff, dev(inner) - dev(ring));
}

describe('truth is where the pixels are', () => {
  it('unoccluded vehicles stand out from their surroundings; empty boxes mostly do not', () => {
    const p = makeSceneParams({ seed: 31, gsdM: 0.15, widthPx: 800, heightPx: 800, name: 'truth', hazeFraction: 0, footprintInset: 0.02, footprintRotDeg: 0 });
    const img = new SceneRenderer(p).render({ x0Px: 0, y0Px: 0, wPx: p.widthPx, hPx: p.heightPx });
    const truth = sceneTruth(p);
    const vehicles = truth.filter((o) => o.cls === 'vehicle');
    const clear = vehicles.filter((o) => o.visibleFraction === 1);
    expect(clear.length).toBeGreaterThan(40);
    const c = clear.map((o) => contrast(p, img, 3, o, vehicles.filter((q) => q !== o))).filter((v) => !Number.isNaN(v));
    const pass = c.filter((v) => v > 20).length / c.length;
    // Controls: car-sized boxes at random places at least 6 m from every truth object.
    const rng = new Rng(5);
    const ctrl: number[] = [];
    while (ctrl.length < 150) {
      const o = { cxM: p.originXM + rng.range(10, 110), cyM: p.originYM - rng.range(10, 110), angleRad: rng.range(0, Math.PI), lengthM: 4.4, widthM: 1.8 };
      if (truth.some((q) => Math.hypot(q.cxM - o.cxM, q.cyM - o.cyM) < 6 + q.lengthM / 2)) continue;
      const v = contrast(p, img, 3, o, vehicles);
      if (!Number.isNaN(v)) ctrl.push(v);
    }
    const ctrlPass = ctrl.filter((v) => v > 20).length / ctrl.length;
    console.log(`truth contrast: ${(pass * 100).toFixed(1)} % of ${c.length} clear vehicles vs ${(ctrlPass * 100).toFixed(1)} % of ${ctrl.length} empty boxes`);
    expect(pass).toBeGreaterThan(0.95); // measured 98 % (seed 31)
    expect(ctrlPass).toBeLessThan(0.25); // measured 13 %: road edges, shadows, markings
  });

  it('truth GeoJSON is valid RFC 7946 with counter-clockwise rings that match the scene-CRS boxes', () => {
    const p = makeSceneParams({ seed: 32, gsdM: 0.3, widthPx: 700, name: 'gj', epsg: 32633, originXM: 455_000, originYM: 5_400_000 });
    synthToDir(dir, p);
    const fc = JSON.parse(readFileSync(join(dir, 'gj.truth.geojson'), 'utf8'));
    expect(fc.crsEpsg).toBe(32633);
    expect(gjv.valid(fc)).toBe(true);
    expect(fc.features.length).toBeGreaterThan(50);
    const utm = '+proj=utm +zone=33 +datum=WGS84 +units=m +no_defs'; // EPSG:32633 (proj4 definition, EPSG registry)
    for (const f of fc.features) {
      const ring: [number, number][] = f.geometry.coordinates[0];
      expect(ring).toHaveLength(5);
      let area2 = 0;
      for (let i = 0; i < 4; i++) area2 += ring[i][0] * ring[i + 1][1] - ring[i + 1][0] * ring[i][1];
      expect(area2).toBeGreaterThan(0); // RFC 7946 §3.1.6: exterior rings counter-clockwise
      const xy = ring.slice(0, 4).map((ll) => proj4('WGS84', utm, ll));
      const cx = xy.reduce((s, q) => s + q[0], 0) / 4;
      const cy = xy.reduce((s, q) => s + q[1], 0) / 4;
      expect(Math.abs(cx - f.properties.cxM)).toBeLessThan(0.02);
      expect(Math.abs(cy - f.properties.cyM)).toBeLessThan(0.02);
      const e0 = Math.hypot(xy[1][0] - xy[0][0], xy[1][1] - xy[0][1]);
      const e1 = Math.hypot(xy[2][0] - xy[1][0], xy[2][1] - xy[1][1]);
      expect(Math.max(e0, e1)).toBeCloseTo(Math.max(f.properties.lengthM, f.properties.widthM), 1);
      expect(Math.min(e0, e1)).toBeCloseTo(Math.min(f.properties.lengthM, f.properties.widthM), 1);
      const pr = f.properties;
      expect(['vehicle', 'solar_panel']).toContain(pr.class);
      if (pr.class === 'vehicle' && pr.kind === 'car') {
        // Car sizes: 3.6–5.2 × 1.6–2.0 m (published 2023 market data on European new cars).
        expect(pr.lengthM).toBeGreaterThanOrEqual(3.6); expect(pr.lengthM).toBeLessThanOrEqual(5.2);
        expect(pr.widthM).toBeGreaterThanOrEqual(1.6); expect(pr.widthM).toBeLessThanOrEqual(2.0);
      }
      if (pr.class === 'solar_panel') {
        expect(pr.moduleCount).toBeGreaterThan(0);
        expect(Math.max(pr.lengthM, pr.widthM)).toBeLessThanOrEqual(MAX_ARRAY_EXTENT_M);
      }
      expect(pr.visibleFraction).toBeGreaterThanOrEqual(0);
      expect(pr.visibleFraction).toBeLessThanOrEqual(1);
    }
  });

  it('demo truth counts per AOI equal a brute-force turf count over every object', () => {
    const aois = demoAoisGeoJson() as { features: { properties: { id: string }; geometry: { type: 'Polygon'; coordinates: [number, number][][] } }[] };
    const toLonLat = proj4('+proj=utm +zone=32 +datum=WGS84 +units=m +no_defs', 'WGS84'); // EPSG:32632
    const scenes = demoSceneParams().filter((p) => p.date === '2024-09-05');
    const counts = truthCountsPerAoi(scenes, aois);
    // Brute force: every object of both scenes, de-duplicated by position, tested against every AOI with turf (lon/lat).
    const seen = new Map<string, TruthObject>();
    for (const p of scenes) for (const o of sceneTruth(p)) seen.set(`${o.cls}:${o.cxM.toFixed(4)},${o.cyM.toFixed(4)}`, o);
    for (const a of aois.features) {
      const poly = turfPolygon(a.geometry.coordinates);
      const want = { vehicle: 0, solar_panel: 0 };
      for (const o of seen.values()) if (booleanPointInPolygon(turfPoint(toLonLat.forward([o.cxM, o.cyM])), poly)) want[o.cls]++;
      expect(counts[a.properties.id]).toEqual(want);
      expect(want.vehicle + want.solar_panel).toBeGreaterThan(0);
    }
    // And the demo shows what it promises: new rooftop arrays on date 2 in the depot/warehouse AOI.
    const d1 = truthCountsPerAoi(demoSceneParams().filter((p) => p.date === '2024-03-14'), aois);
    expect(counts['depot-roofs'].solar_panel).toBeGreaterThan(d1['depot-roofs'].solar_panel);
    expect(counts['car-park-east'].vehicle).toBeGreaterThan(d1['car-park-east'].vehicle * 1.5);
  });
});
