// onnxruntime-node adapter for the CLI: loads a model + sidecar, checks them against each other, returns an InferFn.
// By default the session lives on a thread of its own (ort-node-thread.mjs), so the JS thread can read and fill the
// next tile while this one infers: onnxruntime-node's `run` computes on the thread that calls it.
import { Worker } from 'node:worker_threads';
import * as ort from 'onnxruntime-node';
import { SeamtallyError } from '../core/errors.ts';
import { checkModelIO, fetchedOutputNames, type ModelDim, type ModelSidecar } from '../core/model-contract.ts';
import type { InferFn, TileScratch } from '../core/pipeline.ts';
import type { TensorLike } from '../core/decode-outputs.ts';
import { modelLoadFailure } from '../core/model-load-failure.ts';

export interface NodeModelOptions {
  /** intraOpNumThreads (default 1). */
  threads?: number;
  /** Tile size the run will feed (default the sidecar's tilePx); checked against fixed model dimensions. */
  tilePx?: number;
  /**
   * Run the session on its own thread (default true): `infer` then returns at once to the event loop and the JS
   * thread is free while the tile infers. The tile's scratch tensor, when `infer` is lent it (as the pipeline does),
   * is transferred to the thread and back with the answer; other inputs are copied once into a buffer that makes
   * the same trip (a few ms for a 1 440² tile).
   * False: on the calling thread, no copy.
   */
  offThread?: boolean;
  /** Fetch the model's features output too (default false: it is costly and only review adaptation uses it). */
  withFeatures?: boolean;
}

/** What the CLI needs of a session, on this thread or on its own. */
interface SessionLike {
  inputNames: readonly string[];
  outputNames: readonly string[];
  inputMetadata: readonly MetaLike[];
  outputMetadata: readonly MetaLike[];
  run(inputName: string, input: Float32Array, dims: readonly number[], lend?: TileScratch, fetches?: readonly string[]): Promise<Array<{ name: string; type: string; data: unknown; dims: readonly number[] }>>;
  release(): Promise<void>;
}
interface MetaLike { name: string; isTensor: boolean; shape: ReadonlyArray<number | string> }

export interface NodeModel {
  infer: InferFn;
  inputNames: readonly string[];
  outputNames: readonly string[];
  close(): Promise<void>;
}

/** Open `modelBytes` (the .onnx file) with onnxruntime-node and check its inputs and outputs against the sidecar. */
export async function openNodeModel(modelBytes: Uint8Array, sidecar: ModelSidecar, opts: NodeModelOptions = {}): Promise<NodeModel> {
  const threads = Math.max(1, Math.floor(opts.threads ?? 1));
  const session = (opts.offThread ?? true) ? await openThreadSession(modelBytes, threads) : await openLocalSession(modelBytes, threads);
  const dims = (meta: readonly MetaLike[]): Record<string, ModelDim[] | undefined> => {
    const out: Record<string, ModelDim[] | undefined> = {};
    for (const m of meta) out[m.name] = m.isTensor && m.shape.length ? m.shape.map((d) => (typeof d === 'number' && d >= 0 ? d : String(d))) : undefined;
    return out;
  };
  const tilePx = opts.tilePx ?? sidecar.tilePx;
  try {
    checkModelIO({ ...sidecar, tilePx }, {
      inputNames: session.inputNames,
      outputNames: session.outputNames,
      inputDims: dims(session.inputMetadata),
      outputDims: dims(session.outputMetadata),
    });
  } catch (err) {
    await session.release();
    throw err;
  }
  const inputName = sidecar.input.name;
  const fetches = fetchedOutputNames(sidecar, opts.withFeatures ?? false);
  const infer: InferFn = async (input, shape, lend) => {
    const res = await session.run(inputName, input, shape, lend, fetches);
    const out: Record<string, TensorLike> = {};
    for (const t of res) {
      if (t.type !== 'float32') {
        throw new SeamtallyError('model-mismatch', `The model's output "${t.name}" is ${t.type}, but the contract needs float32 outputs. Export the model with float32 outputs.`);
      }
      out[t.name] = { data: t.data as Float32Array, dims: t.dims };
    }
    return out;
  };
  return { infer, inputNames: session.inputNames, outputNames: session.outputNames, close: () => session.release() };
}

/**
 * The CLI's session options, on this thread or on its own (ort-node-thread.mjs gets them as they are). No memory
 * pattern: onnxruntime would plan (and keep) one block per input shape, and sized windows come in several shapes per
 * scene; without it one 1 760² run peaks ~80 MB lower at the same speed.
 */
function sessionOptions(threads: number): ort.InferenceSession.SessionOptions {
  return { intraOpNumThreads: threads, interOpNumThreads: 1, executionMode: 'sequential', graphOptimizationLevel: 'all', enableMemPattern: false };
}

async function openLocalSession(modelBytes: Uint8Array, threads: number): Promise<SessionLike> {
  let session: ort.InferenceSession;
  try {
    session = await ort.InferenceSession.create(modelBytes, sessionOptions(threads));
  } catch (err) {
    throw modelLoadFailure(err, modelBytes.length);
  }
  const meta = (list: readonly ort.InferenceSession.ValueMetadata[]): MetaLike[] =>
    list.map((m) => ({ name: m.name, isTensor: m.isTensor, shape: m.isTensor ? m.shape : [] }));
  return {
    inputNames: session.inputNames, outputNames: session.outputNames,
    inputMetadata: meta(session.inputMetadata), outputMetadata: meta(session.outputMetadata),
    async run(inputName, input, dims, _lend, fetches) {
      const feeds = { [inputName]: new ort.Tensor('float32', input, [...dims]) };
      const res = fetches ? await session.run(feeds, [...fetches]) : await session.run(feeds);
      return Object.entries(res).map(([name, t]) => ({ name, type: t.type, data: t.data, dims: t.dims }));
    },
    release: () => session.release(),
  };
}

/**
 * Messages from ort-node-thread.mjs (to it: { kind: 'run', id, inputName, buffer, length, dims } with the buffer
 * transferred, and { kind: 'close' }); a run's answer transfers its input buffer back: into the lent scratch it came
 * from, or to the pool of copy buffers.
 */
type FromThread =
  | { kind: 'ready'; inputNames: string[]; outputNames: string[]; inputMetadata: MetaLike[]; outputMetadata: MetaLike[] }
  | { kind: 'load-failed'; message: string }
  | { kind: 'result'; id: number; outputs: Array<{ name: string; type: string; data: unknown; dims: number[] }>; buffer: ArrayBuffer }
  | { kind: 'run-failed'; id: number; message: string; buffer: ArrayBuffer };

async function openThreadSession(modelBytes: Uint8Array, threads: number): Promise<SessionLike> {
  const bytes = modelBytes.slice().buffer; // the thread gets its own copy
  const worker = new Worker(new URL('./ort-node-thread.mjs', import.meta.url), { workerData: { modelBytes: bytes, options: sessionOptions(threads) }, transferList: [bytes] });
  const pending = new Map<number, { resolve: (v: FromThread & { kind: 'result' }) => void; reject: (e: unknown) => void; lent: TileScratch | null }>();
  // buffers for inputs, transferred to the thread and back with each answer (one per run in flight), reused
  const free: ArrayBuffer[] = [];
  let failure: Error | null = null;
  const failAll = (err: Error) => {
    failure ??= err;
    for (const p of pending.values()) p.reject(failure);
    pending.clear();
  };
  const ready = new Promise<FromThread & { kind: 'ready' }>((resolve, reject) => {
    worker.on('message', (m: FromThread) => {
      if (m.kind === 'ready') resolve(m);
      else if (m.kind === 'load-failed') reject(modelLoadFailure(new Error(m.message), modelBytes.length));
      else {
        const p = pending.get(m.id);
        if (p?.lent) p.lent.tensor = new Float32Array(m.buffer);
        else if (m.buffer) free.push(m.buffer);
        if (!p) return;
        pending.delete(m.id);
        if (m.kind === 'result') p.resolve(m);
        else p.reject(new SeamtallyError('model-mismatch', `onnxruntime could not run the model on this tile (${m.message.split('\n')[0].slice(0, 200)}): check that the model takes a float32 image of this size.`));
      }
    });
    worker.on('error', (err) => { reject(err); failAll(err); });
    worker.on('exit', (code) => {
      const err = new Error(`the inference thread stopped (exit code ${code})`);
      reject(err);
      failAll(err);
    });
  });
  let m: FromThread & { kind: 'ready' };
  try {
    m = await ready;
  } catch (err) {
    await worker.terminate();
    throw err;
  }
  let nextId = 1;
  let closed = false;
  return {
    inputNames: m.inputNames, outputNames: m.outputNames, inputMetadata: m.inputMetadata, outputMetadata: m.outputMetadata,
    async run(inputName, input, dims, lend, fetches) {
      if (closed) throw new SeamtallyError('cancelled', 'The model was closed.');
      if (failure) throw failure;
      // the scratch's own buffer when it is lent and `input` is its start (never shared memory: it cannot be transferred)
      const lent = lend && lend.tensor.buffer === input.buffer && input.byteOffset === 0 && lend.tensor.buffer instanceof ArrayBuffer ? lend : null;
      let buffer: ArrayBuffer;
      if (lent) buffer = lent.tensor.buffer as ArrayBuffer;
      else {
        const bytesNeeded = input.length * 4;
        const k = free.findIndex((b) => b.byteLength >= bytesNeeded);
        buffer = k >= 0 ? free.splice(k, 1)[0] : new ArrayBuffer(bytesNeeded);
        new Float32Array(buffer, 0, input.length).set(input);
      }
      const id = nextId++;
      const res = await new Promise<FromThread & { kind: 'result' }>((resolve, reject) => {
        pending.set(id, { resolve, reject, lent });
        worker.postMessage({ kind: 'run', id, inputName, buffer, length: input.length, dims: [...dims], fetches: fetches ? [...fetches] : null }, [buffer]);
      });
      return res.outputs;
    },
    async release() {
      if (closed) return;
      closed = true;
      const exited = new Promise<void>((resolve) => worker.once('exit', () => resolve()));
      worker.postMessage({ kind: 'close' });
      await Promise.race([exited, new Promise<void>((resolve) => setTimeout(resolve, 2000).unref())]);
      await worker.terminate();
    },
  };
}
