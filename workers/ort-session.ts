// The detector worker's side of inference: starts its inference worker (infer.worker.ts, which owns the
// onnxruntime-web session) once, loads models into it and runs tiles there, so this worker's thread is free to read
// and fill the next tile meanwhile. Input buffers are transferred there and back, outputs transferred here.
import { wrap, transfer, type Remote } from 'comlink';
import { fromErrorInfo } from '../web/core/errors.ts';
import type { ModelIO } from '../web/core/model-contract.ts';
import type { TensorLike } from '../web/core/decode-outputs.ts';
import type { InferApi } from './infer-contract.ts';

/** A loaded model: its I/O names and shapes, and a function running one NCHW float tensor in the inference worker. */
export interface OrtModel {
  io: ModelIO;
  numThreads: number;
  /**
   * Run `data` (a view from offset 0 of its buffer). The buffer is transferred to the inference worker — `data` is
   * empty until this settles — and comes back as `inputBuffer`; after a failure it is gone.
   */
  run(inputName: string, data: Float32Array, dims: readonly number[]): Promise<{ outputs: Record<string, TensorLike>; inputBuffer: ArrayBuffer }>;
  release(): Promise<void>;
}

interface InferWorker { api: Remote<InferApi>; lost: Promise<never> }
let inferWorker: InferWorker | null = null;

/**
 * This detector worker's inference worker, started on first use. When it dies the detector worker throws an
 * uncaught error too, so the page's pool sees a lost worker, replaces it and retries the tile (worker-pool.ts).
 */
function inference(): InferWorker {
  if (inferWorker) return inferWorker;
  const worker = new Worker(new URL('./infer.worker.ts', import.meta.url), { type: 'module', name: `${self.name || 'detector'}-infer` });
  let reject: (err: Error) => void = () => {};
  const lost = new Promise<never>((_, rej) => { reject = rej; });
  lost.catch(() => {});
  const fail = (why: string) => {
    const err = new Error(`the inference worker stopped (${why})`);
    reject(err);
    setTimeout(() => { throw err; });
  };
  worker.addEventListener('error', (e) => { e.preventDefault(); fail(e.message || 'no message'); });
  worker.addEventListener('messageerror', () => fail('it sent a message that could not be read'));
  inferWorker = { api: wrap<InferApi>(worker), lost };
  return inferWorker;
}

/** Test-only (`?fault=infercrash:N`): crash the inference worker; this worker then stops as described at `inference`. */
export function crashInferenceWorkerForTest(): void {
  void inference().api.crashForTest();
}

/** Create a session from ONNX bytes in the inference worker. Throws the raw onnxruntime message on failure. */
export async function createOrtModel(modelBytes: ArrayBuffer, opts: { numThreads: number; fetches?: string[] }): Promise<OrtModel> {
  const w = inference();
  const loaded = await Promise.race([w.api.load(transfer(modelBytes, [modelBytes]), opts), w.lost]);
  if (!loaded.ok) throw new Error(loaded.error.message);
  const sessionId = loaded.value.sessionId;
  let released = false;
  return {
    io: loaded.value.io,
    numThreads: loaded.value.numThreads,
    async run(inputName, data, dims) {
      if (released) throw new Error('this model was released');
      if (data.byteOffset !== 0) throw new Error('the input must start at offset 0 of its buffer');
      const buf = data.buffer as ArrayBuffer;
      const r = await Promise.race([w.api.run(sessionId, inputName, transfer(buf, [buf]), data.length, [...dims]), w.lost]);
      if (!r.ok) throw fromErrorInfo(r.error);
      return { outputs: r.value.outputs, inputBuffer: r.value.inputBuffer };
    },
    async release() {
      if (released) return;
      released = true;
      await Promise.race([w.api.release(sessionId), w.lost]);
    },
  };
}
