// Detector worker entry (thin): opens scenes from File/URL, runs the core pipeline with onnxruntime-web, returns typed arrays.
import { expose, transfer } from 'comlink';
import { toErrorInfo, SeamtallyError, type Result } from '../web/core/errors.ts';
import { crsDefinition } from '../web/core/crs.ts';
import { assertSomeValidPixels, readValidMask } from '../web/core/valid-mask.ts';
import { validateSidecar, checkModelIO, fetchedOutputNames, type ModelSidecar } from '../web/core/model-contract.ts';
import { inferTile, readAndFillTile, type FilledTile, type InferFn, type ScenePipeline, type TileScratch } from '../web/core/pipeline.ts';
import { modelLoadFailure } from '../web/core/model-load-failure.ts';
import { createOrtModel, crashInferenceWorkerForTest, type OrtModel } from './ort-session.ts';
import { openInput, SceneCache } from './scene-cache.ts';
import { renderPreview } from './preview.ts';
import { assertBandsKnown } from './scene-checks.ts';
import { tableBuffers } from './transfer.ts';
import { ReadAhead } from './read-ahead.ts';
import type { DetectorApi } from './contract.ts';

const scenes = new SceneCache();
const cancelledRuns = new Set<string>();
let model: { ort: OrtModel; sidecar: ModelSidecar; id: number } | null = null;
let modelSeq = 0;
const readAhead = new ReadAhead();

/** Read tile `tileIndex` of `p` and fill it into `scratch`. */
function prepareTile(p: ScenePipeline, tileIndex: number, scratch: TileScratch): Promise<FilledTile> {
  const tile = p.plan.tiles[tileIndex];
  if (!tile) return Promise.reject(new Error(`tile ${tileIndex} does not exist (plan has ${p.plan.tiles.length})`));
  return readAndFillTile(p, tile, scratch);
}

async function guard<T>(fn: () => Promise<T>, transfers: (v: T) => Transferable[] = () => []): Promise<Result<T>> {
  try {
    const value = await fn();
    return transfer({ ok: true as const, value }, transfers(value));
  } catch (err) {
    return { ok: false as const, error: toErrorInfo(err) };
  }
}

function needModel(): NonNullable<typeof model> {
  if (!model) throw new SeamtallyError('model-invalid', 'No detector is loaded in this worker: load a model first.');
  return model;
}

/**
 * Test-only faults (the page sets `task.fault` only under `?fault=`): an ordinary throw, a crash that never answers,
 * or a crash of the inference worker (which this worker turns into its own crash).
 */
async function injectFault(fault: 'throw' | 'crash' | 'infer-crash'): Promise<void> {
  if (fault === 'throw') throw new Error('injected failure (?fault=throw)');
  if (fault === 'infer-crash') { crashInferenceWorkerForTest(); await new Promise<never>(() => {}); }
  setTimeout(() => { throw new Error('injected crash (?fault=crash)'); });
  await new Promise<never>(() => {});
}

const api = {
  describeScene: (input) => guard(async () => {
    const src = await openInput(input, 8 * 1024 * 1024);
    try {
      assertBandsKnown(src.info);
      const mask = await readValidMask(src);
      await assertSomeValidPixels(src, mask);
      return { info: src.info, proj4Def: crsDefinition(src.info.georef.epsg), mask };
    } finally { await src.close(); }
  }, (v) => [v.mask.validMask.buffer as ArrayBuffer]),
  previewScene: (input, opts) => guard(async () => {
    const src = await openInput(input, 8 * 1024 * 1024);
    try { return await renderPreview(src, opts.maxLongSidePx); } finally { await src.close(); }
  }, (v) => [v.rgba.buffer as ArrayBuffer]),
  loadModel: (bytes, sidecarValue, opts) => guard(async () => {
    const sidecar = validateSidecar(sidecarValue);
    const byteLength = bytes.byteLength; // the bytes are transferred to the inference worker
    let ort: OrtModel;
    // the page does not keep the model's features (review adaptation is not offered in the page yet)
    try { ort = await createOrtModel(bytes, { ...opts, fetches: fetchedOutputNames(sidecar, false) }); } catch (err) { throw modelLoadFailure(err, byteLength); }
    try { checkModelIO(sidecar, ort.io); } catch (err) { await ort.release(); throw err; }
    await model?.ort.release();
    model = { ort, sidecar, id: ++modelSeq };
    readAhead.drop();
    return { inputNames: [...ort.io.inputNames], outputNames: [...ort.io.outputNames], numThreads: ort.numThreads };
  }),
  planScene: (key, input, opts) => guard(async () => {
    const m = needModel();
    const p = await scenes.pipeline(key, input, m.sidecar, m.id, opts);
    return { plan: p.plan, bands: p.bands, stretch: p.stretch };
  }),
  detectTile: (task) => guard(async () => {
    if (cancelledRuns.has(task.runId)) throw new SeamtallyError('cancelled', 'The run was cancelled.');
    if (task.fault) await injectFault(task.fault);
    const m = needModel();
    const p = await scenes.pipeline(task.sceneKey, task.input, m.sidecar, m.id, task.prepare);
    const filled = await readAhead.filled(p, task.tileIndex, (s) => prepareTile(p, task.tileIndex, s));
    // the next tile of this worker's band is read and filled here while this one infers in the inference worker
    if (task.nextTileIndex !== undefined && task.nextTileIndex !== task.tileIndex && p.plan.tiles[task.nextTileIndex]) {
      readAhead.start(p, task.nextTileIndex, (s) => prepareTile(p, task.nextTileIndex!, s));
    }
    const inputName = m.sidecar.input.name;
    const infer: InferFn = async (data, dims) => {
      const r = await m.ort.run(inputName, data, dims);
      filled.scratch.tensor = new Float32Array(r.inputBuffer);
      return r.outputs;
    };
    try {
      const r = await inferTile(p, filled, infer);
      const t = r.timings;
      return { sceneKey: task.sceneKey, tileIndex: task.tileIndex, skipped: r.skipped, table: r.table,
        timingsMs: { readMs: t.readMs, resampleMs: t.resampleMs, inferMs: t.inferMs, decodeMs: t.decodeMs } };
    } finally {
      readAhead.give(filled.scratch);
    }
  }, (v) => tableBuffers(v.table)),
  cancel(runId) { cancelledRuns.add(runId); readAhead.drop(); },
  forgetScene: (key) => { readAhead.drop(); return scenes.forget(key); },
} satisfies DetectorApi;

if (!self.name.startsWith('em-pthread')) expose(api);
