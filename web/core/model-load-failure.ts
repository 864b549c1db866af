// One sentence for a model onnxruntime refused to load (unknown operator, unreleased opset, empty or damaged file),
// the same for onnxruntime-web (workers) and onnxruntime-node (CLI): only the error text is looked at.
import { SeamtallyError } from './errors.ts';

/** A 'model-invalid' error saying what to do, from onnxruntime's load error and the size of the .onnx file. */
export function modelLoadFailure(err: unknown, byteLength: number): SeamtallyError {
  const msg = err instanceof Error ? err.message : String(err);
  const op = /No Op registered for (\S+)/.exec(msg);
  if (op) {
    return new SeamtallyError('model-invalid', `The .onnx file uses the operator "${op[1]}", which onnxruntime cannot run: export the model again with standard ONNX operators (for example opset 17).`);
  }
  const opset = /\bOpset (\d+)/i.exec(msg);
  if (opset) {
    return new SeamtallyError('model-invalid', `The .onnx file is stamped with ONNX opset ${opset[1]}, which this onnxruntime does not support: export the model again with a released opset and standard ONNX operators (for example opset 17).`);
  }
  if (byteLength === 0) return new SeamtallyError('model-invalid', 'The .onnx file is empty: copy the model file again.');
  // first line, without the C++ source location onnxruntime sometimes puts in front, nor the web build's prefix
  const first = msg.split('\n')[0].replace(/^\S*onnxruntime\S*:\d+\s+\S.*?\)\s+/, '').replace(/^Can't create a session\.\s*/, '').slice(0, 200);
  return new SeamtallyError('model-invalid', `The .onnx file could not be loaded by onnxruntime (${first}): check that it is an ONNX model and not damaged.`);
}
