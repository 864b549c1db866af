// The shipped detector: its sidecar passes the contract, onnxruntime loads it, and its outputs have the contract's shapes.
import { readFileSync, statSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import * as ort from 'onnxruntime-node';
import { checkModelIO, parseSidecar } from '../../../web/core/model-contract.ts';

const ONNX = 'models/seamtally-det.onnx';
const SIDECAR = 'models/seamtally-det.model.json';

describe('models/seamtally-det', () => {
  const sc = parseSidecar(readFileSync(SIDECAR, 'utf8'));

  it('sidecar: classes, input GSD, layout and quality curves at the five evaluation GSDs', () => {
    expect(sc.classes).toEqual(['vehicle', 'solar_panel']);
    expect(sc.inputGsdM).toBe(0.3);
    expect(sc.tilePx).toBe(512);
    expect(sc.output).toMatchObject({ layout: 'center-heatmap', stride: 4 });
    expect(sc.quality?.gsdM).toEqual([0.15, 0.3, 0.45, 0.6, 0.8]);
    for (const c of sc.classes) {
      expect(sc.quality?.recall?.[c]).toHaveLength(5);
      expect(sc.quality?.precision?.[c]).toHaveLength(5);
    }
    expect(statSync(ONNX).size).toBeLessThan(4 * 1024 * 1024);
  });

  it('loads in onnxruntime-node and gives the contract shapes for a 512 tile and a 384 tile', async () => {
    const s = await ort.InferenceSession.create(readFileSync(ONNX), { intraOpNumThreads: 1 });
    checkModelIO(sc, { inputNames: s.inputNames, outputNames: s.outputNames });
    for (const px of [512, 384]) {
      const x = new ort.Tensor('float32', new Float32Array(3 * px * px).fill(0.4), [1, 3, px, px]);
      const out = await s.run({ [sc.input.name]: x });
      const cells = px / 4;
      expect(out.heatmap.dims).toEqual([1, 2, cells, cells]);
      expect(out.size.dims).toEqual([1, 2, cells, cells]);
      expect(out.offset.dims).toEqual([1, 2, cells, cells]);
      expect(out.angle.dims).toEqual([1, 1, cells, cells]);
      const hm = out.heatmap.data as Float32Array;
      // sigmoid inside the model: every value in 0..1; a flat grey tile holds no confident object
      expect(Math.min(...hm)).toBeGreaterThanOrEqual(0);
      expect(Math.max(...hm)).toBeLessThan(sc.minScore ?? 0.5);
      const ang = out.angle.data as Float32Array;
      expect(Math.max(...ang.map(Math.abs))).toBeLessThanOrEqual(Math.PI / 2 + 1e-6);
    }
    await s.release();
  });
});
