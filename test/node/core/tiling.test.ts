// Tiling plan: cores partition the resampled scene exactly, windows hold every object whole, overhead figures.
import { describe, it, expect } from 'vitest';
import { planTiles, autoOverlapPx, chooseTilePx, MAX_MODEL_PX, tilesTouching, subsetOverheadRatio, type TilePlan } from '../../../web/core/tiling.ts';
import { SeamtallyError } from '../../../web/core/errors.ts';

function coreCoverage(plan: TilePlan): Uint8Array {
  const cov = new Uint8Array(plan.modelWidthPx * plan.modelHeightPx);
  for (const t of plan.tiles) {
    for (let y = t.corePx.minYPx; y < t.corePx.maxYPx; y++) {
      for (let x = t.corePx.minXPx; x < t.corePx.maxXPx; x++) cov[y * plan.modelWidthPx + x]++;
    }
  }
  return cov;
}

const CASES = [
  { sceneWidthPx: 1000, sceneHeightPx: 700, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx: 256, maxObjectExtentM: 6 },
  { sceneWidthPx: 1333, sceneHeightPx: 517, sceneGsdM: 0.5, modelGsdM: 0.3, tilePx: 512, maxObjectExtentM: 7 }, // upsampled
  { sceneWidthPx: 2049, sceneHeightPx: 1500, sceneGsdM: 0.15, modelGsdM: 0.3, tilePx: 320, maxObjectExtentM: 12 }, // downsampled
  { sceneWidthPx: 300, sceneHeightPx: 200, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx: 512, maxObjectExtentM: 7 }, // smaller than a tile
  { sceneWidthPx: 777, sceneHeightPx: 1031, sceneGsdM: 0.31, modelGsdM: 0.3, tilePx: 128, maxObjectExtentM: 5, overlapPx: 9 },
  { sceneWidthPx: 513, sceneHeightPx: 512, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx: 512, maxObjectExtentM: 0, overlapPx: 0 },
];

// The same scenes with window starts aligned to a 32 px network stride (what the pipeline plans for the shipped model).
const ALIGNED_CASES = CASES.map((c) => ({ ...c, alignPx: 32 }));

describe('planTiles', () => {
  for (const c of [...CASES, ...ALIGNED_CASES]) {
    const label = `${c.sceneWidthPx}×${c.sceneHeightPx} px at ${c.sceneGsdM} m → ${c.modelGsdM} m, tile ${c.tilePx}`;
    it(`every model pixel lies in exactly one core: ${label}`, () => {
      const plan = planTiles(c);
      expect(plan.modelWidthPx).toBe(Math.ceil(c.sceneWidthPx * (c.sceneGsdM / c.modelGsdM) - 1e-9));
      const cov = coreCoverage(plan);
      expect(cov.every((v) => v === 1)).toBe(true);
    });
    it(`windows hold each core with the overlap on every side (clipped at scene edges): ${label}`, () => {
      const plan = planTiles(c);
      const ov = plan.overlapPx;
      for (const t of plan.tiles) {
        const w = t.windowModelPx, k = t.corePx;
        expect(w.minXPx).toBeLessThanOrEqual(Math.max(0, k.minXPx - ov));
        expect(w.minYPx).toBeLessThanOrEqual(Math.max(0, k.minYPx - ov));
        expect(w.maxXPx).toBeGreaterThanOrEqual(Math.min(plan.modelWidthPx, k.maxXPx + ov));
        expect(w.maxYPx).toBeGreaterThanOrEqual(Math.min(plan.modelHeightPx, k.maxYPx + ov));
        expect(w.minXPx).toBeGreaterThanOrEqual(0);
        // aligned starts: the last window may reach up to alignPx − 1 model pixels past the scene (read as nodata)
        expect(w.maxXPx).toBeLessThanOrEqual(plan.modelWidthPx + plan.alignPx - 1);
        expect(w.maxYPx).toBeLessThanOrEqual(plan.modelHeightPx + plan.alignPx - 1);
        expect(w.maxXPx - w.minXPx).toBe(Math.min(c.tilePx, plan.modelWidthPx));
        expect(w.maxYPx - w.minYPx).toBe(Math.min(c.tilePx, plan.modelHeightPx));
        // Scene windows: exact float mapping, integer read window contains it and stays inside the scene.
        expect(t.windowScenePx.minXPx).toBeCloseTo(w.minXPx / plan.scale, 9);
        expect(t.readScenePx.minXPx).toBeLessThanOrEqual(t.windowScenePx.minXPx);
        expect(t.readScenePx.maxXPx).toBeGreaterThanOrEqual(Math.min(c.sceneWidthPx, t.windowScenePx.maxXPx));
        expect(t.readScenePx.minYPx).toBeGreaterThanOrEqual(0);
        expect(t.readScenePx.maxYPx).toBeLessThanOrEqual(c.sceneHeightPx);
      }
    });
  }

  for (const c of ALIGNED_CASES) {
    it(`aligned windows start on multiples of 32 and keep their tile size: ${c.sceneWidthPx}×${c.sceneHeightPx}, tile ${c.tilePx}`, () => {
      const plan = planTiles(c);
      for (const t of plan.tiles) {
        expect(t.windowModelPx.minXPx % 32).toBe(0);
        expect(t.windowModelPx.minYPx % 32).toBe(0);
        if (plan.modelWidthPx > c.tilePx) expect(t.windowModelPx.maxXPx - t.windowModelPx.minXPx).toBe(c.tilePx);
        // the last window reaches less than one alignment step past the scene
        expect(t.windowModelPx.maxXPx).toBeLessThan(Math.max(plan.modelWidthPx, c.tilePx) + 32);
      }
    });
  }

  it('two tile sizes put every window on the same 32 px phase (a strided network then sees the same pixels alike)', () => {
    const base = { sceneWidthPx: 4000, sceneHeightPx: 4000, sceneGsdM: 0.3, modelGsdM: 0.3, maxObjectExtentM: 25, alignPx: 32 };
    for (const tilePx of [384, 512, 640, 1440]) {
      const plan = planTiles({ ...base, tilePx });
      expect(plan.tiles.every((t) => t.windowModelPx.minXPx % 32 === 0 && t.windowModelPx.minYPx % 32 === 0)).toBe(true);
    }
    // without alignment the evenly spread starts fall on other phases (the test would notice a lost alignment)
    const loose = planTiles({ ...base, alignPx: 1, tilePx: 700 });
    expect(loose.tiles.some((t) => t.windowModelPx.minXPx % 32 !== 0)).toBe(true);
  });

  it('auto overlap ≥ half the largest object extent plus context: ceil(extent / 2 / gsd) + 8', () => {
    expect(autoOverlapPx(7, 0.3)).toBe(Math.ceil(3.5 / 0.3) + 8); // 12 + 8
    expect(autoOverlapPx(6, 0.3)).toBe(18); // 3 / 0.3 = 10 exactly, no float creep to 11
    const plan = planTiles({ sceneWidthPx: 4000, sceneHeightPx: 4000, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx: 512, maxObjectExtentM: 7 });
    expect(plan.overlapPx * 0.3).toBeGreaterThanOrEqual(7 / 2);
  });

  it('a model\'s contextPx replaces the default context margin in the automatic overlap', () => {
    expect(autoOverlapPx(25, 0.3, 38)).toBe(42 + 38); // 12.5 m / 0.3 m = 41.7 → 42 px for half the extent
    const base = { sceneWidthPx: 4000, sceneHeightPx: 4000, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx: 1024, maxObjectExtentM: 25 };
    expect(planTiles(base).overlapPx).toBe(50);
    expect(planTiles({ ...base, contextPx: 38 }).overlapPx).toBe(80);
    expect(planTiles({ ...base, contextPx: 38, overlapPx: 20 }).overlapPx).toBe(20); // an explicit overlap wins
    expect(() => planTiles({ ...base, contextPx: -1 })).toThrow(/context margin/);
  });

  it('any object whose centre lies in a core fits wholly inside that tile\'s window (random objects)', () => {
    const plan = planTiles({ sceneWidthPx: 2500, sceneHeightPx: 1800, sceneGsdM: 0.4, modelGsdM: 0.3, tilePx: 384, maxObjectExtentM: 8 });
    const extentPx = 8 / 0.3;
    let seed = 7;
    const rnd = () => ((seed = (seed * 16807) % 2147483647) / 2147483647);
    for (let n = 0; n < 5000; n++) {
      const x = rnd() * plan.modelWidthPx, y = rnd() * plan.modelHeightPx;
      const owners = plan.tiles.filter((t) => x >= t.corePx.minXPx && x < t.corePx.maxXPx && y >= t.corePx.minYPx && y < t.corePx.maxYPx);
      expect(owners.length).toBe(1);
      const w = owners[0].windowModelPx;
      expect(w.minXPx).toBeLessThanOrEqual(Math.max(0, x - extentPx / 2));
      expect(w.maxXPx).toBeGreaterThanOrEqual(Math.min(plan.modelWidthPx, x + extentPx / 2));
      expect(w.minYPx).toBeLessThanOrEqual(Math.max(0, y - extentPx / 2));
      expect(w.maxYPx).toBeGreaterThanOrEqual(Math.min(plan.modelHeightPx, y + extentPx / 2));
    }
  });

  it('overhead = inferred pixels / scene pixels (figures printed for the report)', () => {
    const rows: string[] = [];
    for (const [tilePx, extentM] of [[512, 7], [512, 12], [1024, 7], [1024, 30], [256, 7]] as const) {
      const plan = planTiles({ sceneWidthPx: 16000, sceneHeightPx: 16000, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx, maxObjectExtentM: extentM });
      let inferred = 0;
      for (const t of plan.tiles) inferred += (t.windowModelPx.maxXPx - t.windowModelPx.minXPx) * (t.windowModelPx.maxYPx - t.windowModelPx.minYPx);
      expect(plan.overheadRatio).toBeCloseTo(inferred / (16000 * 16000), 12);
      expect(plan.tiles.length).toBe(Math.ceil((16000 - 2 * plan.overlapPx) / plan.coreStepPx) ** 2);
      rows.push(`tile ${tilePx}, extent ${extentM} m → overlap ${plan.overlapPx} px, ${plan.tiles.length} tiles, overhead ${plan.overheadRatio.toFixed(3)}`);
    }
    console.log(rows.join('\n'));
  });

  it('fewest tiles for the overlap: n = ceil((extent − 2·overlap) / (tile − 2·overlap)) per axis, no thin edge cores', () => {
    // Lower bound (self-consistency, common practice, no source): n windows of T px whose neighbours share ≥ 2·ov px
    // cover at most n·(T − 2·ov) + 2·ov px, so no plan needs fewer; overhead ≥ (T / (T − 2·ov))² for large scenes.
    for (const extentPx of [4000, 4200, 8000, 16000, 1337]) {
      const plan = planTiles({ sceneWidthPx: extentPx, sceneHeightPx: extentPx, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx: 512, maxObjectExtentM: 0, overlapPx: 50 });
      const n = Math.ceil((extentPx - 100) / 412);
      expect(plan.cols).toBe(n);
      expect(plan.rows).toBe(n);
      const cols = plan.tiles.filter((t) => t.row === 0);
      for (const [i, t] of cols.entries()) {
        const w = t.corePx.maxXPx - t.corePx.minXPx;
        expect(w).toBeLessThanOrEqual(i === 0 || i === n - 1 ? 512 - 50 : 412);
        // evenly spread: every core is at least the even window spacing (extent − tile) / (n − 1), less rounding
        expect(w).toBeGreaterThanOrEqual(Math.floor((extentPx - 512) / (n - 1)) - 1);
        if (i > 0) expect(t.windowModelPx.minXPx - cols[i - 1].windowModelPx.minXPx).toBeLessThanOrEqual(412);
      }
    }
    // 4 200 px: the old fixed-step grid needed ceil(4200 / 412) = 11 tiles per axis (a 80 px sliver last), now 10.
    expect(planTiles({ sceneWidthPx: 4200, sceneHeightPx: 4200, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx: 512, maxObjectExtentM: 0, overlapPx: 50 }).cols).toBe(10);
  });

  it('overhead of a 16 000² scene at 0.3 m, tile 512, overlap 50 is within 1 % of the bound (512 / 412)²', () => {
    const plan = planTiles({ sceneWidthPx: 16000, sceneHeightPx: 16000, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx: 512, maxObjectExtentM: 0, overlapPx: 50 });
    const bound = (512 / (512 - 2 * 50)) ** 2; // 1.544
    expect(plan.overheadRatio).toBeGreaterThanOrEqual(bound - 1e-9);
    expect(plan.overheadRatio).toBeLessThanOrEqual(bound + 0.02); // 39² tiles: (39 · 512 / 16000)² = 1.5575
  });

  it('tilesTouching keeps the tiles a predicate selects (e.g. skip nodata) and reports their overhead', () => {
    const plan = planTiles({ sceneWidthPx: 2000, sceneHeightPx: 2000, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx: 512, maxObjectExtentM: 7 });
    const left = tilesTouching(plan, (t) => t.windowModelPx.minXPx < 600);
    expect(left.length).toBeGreaterThan(0);
    expect(left.length).toBeLessThan(plan.tiles.length);
    expect(left.every((t) => t.windowModelPx.minXPx < 600)).toBe(true);
    expect(subsetOverheadRatio(plan.tiles)).toBeCloseTo(plan.overheadRatio, 12);
  });

  it('refuses a plan beyond MAX_MODEL_PX (a coarse scene enlarged 33× to 0.3 m) with too-large, before listing tiles', () => {
    let err: unknown;
    try { planTiles({ sceneWidthPx: 10000, sceneHeightPx: 10000, sceneGsdM: 10, modelGsdM: 0.3, tilePx: 512, maxObjectExtentM: 10 }); } catch (e) { err = e; }
    expect(err).toBeInstanceOf(SeamtallyError);
    expect((err as SeamtallyError).kind).toBe('too-large');
    expect((err as SeamtallyError).message).toMatch(/gigapixels.*coarser than the model/);
    expect(MAX_MODEL_PX).toBe(2e10);
  });

  it('refuses an overlap that leaves no core, and non-positive sizes, with bad-argument', () => {
    const base = { sceneWidthPx: 100, sceneHeightPx: 100, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx: 64, maxObjectExtentM: 7 };
    expect(() => planTiles({ ...base, overlapPx: 32 })).toThrow(SeamtallyError);
    expect(() => planTiles({ ...base, maxObjectExtentM: 16 })).toThrow(/no core/); // 16 m / 2 / 0.3 → 27 + 8 = 35 px ≥ 32
    expect(() => planTiles({ ...base, sceneGsdM: 0 })).toThrow(/sceneGsdM/);
    expect(() => planTiles({ ...base, overlapPx: 2.5 })).toThrow(/whole number/);
  });
});

describe('chooseTilePx', () => {
  const base = { sceneGsdM: 0.3, modelGsdM: 0.3, maxObjectExtentM: 25, alignPx: 32, minTilePx: 512, maxTilePx: 1536, sizeStepPx: 32 };
  // the cost chooseTilePx minimises: model-input pixels of the sized plan (windows as they are, no padding)
  const cost = (w: number, h: number, t: number) => {
    const p = planTiles({ ...base, sceneWidthPx: w, sceneHeightPx: h, tilePx: t });
    return p.tiles.reduce((s, k) => s + (k.windowModelPx.maxXPx - k.windowModelPx.minXPx) * (k.windowModelPx.maxYPx - k.windowModelPx.minYPx), 0);
  };

  it('picks the candidate inferring the fewest pixels (the smallest of equally cheap ones), checked by brute force', () => {
    for (const [w, h] of [[4000, 4000], [16000, 16000], [2500, 900], [7001, 3333], [12000, 5000]]) {
      const t = chooseTilePx({ ...base, sceneWidthPx: w, sceneHeightPx: h });
      const all: number[] = [];
      for (let c = 512; c <= 1536; c += 32) all.push(cost(w, h, c));
      const best = Math.min(...all);
      expect(cost(w, h, t)).toBe(best);
      expect(cost(w, h, t)).toBeLessThan(cost(w, h, 512)); // larger tiles than the nominal 512 pay off on these scenes
      for (let c = 512; c < t; c += 32) expect(cost(w, h, c)).toBeGreaterThan(best);
    }
  });

  it('a scene smaller than the largest tile becomes one window of its own size (rounded up to 32 px), not several', () => {
    const t = chooseTilePx({ ...base, sceneWidthPx: 1000, sceneHeightPx: 800 });
    expect(t).toBe(1024);
    const plan = planTiles({ ...base, sceneWidthPx: 1000, sceneHeightPx: 800, tilePx: t });
    expect(plan.tiles.length).toBe(1);
    expect(plan.tiles[0].windowModelPx).toEqual({ minXPx: 0, minYPx: 0, maxXPx: 1024, maxYPx: 800 });
  });

  it('keeps the overlap overhead of a 4000² scene with a 25 m object extent under 1.2 (the nominal 512 px tile gives 1.74)', () => {
    const t = chooseTilePx({ ...base, sceneWidthPx: 4000, sceneHeightPx: 4000 });
    const plan = planTiles({ ...base, sceneWidthPx: 4000, sceneHeightPx: 4000, tilePx: t });
    console.log(`4000² at 0.3 m, overlap ${plan.overlapPx} px: tile ${t}, ${plan.tiles.length} tiles, overhead ${plan.overheadRatio.toFixed(3)}`);
    expect(plan.overheadRatio).toBeLessThan(1.2);
    expect(planTiles({ ...base, sceneWidthPx: 4000, sceneHeightPx: 4000, tilePx: 512 }).overheadRatio).toBeCloseTo((165 / 125) ** 2, 9); // 11 windows of ≤ 16 · 32 px sharing 4 · 32 px
  });
});
