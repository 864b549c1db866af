// The onnxruntime-node session of the CLI, on a thread of its own (node:worker_threads). onnxruntime-node's
// `session.run` computes on the calling thread, so a session on the JS thread blocks reading and filling the next
// tile for the whole inference; here the JS thread reads and fills while this thread infers. Plain JavaScript (no
// TypeScript loader is registered in worker threads). Messages: the `FromThread` type in ort-node.ts and the two it sends
// here; session options come from ort-node.ts as they are.
import { parentPort, workerData } from 'node:worker_threads';
import * as ort from 'onnxruntime-node';

const errorText = (err) => (err instanceof Error ? err.message : String(err));

let session;
try {
  session = await ort.InferenceSession.create(new Uint8Array(workerData.modelBytes), workerData.options);
} catch (err) {
  parentPort.postMessage({ kind: 'load-failed', message: errorText(err) });
}

if (session) {
  const meta = (list) => list.map((m) => ({ name: m.name, isTensor: m.isTensor, shape: m.isTensor ? [...m.shape] : [] }));
  parentPort.postMessage({
    kind: 'ready', inputNames: [...session.inputNames], outputNames: [...session.outputNames],
    inputMetadata: meta(session.inputMetadata), outputMetadata: meta(session.outputMetadata),
  });
  // each input arrives in an ArrayBuffer transferred from the JS thread (onnxruntime-node does not take typed arrays
  // on shared memory) and goes back with the result, so the JS thread reuses it: no copy here
  parentPort.on('message', async (m) => {
    if (m.kind === 'close') {
      await session.release();
      parentPort.close();
      return;
    }
    const buffer = m.buffer;
    try {
      const input = new Float32Array(buffer, 0, m.length);
      const feeds = { [m.inputName]: new ort.Tensor('float32', input, m.dims) };
      // only the outputs the run needs (the features output is costly to copy out and rarely wanted)
      const res = m.fetches ? await session.run(feeds, m.fetches) : await session.run(feeds);
      // outputs are small (a quarter of the tile per channel at stride 4): copied, not transferred (their buffers
      // belong to onnxruntime-node)
      const outputs = Object.entries(res).map(([name, t]) => ({ name, type: t.type, dims: [...t.dims], data: t.data }));
      parentPort.postMessage({ kind: 'result', id: m.id, outputs, buffer }, [buffer]);
    } catch (err) {
      parentPort.postMessage({ kind: 'run-failed', id: m.id, message: errorText(err), buffer }, [buffer]);
    }
  });
}
