// Inference worker entry (thin): owns the onnxruntime-web sessions of its detector worker (ort-host.ts) and runs
// tiles on it, handing the input buffer back with the outputs (transferred, not copied).
import { expose, transfer } from 'comlink';
import { toErrorInfo } from '../web/core/errors.ts';
import { createOrtHost, type OrtHost } from './ort-host.ts';
import type { InferApi, InferRunResult } from './infer-contract.ts';

const sessions = new Map<number, OrtHost>();
let lastId = 0;

const api = {
  async load(modelBytes, opts) {
    try {
      const host = await createOrtHost(modelBytes, opts);
      const sessionId = ++lastId;
      sessions.set(sessionId, host);
      return { ok: true as const, value: { sessionId, io: host.io, numThreads: host.numThreads } };
    } catch (err) {
      // the raw message: the detector worker turns it into the user's sentence (model-load-failure.ts)
      return { ok: false as const, error: { kind: 'internal' as const, message: err instanceof Error ? err.message : String(err), detail: {} } };
    }
  },
  async run(sessionId, inputName, inputBuffer, length, dims) {
    try {
      const host = sessions.get(sessionId);
      if (!host) throw new Error(`session ${sessionId} is not loaded in the inference worker (released, or never loaded)`);
      const outputs = await host.run(inputName, new Float32Array(inputBuffer, 0, length), dims);
      const value: InferRunResult = { outputs, inputBuffer };
      return transfer({ ok: true as const, value }, [inputBuffer, ...Object.values(outputs).map((o) => o.data.buffer as ArrayBuffer)]);
    } catch (err) {
      return { ok: false as const, error: toErrorInfo(err) }; // the input buffer stays here: the caller drops its tensor
    }
  },
  async release(sessionId) {
    const host = sessions.get(sessionId);
    sessions.delete(sessionId);
    await host?.release();
  },
  crashForTest() { setTimeout(() => { throw new Error('injected inference-worker crash (?fault=infercrash)'); }); },
} satisfies InferApi;

// onnxruntime-web starts its threads from this script under the name "em-pthread…": those must not expose the API
if (!self.name.startsWith('em-pthread')) expose(api);
