// The fused copy+normalise fast path gives exactly the values of the general path (resampleBand, then
// normaliseInPlace); self-consistency, the general path being the one checked against outside references.
import { describe, expect, it } from 'vitest';
import { fillUnit, isContiguousUnit } from '../../../web/core/fill-unit.ts';
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
});
