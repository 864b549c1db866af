// One tile: read window → resample to the model GSD → normalise into a reused NCHW tensor → infer (injected) → decode →
// keep core centres → metric ground frame; plus the run driver shared by the CLI and the browser workers.
import { createTransform, epsgName, metricFrameEpsg, type UserCrsDefs } from './crs.ts';
import { decodeOutputs, type PixelDetections, type TensorLike } from './decode-outputs.ts';
import { SeamtallyError } from './errors.ts';
import { pixelToMap } from './geotransform.ts';
import { DEFAULT_MIN_SCORE, tileAlignPxOf, type ModelSidecar } from './model-contract.ts';
import { computeStretch, hasValidSample, joinSamples, normaliseInPlace, readStretchSample, selectBands, type BandSelection, type Stretch, type StretchOptions } from './radiometry.ts';
import { planResample, resampleBand } from './resample.ts';
import { fillUnit, unitInsideRect } from './fill-unit.ts';
import type { RasterWindow, SceneSource } from './scene-source.ts';
import { keepCoreCentres } from './seam-merge.ts';
import { chooseTilePx, inputSizePx, planTiles, type PlannedTile, type TilePlan, type TileSizeInput } from './tiling.ts';
import { noValidPixelsError } from './valid-mask.ts';
import { mapOrientedBox } from './box-mapping.ts';
import { createDetectionTable, type DetectionTable } from './types.ts';

/**
 * The injected detector: one float32 tensor of dims [1, 3, H, W] in (tilePx square, or a sized window's own H × W for
 * a dynamic-input model, so the shape may change from call to call), named output tensors out. `lend`, when given, is
 * the scratch whose tensor `input` is a view of (from its start): the detector may transfer that tensor's buffer to
 * another thread instead of copying it, and then puts a tensor of the same length back into `lend.tensor` before its
 * promise settles (an answer that never comes leaves the scratch without a tensor; the run has failed then anyway).
 */
export type InferFn = (input: Float32Array, dims: readonly [1, 3, number, number], lend?: TileScratch) => Promise<Record<string, TensorLike>>;

/** Everything one scene's tiles need, prepared once per scene (stretch from an overview, tiling, frame). */
export interface ScenePipeline {
  source: SceneSource;
  sceneIdx: number;
  sidecar: ModelSidecar;
  plan: TilePlan;
  bands: BandSelection;
  stretch: Stretch;
  /** EPSG code of the metric ground frame all detections of the run go to. */
  frameEpsg: number;
  minScore: number;
  userDefs?: UserCrsDefs;
}

export interface PrepareOptions {
  /** Model input size in pixels. Default: the sidecar's tilePx. */
  tilePx?: number;
  /** Overlap per side in model pixels, or 'auto' (default): from the sidecar's largest object extent. */
  overlapPx?: number | 'auto';
  /** Explicit bands (0-based): 3 for R,G,B or 1 for panchromatic. Default: from metadata / layout. */
  bands?: readonly number[];
  /** Metric frame EPSG for the whole run. Default: runFrameEpsg([this scene]). */
  frameEpsg?: number;
  /** Minimum detector score kept. Default: the sidecar's minScore, else 0.5. */
  minScore?: number;
  stretch?: StretchOptions;
  /** Largest object extent in metres when the sidecar has no `objects`. Default 10 m. */
  fallbackMaxExtentM?: number;
  userDefs?: UserCrsDefs;
  signal?: AbortSignal;
}

/** The metric frame for a set of scenes (one date mosaic): the first scene's metric frame (crs.ts metricFrameEpsg). */
export function runFrameEpsg(scenes: readonly SceneSource[], userDefs?: UserCrsDefs): number {
  if (scenes.length === 0) throw new Error('runFrameEpsg needs at least one scene');
  const g = scenes[0].info.georef;
  return metricFrameEpsg(g.epsg, g.centreLonLat, userDefs);
}

/**
 * The scene GSD used for tiling: snapped to the model GSD when they agree to 1 part in 10⁶, so that a scene written
 * at the model GSD (whose transform holds e.g. 0.29999999999 from corner arithmetic) is copied pixel for pixel
 * instead of being resampled by a factor of 1.00000000003.
 */
export function snapGsdM(sceneGsdM: number, modelGsdM: number): number {
  return Math.abs(sceneGsdM / modelGsdM - 1) < 1e-6 ? modelGsdM : sceneGsdM;
}

/** Largest object extent the sidecar declares (objects.*.maxExtentM), or the fallback. */
export function maxObjectExtentM(sidecar: ModelSidecar, fallbackM = 10): number {
  const specs = Object.values(sidecar.objects ?? {});
  return specs.length ? Math.max(...specs.map((o) => o.maxExtentM)) : fallbackM;
}

/**
 * The step of input sizes a model with dynamic height and width takes (a maxTilePx above tilePx): the lcm of its tile
 * alignment and output stride. Undefined for a model with a fixed input: its windows stay tilePx square (padded).
 */
export function modelSizeStepPx(sidecar: ModelSidecar): number | undefined {
  if ((sidecar.maxTilePx ?? sidecar.tilePx) <= sidecar.tilePx) return undefined;
  const stride = sidecar.output.layout === 'center-heatmap' ? sidecar.output.stride : 1;
  const a = tileAlignPxOf(sidecar);
  const gcd = (x: number, y: number): number => (y ? gcd(y, x % y) : x);
  return (a * stride) / gcd(a, stride);
}

/**
 * The tile size when the run does not fix one: the sidecar's tilePx, or, for a model that takes a range of sizes
 * (maxTilePx), the size in [tilePx, maxTilePx] that infers the fewest pixels for this scene (`chooseTilePx`).
 */
export function defaultTilePx(sidecar: ModelSidecar, plan: Omit<TileSizeInput, 'minTilePx' | 'maxTilePx' | 'sizeStepPx'>): number {
  const sizeStepPx = modelSizeStepPx(sidecar);
  if (sizeStepPx === undefined) return sidecar.tilePx;
  return chooseTilePx({ ...plan, minTilePx: sidecar.tilePx, maxTilePx: sidecar.maxTilePx!, sizeStepPx });
}

/** Prepare one scene: band roles, per-scene stretch (from an overview), tile plan, frame. */
export async function prepareScene(source: SceneSource, sceneIdx: number, sidecar: ModelSidecar, opts: PrepareOptions = {}): Promise<ScenePipeline> {
  const info = source.info;
  const alignPx = tileAlignPxOf(sidecar);
  const sceneGsdM = snapGsdM(info.georef.gsdM, sidecar.inputGsdM);
  const extentM = maxObjectExtentM(sidecar, opts.fallbackMaxExtentM);
  const overlapPx = opts.overlapPx ?? 'auto';
  const planBase = {
    sceneWidthPx: info.widthPx, sceneHeightPx: info.heightPx, sceneGsdM, modelGsdM: sidecar.inputGsdM,
    maxObjectExtentM: extentM, overlapPx, contextPx: sidecar.contextPx, alignPx, sizeStepPx: modelSizeStepPx(sidecar),
  };
  const tilePx = opts.tilePx ?? defaultTilePx(sidecar, planBase);
  if (sidecar.output.layout === 'center-heatmap' && tilePx % sidecar.output.stride !== 0) {
    throw new SeamtallyError('bad-argument', `The tile size ${tilePx} px is not a multiple of the model's output stride ${sidecar.output.stride}: choose a multiple of ${sidecar.output.stride}.`);
  }
  const bands = selectBands(info, opts.bands);
  const windows = await readStretchSample(source, opts.signal);
  // A whole level read and not one valid pixel: say so now (8-bit scenes get no percentile pass that would notice).
  if (windows.length === 1 && !hasValidSample(windows[0], new Set(bands.indices))) {
    throw noValidPixelsError(info.name, info.nodata);
  }
  const sample = joinSamples(windows);
  const stretch = computeStretch(sample, bands, { significantBits: info.significantBits, ...opts.stretch });
  const plan = planTiles({ ...planBase, tilePx });
  return {
    source, sceneIdx, sidecar, plan, bands, stretch,
    frameEpsg: opts.frameEpsg ?? runFrameEpsg([source], opts.userDefs),
    minScore: opts.minScore ?? sidecar.minScore ?? DEFAULT_MIN_SCORE,
    userDefs: opts.userDefs,
  };
}

/**
 * Reusable per-worker buffers: the NCHW input tensor and a validity mask of one tile, for inputs up to tilePx × tilePx;
 * a smaller input (a sized window of a dynamic-input model) uses their first values (see `tileInput`).
 */
export interface TileScratch {
  /** The largest input side the buffers hold, in model pixels. */
  tilePx: number;
  tensor: Float32Array;
  valid: Uint8Array;
  /** One band at the window's own size, for windows smaller than the input (a fixed-input model at a scene edge); made on first use. */
  plane: Float32Array | null;
}

/** Buffers for a plan's tiles: `createTileScratch(plan.tilePx)` holds every window of the plan. */
export function createTileScratch(tilePx: number): TileScratch {
  return { tilePx, tensor: new Float32Array(3 * tilePx * tilePx), valid: new Uint8Array(tilePx * tilePx), plane: null };
}

export interface TileTimings { readMs: number; resampleMs: number; inferMs: number; decodeMs: number }

export interface TileResult {
  tile: PlannedTile;
  /** Detections whose centre lies in the tile's core, in the run's metric frame. */
  table: DetectionTable;
  /** True when the tile held no valid pixel and inference was skipped. */
  skipped: boolean;
  timings: TileTimings;
}

const now = () => performance.now();

/**
 * The model input of a tile held in `scratch`: the first 3·H·W values of its tensor and the dims [1, 3, H, W] — the
 * window's own size for a dynamic-input model (sized plan), else tilePx × tilePx. Throws when the scratch is too small.
 */
export function tileInput(plan: TilePlan, tile: PlannedTile, scratch: TileScratch): { data: Float32Array; dims: [1, 3, number, number] } {
  const { widthPx, heightPx } = inputSizePx(plan, tile);
  if (widthPx > scratch.tilePx || heightPx > scratch.tilePx) {
    throw new Error(`scratch holds inputs up to ${scratch.tilePx} px, tile ${tile.index} needs ${widthPx} × ${heightPx}`);
  }
  return { data: scratch.tensor.subarray(0, 3 * widthPx * heightPx), dims: [1, 3, heightPx, widthPx] };
}

/** Fill the tensor with the tile's resampled, normalised pixels. Returns false when no pixel is valid. */
export function fillTensor(p: ScenePipeline, tile: PlannedTile, win: RasterWindow, scratch: TileScratch): boolean {
  const input = tileInput(p.plan, tile, scratch);
  const T = input.dims[3], TH = input.dims[2]; // input width (row length) and height
  const plane = T * TH;
  const wm = tile.windowModelPx;
  const ow = wm.maxXPx - wm.minXPx, oh = wm.maxYPx - wm.minYPx;
  const f = 1 / p.plan.scale;
  const rp = planResample(wm, win.windowPx, { scenePxPerModelPxX: f, scenePxPerModelPxY: f }, p.plan.sceneWidthPx, p.plan.sceneHeightPx);
  const dense = ow === T && oh === TH;
  const tensor = input.data, valid = scratch.valid.subarray(0, plane);
  const idx = p.bands.indices;
  // at the model GSD: the part inside the raster (all of it but at scene edges) in one pass, the rest nodata
  const inside = dense ? unitInsideRect(rp) : null;
  if (inside) {
    const src = [win.bands[idx[0]], win.bands[idx[1]], win.bands[idx[2]]];
    return fillUnit(src, win.windowPx.maxXPx - win.windowPx.minXPx, rp, T, win.nodata, p.stretch, p.sidecar.input, tensor, valid, inside);
  }
  if (!dense) valid.fill(0);
  for (let c = 0; c < 3; c++) {
    const dstPlane = tensor.subarray(c * plane, (c + 1) * plane);
    if (c > 0 && idx[c] === idx[c - 1] && dense) { dstPlane.set(tensor.subarray((c - 1) * plane, c * plane)); continue; }
    const out = dense ? dstPlane : (scratch.plane ??= new Float32Array(scratch.tilePx * scratch.tilePx)).subarray(0, ow * oh);
    const vmask = dense ? valid : new Uint8Array(ow * oh);
    resampleBand(win.bands[idx[c]], rp, out, { nodata: win.nodata, validOut: c === 0 ? vmask : undefined });
    if (!dense) {
      dstPlane.fill(0);
      for (let y = 0; y < oh; y++) {
        dstPlane.set(out.subarray(y * ow, (y + 1) * ow), y * T);
        if (c === 0) valid.set(vmask.subarray(y * ow, (y + 1) * ow), y * T);
      }
    }
  }
  let any = false;
  for (let i = 0; i < plane; i++) if (valid[i]) { any = true; break; }
  if (!any) return false;
  normaliseInPlace(tensor, plane, p.stretch, p.sidecar.input, valid);
  return true;
}

/** Convert core detections (model pixels of the resampled scene) to the metric frame. */
export function toGroundFrame(p: ScenePipeline, dets: PixelDetections): DetectionTable {
  const g = p.source.info.georef;
  const gt = g.geoTransform;
  const toFrame = createTransform(g.epsg, p.frameEpsg, p.userDefs);
  const s = p.plan.scale;
  const map = (xModel: number, yModel: number) => toFrame(pixelToMap(gt, xModel / s, yModel / s));
  const t = createDetectionTable(epsgName(p.frameEpsg), dets.count);
  for (let i = 0; i < dets.count; i++) {
    const b = mapOrientedBox(map, dets.cxPx[i], dets.cyPx[i], dets.lengthPx[i], dets.widthPx[i], dets.angleRad[i]);
    t.cxM[i] = b.cxM;
    t.cyM[i] = b.cyM;
    t.lengthM[i] = b.lengthM;
    t.widthM[i] = b.widthM;
    t.angleRad[i] = b.angleRad;
    t.score[i] = dets.score[i];
    t.classIdx[i] = dets.classIdx[i];
    t.sceneIdx[i] = p.sceneIdx;
  }
  t.count = dets.count;
  if (dets.features && dets.featureDim) { t.features = dets.features; t.featureDim = dets.featureDim; }
  return t;
}

/** A tile's pixels as read (null when its read window is empty), with the read time. */
export interface TileRead { win: RasterWindow | null; readMs: number }

/** Read phase of a tile (file I/O and tile decoding through the source's cache). */
export async function readTile(p: ScenePipeline, tile: PlannedTile, signal?: AbortSignal): Promise<TileRead> {
  const r = tile.readScenePx;
  if (r.maxXPx <= r.minXPx || r.maxYPx <= r.minYPx) return { win: null, readMs: 0 };
  const t0 = now();
  const win = await p.source.readWindow(r, { signal });
  return { win, readMs: now() - t0 };
}

/** A tile whose tensor is filled (resampled + normalised into `scratch`), ready to infer. */
export interface FilledTile {
  tile: PlannedTile;
  /** False when the read window was empty or held no valid pixel: inference is skipped. */
  hasPixels: boolean;
  scratch: TileScratch;
  readMs: number;
  resampleMs: number;
}

/** Fill phase of a tile: resample + normalise the read pixels into `scratch` (no inference yet). */
export function fillTile(p: ScenePipeline, tile: PlannedTile, read: TileRead, scratch: TileScratch): FilledTile {
  if (scratch.tilePx !== p.plan.tilePx) throw new Error(`scratch is for ${scratch.tilePx} px tiles, plan uses ${p.plan.tilePx}`);
  if (!read.win) return { tile, hasPixels: false, scratch, readMs: read.readMs, resampleMs: 0 };
  const t0 = now();
  const hasPixels = fillTensor(p, tile, read.win, scratch);
  return { tile, hasPixels, scratch, readMs: read.readMs, resampleMs: now() - t0 };
}

/** Read phase then fill phase of a tile (the part that can run while another tile infers). */
export async function readAndFillTile(p: ScenePipeline, tile: PlannedTile, scratch: TileScratch, signal?: AbortSignal): Promise<FilledTile> {
  return fillTile(p, tile, await readTile(p, tile, signal), scratch);
}

/** Inference phase of a filled tile: infer, decode, core rule, ground frame. */
export async function inferTile(p: ScenePipeline, filled: FilledTile, infer: InferFn, signal?: AbortSignal): Promise<TileResult> {
  const { tile, scratch } = filled;
  const timings: TileTimings = { readMs: filled.readMs, resampleMs: filled.resampleMs, inferMs: 0, decodeMs: 0 };
  if (!filled.hasPixels) return { tile, table: createDetectionTable(epsgName(p.frameEpsg), 0), skipped: true, timings };
  if (signal?.aborted) throw new SeamtallyError('cancelled', 'The run was cancelled.');
  let t0 = now();
  const input = tileInput(p.plan, tile, scratch);
  const outputs = await infer(input.data, input.dims, scratch);
  timings.inferMs = now() - t0;
  t0 = now();
  const wm = tile.windowModelPx;
  const dets = decodeOutputs(p.sidecar, outputs, { minScore: p.minScore, tileOriginPx: [wm.minXPx, wm.minYPx] });
  const table = toGroundFrame(p, keepCoreCentres(dets, tile.corePx));
  timings.decodeMs = now() - t0;
  return { tile, table, skipped: false, timings };
}

/** Compute phase of a tile: resample + normalise, infer, decode, core rule, ground frame. */
export async function processTile(p: ScenePipeline, tile: PlannedTile, read: TileRead, scratch: TileScratch, infer: InferFn, signal?: AbortSignal): Promise<TileResult> {
  return inferTile(p, fillTile(p, tile, read, scratch), infer, signal);
}

/** Run one tile end to end (read, then process). */
export async function runTile(p: ScenePipeline, tile: PlannedTile, scratch: TileScratch, infer: InferFn, signal?: AbortSignal): Promise<TileResult> {
  return processTile(p, tile, await readTile(p, tile, signal), scratch, infer, signal);
}

export interface RunProgress {
  sceneIdx: number;
  tilesDone: number;
  tilesTotal: number;
  /** Scene pixels whose tiles are done (core area, in scene pixels). */
  scenePxDone: number;
  elapsedMs: number;
}

export interface RunSceneOptions {
  signal?: AbortSignal;
  onProgress?: (p: RunProgress) => void;
  /** Run only these tiles (e.g. tiles touching an AOI, or the ones left after a resume). Default: all. */
  tiles?: readonly PlannedTile[];
  /** Called with each finished tile (e.g. to stream detections to the page or persist progress). */
  onTile?: (r: TileResult) => void;
  scratch?: TileScratch;
  /** Start reading tile k+1 before tile k infers (default true). Off gives clean per-phase timings. */
  prefetch?: boolean;
}

export interface SceneRunResult {
  tables: DetectionTable[];
  tilesRun: number;
  tilesSkipped: number;
  timings: TileTimings;
  elapsedMs: number;
}

/**
 * Run the tiles of one scene in order. With `prefetch` (default) tile k+1 is read and filled into a second tensor
 * while tile k infers: the CLI's onnxruntime-node session runs on a thread of its own (web/io/ort-node.ts), so
 * reading and filling hide behind inference there; in a browser worker (wasm inference on the worker's own thread)
 * the order of work is the same and nothing overlaps.
 */
export async function runScene(p: ScenePipeline, infer: InferFn, opts: RunSceneOptions = {}): Promise<SceneRunResult> {
  const tiles = opts.tiles ?? p.plan.tiles;
  const prefetch = opts.prefetch ?? true;
  const first = opts.scratch ?? createTileScratch(p.plan.tilePx);
  // two tensors when prefetching: tile k+1 is filled while tile k's tensor is still the model's input
  const scratches = prefetch && tiles.length > 1 ? [first, createTileScratch(p.plan.tilePx)] : [first];
  const totals: TileTimings = { readMs: 0, resampleMs: 0, inferMs: 0, decodeMs: 0 };
  const tables: DetectionTable[] = [];
  const start = now();
  let skipped = 0;
  let scenePxDone = 0;
  const s2 = p.plan.scale * p.plan.scale;
  const prepare = (k: number): Promise<FilledTile> => {
    const f = readAndFillTile(p, tiles[k], scratches[k % scratches.length], opts.signal);
    f.catch(() => undefined); // a failure surfaces when awaited; this keeps it from being reported as unhandled
    return f;
  };
  let next: Promise<FilledTile> | null = tiles.length ? prepare(0) : null;
  for (let k = 0; k < tiles.length; k++) {
    if (opts.signal?.aborted) throw new SeamtallyError('cancelled', 'The run was cancelled.');
    const filled = await next!;
    next = prefetch && k + 1 < tiles.length ? prepare(k + 1) : null;
    const r = await inferTile(p, filled, infer, opts.signal);
    if (!prefetch && k + 1 < tiles.length) next = prepare(k + 1);
    for (const key of Object.keys(totals) as (keyof TileTimings)[]) totals[key] += r.timings[key];
    if (r.skipped) skipped++;
    if (r.table.count) tables.push(r.table);
    opts.onTile?.(r);
    const c = tiles[k].corePx;
    scenePxDone += ((c.maxXPx - c.minXPx) * (c.maxYPx - c.minYPx)) / s2;
    opts.onProgress?.({ sceneIdx: p.sceneIdx, tilesDone: k + 1, tilesTotal: tiles.length, scenePxDone, elapsedMs: now() - start });
  }
  return { tables, tilesRun: tiles.length - skipped, tilesSkipped: skipped, timings: totals, elapsedMs: now() - start };
}
