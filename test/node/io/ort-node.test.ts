// The onnxruntime-node adapter with a dynamic-input model: a different [1, 3, H, W] per call, fed as a view on the
// front of a larger scratch buffer (as the pipeline does for sized windows), gives what a fresh tensor gives.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseSidecar } from '../../../web/core/model-contract.ts';
import { openNodeModel } from '../../../web/io/ort-node.ts';
import { createTileScratch } from '../../../web/core/pipeline.ts';

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

describe('openNodeModel on its own thread (the default)', () => {
  const SHIPPED = 'models/seamtally-det.onnx';
  const shipped = parseSidecar(readFileSync('models/seamtally-det.model.json', 'utf8'));
  const input = (h: number, w: number) => Float32Array.from({ length: 3 * h * w }, (_, i) => ((i * 2654435761) >>> 0) / 2 ** 32);

  it('gives the outputs of a session on the calling thread', async () => {
    const [off, on] = [await openNodeModel(new Uint8Array(readFileSync(SHIPPED)), shipped), await openNodeModel(new Uint8Array(readFileSync(SHIPPED)), shipped, { offThread: false })];
    try {
      for (const [h, w] of [[256, 320], [512, 512], [256, 320]] as const) {
        const x = input(h, w);
        const [a, b] = [await off.infer(x, [1, 3, h, w]), await on.infer(x, [1, 3, h, w])];
        for (const name of Object.keys(b)) {
          expect(a[name].dims).toEqual(b[name].dims);
          expect(Array.from(a[name].data)).toEqual(Array.from(b[name].data));
        }
      }
    } finally {
      await off.close();
      await on.close();
    }
  });

  it('borrows a lent scratch tensor for the trip to the thread and puts it back, with the outputs of a copy', async () => {
    const off = await openNodeModel(new Uint8Array(readFileSync(SHIPPED)), shipped);
    try {
      const scratch = createTileScratch(512);
      for (const [h, w] of [[256, 320], [512, 512], [256, 320]] as const) {
        const n = 3 * h * w;
        scratch.tensor.set(input(h, w));
        const want = await off.infer(scratch.tensor.slice(0, n), [1, 3, h, w]); // a copy, not lent
        const before = scratch.tensor;
        const pending = off.infer(scratch.tensor.subarray(0, n), [1, 3, h, w], scratch);
        expect(before.byteLength).toBe(0); // transferred, not copied, while it infers
        const got = await pending;
        expect(scratch.tensor.length).toBe(3 * 512 * 512); // back in the scratch, whole
        expect(Array.from(scratch.tensor.subarray(0, n))).toEqual(Array.from(input(h, w))); // and unchanged
        for (const name of Object.keys(want)) expect(Array.from(got[name].data)).toEqual(Array.from(want[name].data));
      }
    } finally {
      await off.close();
    }
  });

  // the point of the thread: the JS thread keeps running (reading, filling the next tile) while a tile infers. A
  // 1 024² tile takes ~50-200 ms here; a 1 ms interval ticks during it only when the session is off this thread.
  it('leaves the event loop free while a tile infers (and blocks it on the calling thread)', async () => {
    const ticksDuring = async (offThread: boolean) => {
      const model = await openNodeModel(new Uint8Array(readFileSync(SHIPPED)), shipped, { offThread });
      try {
        const x = input(1024, 1024);
        await model.infer(x, [1, 3, 1024, 1024]); // first run allocates
        let ticks = 0;
        const timer = setInterval(() => { ticks++; }, 1);
        await model.infer(x, [1, 3, 1024, 1024]);
        clearInterval(timer);
        return ticks;
      } finally {
        await model.close();
      }
    };
    expect(await ticksDuring(false)).toBeLessThanOrEqual(1);
    expect(await ticksDuring(true)).toBeGreaterThanOrEqual(5);
  });

  it('says what to do when onnxruntime refuses the file, as on the calling thread', async () => {
    const junk = new TextEncoder().encode('this is not an onnx model');
    const msgs: string[] = [];
    for (const offThread of [true, false]) {
      const err = await openNodeModel(junk, shipped, { offThread }).then(() => null, (e: unknown) => e);
      expect(err).toMatchObject({ kind: 'model-invalid' });
      msgs.push((err as Error).message);
    }
    expect(msgs[0]).toBe(msgs[1]);
  });

  it('refuses to run after close, with a typed error', async () => {
    const model = await openNodeModel(new Uint8Array(readFileSync(SHIPPED)), shipped);
    await model.close();
    await expect(model.infer(input(64, 64), [1, 3, 64, 64])).rejects.toMatchObject({ kind: 'cancelled' });
  });
});
