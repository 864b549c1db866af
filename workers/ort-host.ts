// The only module that touches onnxruntime-web's `ort.env`: configures WASM (SIMD; threads when isolated) once,
// before the first session, then builds a session and runs it. Lives in the inference worker (infer.worker.ts).
import * as ort from 'onnxruntime-web/wasm';
import type { ModelIO } from '../web/core/model-contract.ts';
import type { InferOutput } from './infer-contract.ts';

let configuredThreads: number | null = null;

/** Configure ort.env once per worker. Threads only when the context is cross-origin isolated. */
function configureOnce(numThreads: number): number {
  if (configuredThreads !== null) return configuredThreads;
  const isolated = typeof self !== 'undefined' && (self as { crossOriginIsolated?: boolean }).crossOriginIsolated === true;
  configuredThreads = isolated ? Math.max(1, Math.floor(numThreads)) : 1;
  ort.env.wasm.numThreads = configuredThreads;
  ort.env.wasm.simd = true;
  ort.env.wasm.proxy = false;
  ort.env.logLevel = 'error';
  return configuredThreads;
}

/** A session: its I/O names and shapes, and a function running one NCHW float tensor. */
export interface OrtHost {
  io: ModelIO;
  numThreads: number;
  /** Outputs own their buffers (copied out of the session), so they can be transferred. */
  run(inputName: string, data: Float32Array, dims: readonly number[]): Promise<Record<string, InferOutput>>;
  release(): Promise<void>;
}

/** Create a session from ONNX bytes (WASM execution provider). */
export async function createOrtHost(modelBytes: ArrayBuffer, opts: { numThreads: number; fetches?: string[] }): Promise<OrtHost> {
  const numThreads = configureOnce(opts.numThreads);
  const session = await ort.InferenceSession.create(new Uint8Array(modelBytes), {
    executionProviders: ['wasm'],
    graphOptimizationLevel: 'all',
  });
  const dims = (meta: readonly ort.InferenceSession.ValueMetadata[]) => Object.fromEntries(
    meta.map((m) => [m.name, m.isTensor ? m.shape.map((d) => (typeof d === 'number' && d >= 0 ? d : typeof d === 'string' ? d : null)) : undefined]));
  const io: ModelIO = {
    inputNames: [...session.inputNames],
    outputNames: [...session.outputNames],
    inputDims: dims(session.inputMetadata),
    outputDims: dims(session.outputMetadata),
  };
  return {
    io,
    numThreads,
    async run(inputName, data, shape) {
      const feeds = { [inputName]: new ort.Tensor('float32', data, shape) };
      // only the outputs the run needs (the features output is costly to copy out of the wasm heap)
      const out = opts.fetches ? await session.run(feeds, opts.fetches) : await session.run(feeds);
      const res: Record<string, InferOutput> = {};
      for (const [name, t] of Object.entries(out)) {
        const d = t.data as Float32Array;
        // a view into a larger (or shared) buffer is copied so that exactly its values are transferred
        const own = d.byteOffset === 0 && d.byteLength === d.buffer.byteLength && !(d.buffer instanceof SharedArrayBuffer) ? d : d.slice();
        res[name] = { data: own, dims: [...t.dims] };
        t.dispose?.();
      }
      return res;
    },
    release: () => session.release(),
  };
}
