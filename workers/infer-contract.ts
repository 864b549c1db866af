// The typed contract between a detector worker and its inference worker (infer.worker.ts), which owns the
// onnxruntime-web session so that the detector worker can read and fill the next tile while this one infers.
import type { Result } from '../web/core/errors.ts';
import type { ModelIO } from '../web/core/model-contract.ts';

/** What the inference worker reports after creating a session. */
export interface InferLoadInfo {
  /** The session's handle for run / release. */
  sessionId: number;
  io: ModelIO;
  /** Intra-op threads the session uses (1 unless the context is cross-origin isolated). */
  numThreads: number;
}

/** One output tensor, its buffer transferred to the caller. */
export interface InferOutput { data: Float32Array; dims: number[] }

/** The outputs of one run, and the input's buffer handed back (it was transferred in). */
export interface InferRunResult {
  outputs: Record<string, InferOutput>;
  inputBuffer: ArrayBuffer;
}

export interface InferApi {
  /** Create a session (earlier ones stay until released). Failures come back as the raw onnxruntime message. */
  load(modelBytes: ArrayBuffer, opts: { numThreads: number; fetches?: string[] }): Promise<Result<InferLoadInfo>>;
  /**
   * Run the float32 NCHW input held in the first `length` values of `inputBuffer` (transferred in, and back in the
   * result, so the caller reuses it).
   */
  run(sessionId: number, inputName: string, inputBuffer: ArrayBuffer, length: number, dims: number[]): Promise<Result<InferRunResult>>;
  release(sessionId: number): Promise<void>;
  /** Test-only (`?fault=infercrash:N`): throw an uncaught error in the inference worker, as a crash does. */
  crashForTest(): void;
}
