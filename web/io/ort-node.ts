// onnxruntime-node adapter for the CLI: loads a model + sidecar, checks them against each other, returns an InferFn.
import * as ort from 'onnxruntime-node';
import { SeamtallyError } from '../core/errors.ts';
import { checkModelIO, type ModelDim, type ModelSidecar } from '../core/model-contract.ts';
import type { InferFn } from '../core/pipeline.ts';
import type { TensorLike } from '../core/decode-outputs.ts';
import { modelLoadFailure } from '../core/model-load-failure.ts';

export interface NodeModelOptions {
  /** intraOpNumThreads (default 1). */
  threads?: number;
  /** Tile size the run will feed (default the sidecar's tilePx); checked against fixed model dimensions. */
  tilePx?: number;
}

export interface NodeModel {
  infer: InferFn;
  inputNames: readonly string[];
  outputNames: readonly string[];
  close(): Promise<void>;
}

/** Open `modelBytes` (the .onnx file) with onnxruntime-node and check its inputs and outputs against the sidecar. */
export async function openNodeModel(modelBytes: Uint8Array, sidecar: ModelSidecar, opts: NodeModelOptions = {}): Promise<NodeModel> {
  let session: ort.InferenceSession;
  try {
    session = await ort.InferenceSession.create(modelBytes, {
      intraOpNumThreads: Math.max(1, Math.floor(opts.threads ?? 1)),
      interOpNumThreads: 1,
      executionMode: 'sequential',
      graphOptimizationLevel: 'all',
    });
  } catch (err) {
    throw modelLoadFailure(err, modelBytes.length);
  }
  const dims = (meta: readonly ort.InferenceSession.ValueMetadata[]): Record<string, ModelDim[] | undefined> => {
    const out: Record<string, ModelDim[] | undefined> = {};
    for (const m of meta) out[m.name] = m.isTensor && m.shape.length ? m.shape.map((d) => (typeof d === 'number' && d >= 0 ? d : String(d))) : undefined;
    return out;
  };
  const tilePx = opts.tilePx ?? sidecar.tilePx;
  checkModelIO({ ...sidecar, tilePx }, {
    inputNames: session.inputNames,
    outputNames: session.outputNames,
    inputDims: dims(session.inputMetadata),
    outputDims: dims(session.outputMetadata),
  });
  const inputName = sidecar.input.name;
  const infer: InferFn = async (input, shape) => {
    const feeds = { [inputName]: new ort.Tensor('float32', input, [...shape]) };
    const res = await session.run(feeds);
    const out: Record<string, TensorLike> = {};
    for (const [name, t] of Object.entries(res)) {
      if (t.type !== 'float32') {
        throw new SeamtallyError('model-mismatch', `The model's output "${name}" is ${t.type}, but the contract needs float32 outputs. Export the model with float32 outputs.`);
      }
      out[name] = { data: t.data as Float32Array, dims: t.dims };
    }
    return out;
  };
  return { infer, inputNames: session.inputNames, outputNames: session.outputNames, close: () => session.release() };
}
