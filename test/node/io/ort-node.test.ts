// The onnxruntime-node adapter with a dynamic-input model: a different [1, 3, H, W] per call, fed as a view on the
// front of a larger scratch buffer (as the pipeline does for sized windows), gives what a fresh tensor gives.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseSidecar } from '../../../web/core/model-contract.ts';
import { openNodeModel } from '../../../web/io/ort-node.ts';

const MODEL = 'test/fixtures/fixture-model.onnx'; // input [1, 3, 'H', 'W'], outputs at stride 1
const sidecar = { ...parseSidecar(readFileSync('test/fixtures/fixture-model.model.json', 'utf8')), maxTilePx: 192 };

describe('openNodeModel with changing input shapes', () => {
  it('runs rectangular inputs of several shapes from one scratch buffer, each as a fresh tensor would', async () => {
    const model = await openNodeModel(new Uint8Array(readFileSync(MODEL)), sidecar);
    try {
      const scratch = new Float32Array(3 * 192 * 192);
      for (const [h, w] of [[64, 96], [96, 64], [128, 128], [40, 168], [64, 96]] as const) {
        const n = 3 * h * w;
        // a bright 11 px square centred at (x 20, y 30) on a dark ground, the rest of the scratch left dirty from before
        scratch.fill(0.05, 0, n);
        for (let c = 0; c < 3; c++) for (let y = 25; y <= 35; y++) for (let x = 15; x <= 25; x++) scratch[c * h * w + y * w + x] = 0.9;
        scratch.fill(7, n); // a runtime reading past the view would see these
        const viaView = await model.infer(scratch.subarray(0, n), [1, 3, h, w]);
        const viaCopy = await model.infer(scratch.slice(0, n), [1, 3, h, w]);
        expect(viaView.heatmap.dims).toEqual([1, 1, h, w]);
        expect(viaView.size.dims).toEqual([1, 2, h, w]);
        expect(Array.from(viaView.heatmap.data)).toEqual(Array.from(viaCopy.heatmap.data));
        let best = 0;
        for (let i = 1; i < h * w; i++) if (viaView.heatmap.data[i] > viaView.heatmap.data[best]) best = i;
        expect([best % w, Math.floor(best / w)]).toEqual([20, 30]); // the peak sits on the square in every shape
      }
    } finally {
      await model.close();
    }
  });
});
