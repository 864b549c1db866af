// The optional features output: each decoded peak carries the F values of the features tensor at its cell (checked
// against a hand-made tensor), the core-centre filter, concatenation and row selection carry them with their rows,
// and rows of a table without features (boxes the analyst added) get NaN.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseSidecar } from '../../../web/core/model-contract.ts';
import { decodeOutputs } from '../../../web/core/decode-outputs.ts';
import { concatDetectionTables, keepCoreCentres, selectRows } from '../../../web/core/seam-merge.ts';
import { createDetectionTable } from '../../../web/core/types.ts';

const sidecar = parseSidecar(readFileSync('models/seamtally-det.model.json', 'utf8'));

describe('features at peaks', () => {
  it('the shipped sidecar declares the output', () => {
    expect(sidecar.output.layout === 'center-heatmap' && sidecar.output.features).toBe('features');
  });
  it('a peak at cell (x 5, y 3) carries features[:, 3, 5]', () => {
    const H = 8, W = 10, C = 2, F = 3, plane = H * W;
    const hm = new Float32Array(C * plane); hm[3 * W + 5] = 0.9; hm[plane + 6 * W + 1] = 0.8;
    const feat = new Float32Array(F * plane).map((_, i) => i);
    const z = (c: number) => ({ data: new Float32Array(c * plane), dims: [1, c, H, W] });
    const out = decodeOutputs(sidecar, { heatmap: { data: hm, dims: [1, C, H, W] }, size: z(2), offset: z(2), angle: z(1), features: { data: feat, dims: [1, F, H, W] } }, { minScore: 0.5 });
    expect(out.count).toBe(2);
    expect(out.featureDim).toBe(F);
    expect(Array.from(out.features!.subarray(0, 3))).toEqual([0, 1, 2].map((f) => f * plane + 3 * W + 5));
    expect(Array.from(out.features!.subarray(3, 6))).toEqual([0, 1, 2].map((f) => f * plane + 6 * W + 1));
    // the core filter keeps the second only, with its features
    const kept = keepCoreCentres(out, { minXPx: 0, minYPx: 20, maxXPx: 40, maxYPx: 32 });
    expect(kept.count).toBe(1);
    expect(Array.from(kept.features!)).toEqual([0, 1, 2].map((f) => f * plane + 6 * W + 1));
  });
  it('concatenation and selection keep each row\'s features; a table without them gives NaN rows', () => {
    const a = createDetectionTable('EPSG:32632', 2); a.count = 2; a.features = Float32Array.from([1, 2, 3, 4]); a.featureDim = 2;
    const b = createDetectionTable('EPSG:32632', 1); b.count = 1;
    const all = concatDetectionTables([a, b]);
    expect(all.featureDim).toBe(2);
    expect(Array.from(all.features!.subarray(0, 4))).toEqual([1, 2, 3, 4]);
    expect(Number.isNaN(all.features![4]) && Number.isNaN(all.features![5])).toBe(true);
    const s = selectRows(all, [1, 0]);
    expect(Array.from(s.features!)).toEqual([3, 4, 1, 2]);
  });
});
