// The fused copy+normalise fast path gives exactly the values of the general path (resampleBand, then
// normaliseInPlace); self-consistency, the general path being the one checked against outside references.
import { describe, expect, it } from 'vitest';
import { fillUnit, isContiguousUnit, unitInsideRect } from '../../../web/core/fill-unit.ts';
import { planResample, resampleBand } from '../../../web/core/resample.ts';
import { normaliseInPlace, type Stretch } from '../../../web/core/radiometry.ts';
import type { SampleArray } from '../../../web/core/scene-source.ts';

function general(src: SampleArray[], plan: ReturnType<typeof planResample>, T: number, nodata: number | null, stretch: Stretch, norm: { scale: number; mean: number[]; std: number[] }) {
  const tensor = new Float32Array(3 * T * T), valid = new Uint8Array(T * T);
  for (let c = 0; c < 3; c++) resampleBand(src[c], plan, tensor.subarray(c * T * T, (c + 1) * T * T), { nodata, validOut: c === 0 ? valid : undefined });
  normaliseInPlace(tensor, T * T, stretch, norm, valid);
  return { tensor, valid };
}

describe('fillUnit', () => {
  const T = 16, W = 20, H = 19;
  const box = { minXPx: 2, minYPx: 1, maxXPx: 2 + T, maxYPx: 1 + T };
  const read = { minXPx: 1, minYPx: 0, maxXPx: 1 + W, maxYPx: H };
  const plan = planResample(box, read, { scenePxPerModelPxX: 1, scenePxPerModelPxY: 1 }, 100, 100);
  const norm = { scale: 1 / 255, mean: [0.1, 0.2, 0.3], std: [0.9, 1, 1.1] };
  const cases: Array<[string, () => SampleArray, number | null, Stretch]> = [
    ['uint8 identity with nodata 0', () => Uint8Array.from({ length: W * H }, (_, i) => (i * 37) % 256), 0, { kind: 'identity', low: [0, 0, 0], high: [255, 255, 255] }],
    ['uint16 percentile, no nodata', () => Uint16Array.from({ length: W * H }, (_, i) => (i * 997) % 4096), null, { kind: 'percentile', low: [100, 120, 90], high: [3000, 3100, 2900] }],
    ['float32 NaN nodata', () => Float32Array.from({ length: W * H }, (_, i) => (i % 11 === 0 ? NaN : i * 0.73)), NaN, { kind: 'percentile', low: [1, 2, 3], high: [200, 210, 220] }],
  ];
  it('applies to a same-GSD window inside the raster only', () => {
    expect(isContiguousUnit(plan)).toBe(true);
    const up = { minXPx: 0, minYPx: 0, maxXPx: T, maxYPx: T };
    expect(isContiguousUnit(planResample(up, { minXPx: 0, minYPx: 0, maxXPx: W, maxYPx: H }, { scenePxPerModelPxX: 0.5, scenePxPerModelPxY: 0.5 }, 100, 100))).toBe(false);
    // a window reaching past the raster's edge is not contiguous-inside
    expect(isContiguousUnit(planResample({ minXPx: 90, minYPx: 0, maxXPx: 106, maxYPx: T }, { minXPx: 89, minYPx: 0, maxXPx: 100, maxYPx: H }, { scenePxPerModelPxX: 1, scenePxPerModelPxY: 1 }, 100, 100))).toBe(false);
  });
  it('the 8/16-bit table path equals the general path with the shipped model\'s normalisation (mean 0: no −0 fill)', () => {
    const shipped = { scale: 1 / 255, mean: [0, 0, 0], std: [1, 1, 1] };
    for (const [make, nodata, stretch] of [
      [() => Uint8Array.from({ length: W * H }, (_, i) => (i * 53) % 256), 0, { kind: 'percentile', low: [10, 12, 9], high: [240, 250, 230] }],
      [() => Uint16Array.from({ length: W * H }, (_, i) => (i * 991) % 4096), 0, { kind: 'percentile', low: [100, 120, 90], high: [3000, 3100, 2900] }],
    ] as Array<[() => SampleArray, number, Stretch]>) {
      const src = [make(), make().reverse(), make()];
      const want = general(src, plan, T, nodata, stretch, shipped);
      const tensor = new Float32Array(3 * T * T), valid = new Uint8Array(T * T);
      fillUnit(src, W, plan, T, nodata, stretch, shipped, tensor, valid);
      expect(Array.from(valid)).toEqual(Array.from(want.valid));
      expect(Array.from(tensor).map((v) => Object.is(v, -0) ? 'neg0' : v)).toEqual(Array.from(want.tensor).map((v) => Object.is(v, -0) ? 'neg0' : v));
    }
  });
  for (const [name, make, nodata, stretch] of cases) {
    it(`equals resampleBand + normaliseInPlace: ${name}`, () => {
      const src = [make(), make().reverse(), make()];
      const want = general(src, plan, T, nodata, stretch, norm);
      const tensor = new Float32Array(3 * T * T), valid = new Uint8Array(T * T);
      const any = fillUnit(src, W, plan, T, nodata, stretch, norm, tensor, valid);
      expect(any).toBe(want.valid.includes(1));
      expect(Array.from(valid)).toEqual(Array.from(want.valid));
      expect(Array.from(tensor)).toEqual(Array.from(want.tensor));
    });
  }

  // scene-edge tiles: the window reaches past the raster (read windows are filled with nodata there), so the plan is
  // unit but not contiguous; the part inside is filled in one pass, the rest must be nodata exactly as the general path
  // makes it. Scene 12 × 11 px; windows past the left/top, the right/bottom, and past every side.
  const edgeWindows: Array<[string, { minXPx: number; minYPx: number; maxXPx: number; maxYPx: number }]> = [
    ['left and top', { minXPx: -5, minYPx: -3, maxXPx: 11, maxYPx: 13 }],
    ['right and bottom', { minXPx: 2, minYPx: 1, maxXPx: 18, maxYPx: 17 }],
    ['every side', { minXPx: -2, minYPx: -4, maxXPx: 14, maxYPx: 12 }],
  ];
  for (const [where, win] of edgeWindows) {
    for (const [name, make, nodata, stretch] of [...cases, ['uint8 identity, shipped normalisation', () => Uint8Array.from({ length: T * T }, (_, i) => (i * 29) % 256), null, { kind: 'identity', low: [0, 0, 0], high: [255, 255, 255] }]] as typeof cases) {
      it(`a window past the raster (${where}): equals the general path, ${name}`, () => {
        const edgePlan = planResample(win, win, { scenePxPerModelPxX: 1, scenePxPerModelPxY: 1 }, 12, 11);
        expect(isContiguousUnit(edgePlan)).toBe(false);
        const rect = unitInsideRect(edgePlan);
        expect(rect).not.toBeNull();
        const W2 = win.maxXPx - win.minXPx, H2 = win.maxYPx - win.minYPx;
        const src = [0, 1, 2].map((k) => { const a = make(); const b = new (a.constructor as new (n: number) => SampleArray)(W2 * H2); for (let i = 0; i < b.length; i++) b[i] = a[(i * (k + 3)) % a.length]; return b; });
        const want = general(src, edgePlan, T, nodata, stretch, norm);
        const tensor = new Float32Array(3 * T * T).fill(9), valid = new Uint8Array(T * T).fill(7); // dirty from an earlier tile
        const any = fillUnit(src, W2, edgePlan, T, nodata, stretch, norm, tensor, valid, rect!);
        expect(any).toBe(want.valid.includes(1));
        expect(Array.from(valid)).toEqual(Array.from(want.valid));
        expect(Array.from(tensor)).toEqual(Array.from(want.tensor));
      });
    }
  }
  it('finds no inside rectangle for a resampling plan; a window inside the raster is its own rectangle', () => {
    expect(unitInsideRect(planResample({ minXPx: 0, minYPx: 0, maxXPx: T, maxYPx: T }, { minXPx: 0, minYPx: 0, maxXPx: W, maxYPx: H }, { scenePxPerModelPxX: 0.5, scenePxPerModelPxY: 0.5 }, 100, 100))).toBeNull();
    expect(unitInsideRect(plan)).toEqual({ x0: 0, y0: 0, w: T, h: T });
    expect(unitInsideRect(planResample(edgeWindows[0][1], edgeWindows[0][1], { scenePxPerModelPxX: 1, scenePxPerModelPxY: 1 }, 12, 11))).toEqual({ x0: 5, y0: 3, w: 11, h: 11 });
  });
});
