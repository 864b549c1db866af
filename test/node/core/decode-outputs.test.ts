// Decoding model outputs: peak rule vs onnxruntime's MaxPool (CenterNet's heat == maxpool3×3(heat)), centres, sizes, angles.
import { describe, it, expect } from 'vitest';
import * as ort from 'onnxruntime-node';
import { decodeOutputs, normaliseAxisAngle } from '../../../web/core/decode-outputs.ts';
import { parseSidecar, type ModelSidecar } from '../../../web/core/model-contract.ts';
import { SeamtallyError } from '../../../web/core/errors.ts';
import { maxPool3Bytes } from './onnx-nms-model.ts';

function sidecar(output: object, classes = ['vehicle', 'solar_panel'], tilePx = 64): ModelSidecar {
  return parseSidecar(JSON.stringify({
    format: 'seamtally-model/1', classes, inputGsdM: 0.3, tilePx,
    input: { name: 'image', bands: 'rgb', scale: 1 / 255, mean: [0, 0, 0], std: [1, 1, 1] }, output,
  }));
}
const HM = { layout: 'center-heatmap', stride: 4, heatmap: 'hm', size: 'wh', offset: 'reg', angle: 'ang' };

function maps(C: number, H: number, W: number) {
  return {
    hm: { data: new Float32Array(C * H * W), dims: [1, C, H, W] },
    wh: { data: new Float32Array(2 * H * W), dims: [1, 2, H, W] },
    reg: { data: new Float32Array(2 * H * W), dims: [1, 2, H, W] },
    ang: { data: new Float32Array(H * W), dims: [1, 1, H, W] },
  };
}

describe('center-heatmap decoding', () => {
  it('centre = (cell + offset) × stride plus the tile origin; size w,h → length/width; angle turns with h > w', () => {
    const sc = sidecar(HM);
    const H = 16, W = 16, m = maps(2, H, W);
    const set = (c: number, j: number, i: number, v: number, w: number, h: number, ox: number, oy: number, a: number) => {
      const k = j * W + i;
      m.hm.data[c * H * W + k] = v; m.wh.data[k] = w; m.wh.data[H * W + k] = h;
      m.reg.data[k] = ox; m.reg.data[H * W + k] = oy; m.ang.data[k] = a;
    };
    set(0, 3, 5, 0.9, 4.4 / 0.3, 1.8 / 0.3, 0.25, 0.75, 0.2); // a car along 0.2 rad
    set(1, 10, 12, 0.7, 10, 30, 0.5, 0.5, 0.1); // h > w: length axis at 0.1 + π/2 → normalised to 0.1 − π/2
    set(0, 10, 2, 0.2, 5, 5, 0, 0, 0); // below minScore
    const d = decodeOutputs(sc, m, { minScore: 0.3, tileOriginPx: [100, 200] });
    expect(d.count).toBe(2);
    expect(d.cxPx[0]).toBeCloseTo(100 + (5 + 0.25) * 4, 5);
    expect(d.cyPx[0]).toBeCloseTo(200 + (3 + 0.75) * 4, 5);
    expect(d.lengthPx[0]).toBeCloseTo(4.4 / 0.3, 4);
    expect(d.widthPx[0]).toBeCloseTo(1.8 / 0.3, 4);
    expect(d.angleRad[0]).toBeCloseTo(0.2, 6);
    expect(d.classIdx[1]).toBe(1);
    expect(d.lengthPx[1]).toBe(30);
    expect(d.widthPx[1]).toBe(10);
    expect(d.angleRad[1]).toBeCloseTo(0.1 - Math.PI / 2, 6);
    expect(d.score[0]).toBeCloseTo(0.9, 6);
  });
  it('without offset/angle outputs: centre of the cell, axis-aligned', () => {
    const sc = sidecar({ ...HM, offset: null, angle: null });
    const m = maps(2, 8, 8);
    m.hm.data[2 * 8 + 3] = 0.8; m.wh.data[2 * 8 + 3] = 6; m.wh.data[64 + 2 * 8 + 3] = 12;
    const d = decodeOutputs(sc, { hm: m.hm, wh: m.wh }, { minScore: 0.5 });
    expect([d.cxPx[0], d.cyPx[0], d.lengthPx[0], d.widthPx[0]]).toEqual([3.5 * 4, 2.5 * 4, 12, 6]);
    expect(d.angleRad[0]).toBeCloseTo(-Math.PI / 2, 6); // π/2 normalised into [−π/2, π/2) (float32 column)
  });
  it('ties: of equal neighbouring cells exactly one (the earlier in row-major order) is a peak', () => {
    const sc = sidecar({ ...HM, offset: null, angle: null });
    const m = maps(2, 8, 8);
    m.hm.data[3 * 8 + 3] = 0.6; m.hm.data[3 * 8 + 4] = 0.6; // horizontal pair
    m.hm.data[6 * 8 + 1] = 0.5; m.hm.data[7 * 8 + 2] = 0.5; // diagonal pair
    const d = decodeOutputs(sc, { hm: m.hm, wh: m.wh }, { minScore: 0.3 });
    expect(d.count).toBe(2);
    expect([d.cxPx[0], d.cyPx[0]]).toEqual([3.5 * 4, 3.5 * 4]);
    expect([d.cxPx[1], d.cyPx[1]]).toEqual([1.5 * 4, 6.5 * 4]);
  });
  it('peaks equal heat == MaxPool3×3(heat) computed by onnxruntime (CenterNet rule) on random tie-free maps', async () => {
    // CenterNet (Zhou et al. 2019, "Objects as Points") keeps heatmap cells equal to their 3×3 max-pool.
    const session = await ort.InferenceSession.create(maxPool3Bytes());
    const C = 2, H = 40, W = 48;
    const sc = sidecar({ ...HM, offset: null, angle: null }, ['a', 'b'], 4 * 48);
    let seed = 3;
    const rnd = () => ((seed = (seed * 48271) % 2147483647) / 2147483647);
    const hm = new Float32Array(C * H * W).map(() => Math.fround(rnd()));
    const pooled = (await session.run({ x: new ort.Tensor('float32', hm, [1, C, H, W]) })).y.data as Float32Array;
    const expected: string[] = [];
    for (let c = 0; c < C; c++) for (let j = 0; j < H; j++) for (let i = 0; i < W; i++) {
      const k = c * H * W + j * W + i;
      if (hm[k] >= 0.5 && hm[k] === pooled[k]) expected.push(`${c}:${i}:${j}`);
    }
    const d = decodeOutputs(sc, { hm: { data: hm, dims: [1, C, H, W] }, wh: { data: new Float32Array(2 * H * W), dims: [1, 2, H, W] } }, { minScore: 0.5 });
    const got: string[] = [];
    for (let r = 0; r < d.count; r++) got.push(`${d.classIdx[r]}:${d.cxPx[r] / 4 - 0.5}:${d.cyPx[r] / 4 - 0.5}`);
    expect(got).toEqual(expected);
    expect(got.length).toBeGreaterThan(50);
  });
  it('a heatmap with the wrong class count is a model-mismatch naming output.heatmap', () => {
    const sc = sidecar(HM);
    const m = maps(3, 8, 8);
    expect(() => decodeOutputs(sc, m, { minScore: 0.3 })).toThrow(SeamtallyError);
    try { decodeOutputs(sc, m, { minScore: 0.3 }); } catch (e) { expect((e as SeamtallyError).detail.field).toBe('output.heatmap'); }
  });
});

describe('boxes decoding', () => {
  const sc = sidecar({ layout: 'boxes', boxes: 'det' });
  it('x1,y1,x2,y2,score,class → centre, length/width, angle 0 or −π/2; filters by score', () => {
    const rows = [[10, 20, 30, 26, 0.9, 0], [5, 5, 9, 25, 0.8, 1], [0, 0, 1, 1, 0.1, 0]];
    const d = decodeOutputs(sc, { det: { data: Float32Array.from(rows.flat()), dims: [1, 3, 6] } }, { minScore: 0.3 });
    expect(d.count).toBe(2);
    expect([d.cxPx[0], d.cyPx[0], d.lengthPx[0], d.widthPx[0], d.angleRad[0]]).toEqual([20, 23, 20, 6, 0]);
    expect([d.cxPx[1], d.cyPx[1], d.lengthPx[1], d.widthPx[1]]).toEqual([7, 15, 20, 4]);
    expect(d.angleRad[1]).toBeCloseTo(-Math.PI / 2, 6);
  });
  it('the tile origin shifts x by its x and y by its y (an origin with x ≠ y catches a swapped axis)', () => {
    const rows = [[10, 20, 30, 26, 0.9, 0]];
    const d = decodeOutputs(sc, { det: { data: Float32Array.from(rows.flat()), dims: [1, 1, 6] } }, { minScore: 0.3, tileOriginPx: [1000, 7] });
    expect([d.cxPx[0], d.cyPx[0]]).toEqual([1020, 30]);
  });
  it('a kept row with an unknown class index is a model-mismatch', () => {
    const d = { det: { data: Float32Array.from([0, 0, 4, 4, 0.9, 5]), dims: [1, 1, 6] } };
    expect(() => decodeOutputs(sc, d, { minScore: 0.3 })).toThrow(/class index 5/);
  });
  it('normaliseAxisAngle maps any angle into [−π/2, π/2)', () => {
    expect(normaliseAxisAngle(Math.PI)).toBeCloseTo(0, 12);
    expect(normaliseAxisAngle(3 * Math.PI / 4)).toBeCloseTo(-Math.PI / 4, 12);
    expect(normaliseAxisAngle(-3 * Math.PI / 4)).toBeCloseTo(Math.PI / 4, 12);
  });
});
