// Measures ms per 512×512 tile of an ONNX model in onnxruntime-node with 1 intra-op thread (median of runs).
// Usage: npx tsx models/train/tile-speed.ts models/seamtally-det.onnx [runs]
import * as ort from 'onnxruntime-node';

const path = process.argv[2] ?? 'models/seamtally-det.onnx';
const runs = Number(process.argv[3] ?? 20);
const session = await ort.InferenceSession.create(path, { intraOpNumThreads: 1, interOpNumThreads: 1, executionMode: 'sequential' });
const data = new Float32Array(3 * 512 * 512);
for (let i = 0; i < data.length; i++) data[i] = ((i * 2654435761) >>> 0) / 4294967296;
const feeds = { [session.inputNames[0]]: new ort.Tensor('float32', data, [1, 3, 512, 512]) };
for (let i = 0; i < 3; i++) await session.run(feeds);
const times: number[] = [];
for (let i = 0; i < runs; i++) {
  const t0 = performance.now();
  const out = await session.run(feeds);
  times.push(performance.now() - t0);
  if (i === 0) for (const [k, v] of Object.entries(out)) process.stdout.write(`${k} [${v.dims.join(',')}]\n`);
}
times.sort((a, b) => a - b);
process.stdout.write(`ms per 512² tile (1 thread): median ${times[runs >> 1].toFixed(1)}, min ${times[0].toFixed(1)}\n`);
