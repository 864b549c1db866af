// Seam merging: objects on seams and tile corners are kept exactly once, and overlapping scenes count each object once.
import { describe, it, expect } from 'vitest';
import { planTiles, type TilePlan } from '../../../web/core/tiling.ts';
import { keepCoreCentres, mergeDetectionTables, concatDetectionTables, selectRows, DEFAULT_MERGE_IOU } from '../../../web/core/seam-merge.ts';
import { greedyNms } from '../../../web/core/nms.ts';
import { mulberry32 } from '../../helpers/mulberry32.ts';
import type { PixelDetections } from '../../../web/core/decode-outputs.ts';
import { createDetectionTable, type DetectionTable } from '../../../web/core/types.ts';

interface Obj { xPx: number; yPx: number; lengthPx: number; widthPx: number; angleRad: number; classIdx: number }

let seed = 42;
const rnd = () => ((seed = (seed * 48271) % 2147483647) / 2147483647);

/** Invented objects: on every vertical and horizontal seam, on every tile corner, just either side, and at random. */
function objectsFor(plan: TilePlan): Obj[] {
  const car = (xPx: number, yPx: number): Obj => ({ xPx, yPx, lengthPx: 4.4 / 0.3, widthPx: 1.8 / 0.3, angleRad: rnd() * Math.PI, classIdx: rnd() < 0.8 ? 0 : 1 });
  const xs = new Set<number>(), ys = new Set<number>();
  for (const t of plan.tiles) { xs.add(t.corePx.minXPx); ys.add(t.corePx.minYPx); }
  const out: Obj[] = [];
  const spacing = 40; // px: objects far enough apart not to overlap one another
  for (const x of xs) for (let y = 20; y < plan.modelHeightPx - 20; y += spacing) out.push(car(x, y));
  for (const y of ys) for (let x = 40; x < plan.modelWidthPx - 20; x += spacing) out.push(car(x + 3, y)); // off the vertical lines
  for (const x of xs) for (const y of ys) if (x > 0 && y > 0) { out.push(car(x + 20, y - 1e-9)); out.push(car(x - 1e-9, y + 20)); }
  // Only objects inside the scene (a corner object 20 px right of the last seam can fall outside a narrow last core).
  const inScene = out.filter((o) => o.xPx >= 0 && o.xPx < plan.modelWidthPx && o.yPx >= 0 && o.yPx < plan.modelHeightPx);
  const keepApart = inScene.filter((o, i) => inScene.every((p, j) => j >= i || Math.hypot(o.xPx - p.xPx, o.yPx - p.yPx) > 18));
  for (let n = 0; n < 300; n++) {
    const o = car(rnd() * plan.modelWidthPx, rnd() * plan.modelHeightPx);
    if (keepApart.every((p) => Math.hypot(o.xPx - p.xPx, o.yPx - p.yPx) > 18)) keepApart.push(o);
  }
  return keepApart;
}

/** A perfect detector for one tile: every object whose centre lies in the window, centre moved by `jitterPx`. */
function detectTile(objs: Obj[], w: { minXPx: number; minYPx: number; maxXPx: number; maxYPx: number }, jitterPx: number): PixelDetections {
  const seen = objs.map((o, id) => ({ o, id })).filter(({ o }) => o.xPx >= w.minXPx && o.xPx < w.maxXPx && o.yPx >= w.minYPx && o.yPx < w.maxYPx);
  const n = seen.length;
  const d: PixelDetections = {
    count: n, cxPx: new Float64Array(n), cyPx: new Float64Array(n), lengthPx: new Float32Array(n), widthPx: new Float32Array(n),
    angleRad: new Float32Array(n), score: new Float32Array(n), classIdx: new Uint8Array(n),
  };
  seen.forEach(({ o, id }, k) => {
    d.cxPx[k] = o.xPx + (rnd() - 0.5) * 2 * jitterPx; d.cyPx[k] = o.yPx + (rnd() - 0.5) * 2 * jitterPx;
    d.lengthPx[k] = o.lengthPx; d.widthPx[k] = o.widthPx; d.angleRad[k] = o.angleRad;
    d.score[k] = 0.5 + 0.4 * rnd() + id * 1e-7; d.classIdx[k] = o.classIdx;
  });
  return d;
}

/** Model pixels → a north-up metric frame (UTM-like origin), as the pipeline does. */
function toGround(d: PixelDetections, originXM: number, originYM: number, gsdM: number, sceneIdx: number, frame = 'EPSG:32633'): DetectionTable {
  const t = createDetectionTable(frame, d.count);
  for (let i = 0; i < d.count; i++) {
    t.cxM[i] = originXM + d.cxPx[i] * gsdM; t.cyM[i] = originYM - d.cyPx[i] * gsdM;
    t.lengthM[i] = d.lengthPx[i] * gsdM; t.widthM[i] = d.widthPx[i] * gsdM; t.angleRad[i] = -d.angleRad[i];
    t.score[i] = d.score[i]; t.classIdx[i] = d.classIdx[i]; t.sceneIdx[i] = sceneIdx;
  }
  t.count = d.count;
  return t;
}

/** For each object, how many detections lie within `tolM` of its centre with its class. */
function multiplicity(objs: Obj[], t: DetectionTable, x0: number, y0: number, gsdM: number, tolM: number): number[] {
  return objs.map((o) => {
    let k = 0;
    for (let i = 0; i < t.count; i++) {
      if (t.classIdx[i] === o.classIdx && Math.hypot(t.cxM[i] - (x0 + o.xPx * gsdM), t.cyM[i] - (y0 - o.yPx * gsdM)) < tolM) k++;
    }
    return k;
  });
}

describe('keepCoreCentres + mergeDetectionTables across tile seams', () => {
  for (const [tilePx, overlap] of [[256, 'auto'], [200, 30], [128, 12]] as const) {
    const plan = planTiles({ sceneWidthPx: 900, sceneHeightPx: 700, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx, maxObjectExtentM: 6, overlapPx: overlap });
    const objs = objectsFor(plan);
    it(`tile ${tilePx}, overlap ${overlap}: exact centres → each of ${objs.length} objects kept exactly once by the core rule alone`, () => {
      expect(plan.tiles.length).toBeGreaterThan(3);
      const perTile = plan.tiles.map((t) => keepCoreCentres(detectTile(objs, t.windowModelPx, 0), t.corePx));
      const table = concatDetectionTables(perTile.map((d) => toGround(d, 500000, 4000000, 0.3, 0)));
      expect(table.count).toBe(objs.length);
      expect(multiplicity(objs, table, 500000, 4000000, 0.3, 0.01).every((k) => k === 1)).toBe(true);
      // Without the core rule every object near a seam would be counted by several tiles.
      const naive = plan.tiles.reduce((a, t) => a + detectTile(objs, t.windowModelPx, 0).count, 0);
      expect(naive).toBeGreaterThan(objs.length);
    });
    it(`tile ${tilePx}, overlap ${overlap}: jittered centres (±0.4 px per tile) with a 1 px margin + NMS → each object exactly once`, () => {
      const perTile = plan.tiles.map((t) => toGround(keepCoreCentres(detectTile(objs, t.windowModelPx, 0.4), t.corePx, { marginPx: 1 }), 500000, 4000000, 0.3, 0));
      const merged = mergeDetectionTables(perTile);
      expect(merged.count).toBe(objs.length);
      expect(multiplicity(objs, merged, 500000, 4000000, 0.3, 0.3).every((k) => k === 1)).toBe(true);
      for (let i = 1; i < merged.count; i++) expect(merged.score[i]).toBeLessThanOrEqual(merged.score[i - 1]);
    });
  }
});

describe('two overlapping scenes of one date', () => {
  it('count each object once (different GSDs, one metric frame)', () => {
    // Scene A: 0.3 m, 800 × 600 px at x0 = 500000; scene B: 0.5 m, 400 × 300 px starting 150 m further east,
    // both resampled to the model's 0.3 m. Objects live in ground metres.
    const groundObjs: Array<{ xM: number; yM: number; a: number; c: number }> = [];
    for (let x = 500005; x < 500400; x += 9) for (let y = 3999995; y > 3999830; y -= 11) groundObjs.push({ xM: x + rnd(), yM: y - rnd(), a: rnd() * Math.PI, c: rnd() < 0.9 ? 0 : 1 });
    const scenes = [
      { x0: 500000, y0: 4000000, w: 800, h: 600, gsd: 0.3 },
      { x0: 500150, y0: 4000000, w: 400, h: 300, gsd: 0.5 },
    ];
    const tables: DetectionTable[] = [];
    const inScene: number[] = new Array(groundObjs.length).fill(0);
    scenes.forEach((s, si) => {
      const plan = planTiles({ sceneWidthPx: s.w, sceneHeightPx: s.h, sceneGsdM: s.gsd, modelGsdM: 0.3, tilePx: 256, maxObjectExtentM: 6 });
      const objs: Obj[] = [];
      groundObjs.forEach((g, k) => {
        const xPx = (g.xM - s.x0) / 0.3, yPx = (s.y0 - g.yM) / 0.3;
        if (xPx >= 0 && yPx >= 0 && xPx < s.w * s.gsd / 0.3 && yPx < s.h * s.gsd / 0.3) inScene[k]++;
        objs.push({ xPx, yPx, lengthPx: 4.4 / 0.3, widthPx: 1.8 / 0.3, angleRad: g.a, classIdx: g.c });
      });
      for (const t of plan.tiles) {
        const d = keepCoreCentres(detectTile(objs, t.windowModelPx, 0.3), t.corePx, { marginPx: 1 });
        tables.push(toGround(d, s.x0, s.y0, 0.3, si));
      }
    });
    expect(inScene.filter((k) => k === 2).length).toBeGreaterThan(50); // the overlap holds many objects
    const before = tables.reduce((a, t) => a + t.count, 0);
    const merged = mergeDetectionTables(tables, { iouThreshold: 0.5 });
    expect(before).toBeGreaterThan(merged.count);
    expect(merged.count).toBe(inScene.filter((k) => k > 0).length);
    const mult = groundObjs.map((g) => {
      let k = 0;
      for (let i = 0; i < merged.count; i++) if (merged.classIdx[i] === g.c && Math.hypot(merged.cxM[i] - g.xM, merged.cyM[i] - g.yM) < 0.3) k++;
      return k;
    });
    mult.forEach((k, i) => expect(k).toBe(inScene[i] > 0 ? 1 : 0));
  });
  it('refuses to merge tables in different frames', () => {
    expect(() => concatDetectionTables([createDetectionTable('EPSG:32633', 0), createDetectionTable('EPSG:32634', 0)])).toThrow(/one frame/);
  });
  it('Soft-NMS option keeps rows sorted by decayed score', () => {
    const t = createDetectionTable('EPSG:32633', 3);
    t.count = 3;
    t.cxM.set([0, 0.2, 50]); t.cyM.set([0, 0, 0]); t.lengthM.set([4.4, 4.4, 4.4]); t.widthM.set([1.8, 1.8, 1.8]); t.score.set([0.9, 0.8, 0.7]);
    const m = mergeDetectionTables([t], { soft: { method: 'gaussian', scoreThreshold: 0.5 } });
    expect(m.count).toBe(2); // the near-duplicate decays to 0.8·exp(−IoU²/0.5) ≈ 0.25 and drops out
    expect(Array.from(m.cxM.subarray(0, 2))).toEqual([0, 50]);
  });
});

describe('selectRows and the merge on many rows', () => {
  function randomTable(n: number, seedValue: number): DetectionTable {
    const r = mulberry32(seedValue);
    const t = createDetectionTable('EPSG:32633', n);
    for (let i = 0; i < n; i++) {
      t.cxM[i] = 500000 + r() * 3000; t.cyM[i] = 4000000 + r() * 3000; t.lengthM[i] = 3.5 + r() * 2; t.widthM[i] = 1.6 + r() * 0.5;
      t.angleRad[i] = r() * Math.PI; t.score[i] = Math.ceil(r() * 32) / 32; t.classIdx[i] = r() < 0.9 ? 0 : 1; t.sceneIdx[i] = Math.floor(r() * 3);
    }
    t.count = n;
    return t;
  }
  const columns = ['cxM', 'cyM', 'lengthM', 'widthM', 'angleRad', 'score', 'classIdx', 'sceneIdx'] as const;

  it('selectRows copies each requested row (any order, repeats, across many source blocks)', () => {
    const t = randomTable(150_000, 3);
    const r = mulberry32(4);
    const rows = Uint32Array.from({ length: 90_000 }, (_, k) => (k % 7 === 0 ? 149_999 - k : Math.floor(r() * t.count)));
    const s = selectRows(t, rows);
    expect(s.count).toBe(rows.length);
    expect(s.frameCrs).toBe(t.frameCrs);
    for (const col of columns) {
      let bad = 0;
      for (let k = 0; k < rows.length; k++) if (s[col][k] !== t[col][rows[k]]) bad++;
      expect(bad, col).toBe(0);
    }
  });

  it('mergeDetectionTables = concatenation, greedy NMS of the reference, then those rows', () => {
    // Duplicates: every fourth row is a shifted copy of the row before it, in another table (a seam).
    const base = randomTable(40_000, 5);
    for (let i = 3; i < base.count; i += 4) {
      base.cxM[i] = base.cxM[i - 1] + 0.2; base.cyM[i] = base.cyM[i - 1]; base.lengthM[i] = base.lengthM[i - 1];
      base.widthM[i] = base.widthM[i - 1]; base.angleRad[i] = base.angleRad[i - 1]; base.classIdx[i] = base.classIdx[i - 1];
    }
    const tables = [0, 1, 2, 3].map((part) => selectRows(base, Uint32Array.from({ length: 10_000 }, (_, k) => 4 * k + part)));
    const all = concatDetectionTables(tables);
    const keep = greedyNms(all, { iouThreshold: DEFAULT_MERGE_IOU });
    const merged = mergeDetectionTables(tables);
    expect(merged.count).toBe(keep.length);
    expect(merged.count).toBeLessThan(0.8 * all.count);
    for (const col of columns) {
      let bad = 0;
      for (let k = 0; k < keep.length; k++) if (merged[col][k] !== all[col][keep[k]]) bad++;
      expect(bad, col).toBe(0);
    }
  });
});
