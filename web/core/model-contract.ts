// The model sidecar contract (seamtally-model/1): parsing, validation, and checks of a model's input/output shapes.
import { SeamtallyError } from './errors.ts';

/*
 * The public contract. A model is `<name>.onnx` plus `<name>.model.json`:
 *
 * {
 *   "format": "seamtally-model/1",                 required, exactly this string
 *   "name": "…", "version": "…",                   optional strings
 *   "card": "models/README.md",                    optional string: path of the model card
 *   "summary": "…",                                optional string: one line on what sets this model apart
 *                                                  (shown where the page offers a choice of shipped detectors)
 *   "classes": ["vehicle", "solar_panel"],         required, 1–255 unique non-empty strings; class index = position
 *   "inputGsdM": 0.3,                              required, metres per input pixel, 0 < g ≤ 10
 *   "tilePx": 512,                                 required, square input size, integer 32–4096
 *   "maxTilePx": 1792,                             optional, integer tilePx–4096, a multiple of tileAlignPx: the
 *                                                  model also takes inputs of any H × W (rectangular too) that
 *                                                  are multiples of lcm(tileAlignPx, stride), up to this size;
 *                                                  the planner then sizes each window to fit (tiling.ts)
 *   "tileAlignPx": 32,                             optional, integer 1–512 dividing tilePx (default: the output
 *                                                  stride, 1 for "boxes"): the network's total downsampling; tile
 *                                                  windows start on multiples of it so every tiling shows the
 *                                                  network the same pixel phase
 *   "contextPx": 38,                               optional, integer 0–512: model pixels of context the network
 *                                                  needs around an object for its score not to depend on where a
 *                                                  window ends (receptive field); the automatic overlap is half
 *                                                  the largest object extent plus this (default 8, tiling.ts)
 *   "input": {
 *     "name": "image",                             required, the ONNX input's name
 *     "bands": "rgb",                              required, "rgb": a float32 tensor [1, 3, tilePx, tilePx], R,G,B
 *     "scale": 0.00392156862745098,                required > 0: value = (pixel × scale − mean[c]) / std[c]
 *     "mean": [0, 0, 0], "std": [1, 1, 1]          required, 3 numbers each, std > 0
 *   },
 *   "output": either
 *     {"layout": "center-heatmap", "stride": 4,    stride: integer ≥ 1 dividing tilePx
 *      "heatmap": "hm",                            [1, C, H/s, W/s], values in 0..1, C = number of classes
 *      "size": "wh",                               [1, 2, H/s, W/s]: box width (along the angle), height, input px
 *      "offset": "reg" | null,                     [1, 2, H/s, W/s]: sub-cell x, y in cells (0..1); null → 0.5
 *      "angle": "ang" | null,                      [1, 1, H/s, W/s]: radians; null → axis-aligned boxes
 *      "features": "feat"}                         optional [1, F, H/s, W/s], F ≤ 64: each detection carries the
 *                                                  F values at its peak (the review-adapted scorer uses them)
 *     Peaks are 3×3 local maxima ≥ the minimum score (decode-outputs.ts defines centre and tie rules exactly).
 *   or
 *     {"layout": "boxes", "boxes": "det"}          [1, N, 6]: x1, y1, x2, y2, score, class index; input pixels
 *   "minScore": 0.3,                               optional default score threshold, 0 < s < 1
 *   "objects": {"vehicle": {"criticalDimM": 1.8, "maxExtentM": 7}},   optional, keys must be classes:
 *       criticalDimM = the object's smaller dimension (drives resolution caveats), maxExtentM = its largest
 *       extent (drives the tiling overlap); both > 0 and criticalDimM ≤ maxExtentM
 *   "quality": {                                   optional, measured on an evaluation set the model never saw
 *     "gsdM": [0.15, 0.3, 0.45, 0.6, 0.8],         strictly increasing, > 0
 *     "recall": {"vehicle": [..5 numbers..]},      per class, one value in 0..1 per gsdM entry
 *     "precision": {"vehicle": [...]},             same shape as recall
 *     "ap50": {"vehicle": 0.93},                   per class, 0..1 (PASCAL VOC all-point AP at IoU 0.5)
 *     "evalSet": "…"                               free text describing the evaluation set
 *   }
 *   "lowSun": {                                    optional, measured on validation scenes under a low and a high sun
 *     "belowDeg": 32,                              sun elevation (degrees, 0..90) below which the sun counts as low
 *     "countBiasPct": {"vehicle": 8},              per class: mean signed per-AOI count error under a low sun minus
 *                                                  that under a high sun, in percent (-100..1000)
 *     "source": "…"                                free text: which scenes
 *   }
 * }
 * Unknown top-level fields are ignored (so later minor additions stay readable). The text may be at most
 * MAX_SIDECAR_BYTES long; files are treated as untrusted.
 */

export const SIDECAR_FORMAT = 'seamtally-model/1';
export const MAX_SIDECAR_BYTES = 256 * 1024;

export interface CenterHeatmapOutput {
  layout: 'center-heatmap';
  stride: number;
  heatmap: string;
  size: string;
  offset: string | null;
  angle: string | null;
  /** Optional: [1, F, H/s, W/s], F ≤ 64, the model's last shared layer (detections carry it for review adaptation). */
  features: string | null;
}
export interface BoxesOutput { layout: 'boxes'; boxes: string }
export type SidecarOutput = CenterHeatmapOutput | BoxesOutput;

export interface ObjectSpec { criticalDimM: number; maxExtentM: number }
export interface QualityCurves {
  gsdM: number[];
  recall?: Record<string, number[]>;
  precision?: Record<string, number[]>;
  ap50?: Record<string, number>;
  evalSet?: string;
}

/** Counting threshold for a model whose sidecar gives no `minScore` (the one place this default is typed). */
export const DEFAULT_MIN_SCORE = 0.5;

export interface ModelSidecar {
  format: typeof SIDECAR_FORMAT;
  name?: string;
  version?: string;
  card?: string;
  /** One line on what sets this model apart (the page's detector choice shows it). */
  summary?: string;
  classes: string[];
  inputGsdM: number;
  tilePx: number;
  /** Largest square input the model takes (dynamic H, W); absent: only tilePx. */
  maxTilePx?: number;
  /** The network's total downsampling: tile windows start on multiples of it. Absent: `tileAlignPxOf`. */
  tileAlignPx?: number;
  /** Context (model px) the network needs around an object; added to the automatic overlap. Absent: 8. */
  contextPx?: number;
  input: { name: string; bands: 'rgb'; scale: number; mean: [number, number, number]; std: [number, number, number] };
  output: SidecarOutput;
  minScore?: number;
  objects?: Record<string, ObjectSpec>;
  quality?: QualityCurves;
  lowSun?: LowSunEffect;
}

/** How the model's counts move under a low sun (long shadows), measured on validation scenes. */
export interface LowSunEffect { belowDeg: number; countBiasPct: Record<string, number>; source?: string }

type Obj = Record<string, unknown>;

function fail(field: string, expected: string): never {
  throw new SeamtallyError('sidecar-invalid', `The model sidecar's "${field}" is invalid (expected ${expected}): fix the .model.json file.`, { field });
}
function isObj(v: unknown): v is Obj { return typeof v === 'object' && v !== null && !Array.isArray(v); }
function obj(v: unknown, field: string): Obj { if (!isObj(v)) fail(field, 'an object'); return v; }
function str(v: unknown, field: string): string {
  if (typeof v !== 'string' || v.length === 0 || v.length > 256) fail(field, 'a non-empty string of at most 256 characters');
  return v;
}
function optStr(v: unknown, field: string): string | undefined { return v === undefined ? undefined : str(v, field); }
function num(v: unknown, field: string, min: number, max: number, what: string): number {
  if (typeof v !== 'number' || !Number.isFinite(v) || v < min || v > max) fail(field, what);
  return v;
}
function posNum(v: unknown, field: string, max = 1e6): number {
  const x = num(v, field, 0, max, `a number greater than 0 (at most ${max})`);
  if (x === 0) fail(field, 'a number greater than 0');
  return x;
}
function int(v: unknown, field: string, min: number, max: number): number {
  if (typeof v !== 'number' || !Number.isInteger(v) || v < min || v > max) fail(field, `a whole number from ${min} to ${max}`);
  return v;
}
function triple(v: unknown, field: string, positive: boolean): [number, number, number] {
  if (!Array.isArray(v) || v.length !== 3) fail(field, 'an array of 3 numbers (one per R, G, B band)');
  return v.map((x, i) => (positive ? posNum(x, `${field}[${i}]`) : num(x, `${field}[${i}]`, -1e6, 1e6, 'a finite number'))) as [number, number, number];
}
function nameOrNull(v: unknown, field: string): string | null { return v === null || v === undefined ? null : str(v, field); }

function perClass<T>(v: unknown, field: string, classes: string[], each: (x: unknown, f: string) => T): Record<string, T> {
  const o = obj(v, field);
  const out: Record<string, T> = {};
  for (const [k, x] of Object.entries(o)) {
    if (!classes.includes(k)) fail(`${field}.${k}`, `a class named in "classes" (${classes.join(', ')})`);
    out[k] = each(x, `${field}.${k}`);
  }
  return out;
}

function parseOutput(v: unknown, tilePx: number): SidecarOutput {
  const o = obj(v, 'output');
  if (o.layout === 'boxes') return { layout: 'boxes', boxes: str(o.boxes, 'output.boxes') };
  if (o.layout !== 'center-heatmap') fail('output.layout', '"center-heatmap" or "boxes"');
  const stride = int(o.stride, 'output.stride', 1, 64);
  if (tilePx % stride !== 0) fail('output.stride', `a divisor of tilePx (${tilePx})`);
  return {
    layout: 'center-heatmap', stride,
    heatmap: str(o.heatmap, 'output.heatmap'), size: str(o.size, 'output.size'),
    offset: nameOrNull(o.offset, 'output.offset'), angle: nameOrNull(o.angle, 'output.angle'),
    features: nameOrNull(o.features, 'output.features'),
  };
}

function parseQuality(v: unknown, classes: string[]): QualityCurves {
  const q = obj(v, 'quality');
  if (!Array.isArray(q.gsdM) || q.gsdM.length < 1 || q.gsdM.length > 64) fail('quality.gsdM', 'an array of 1 to 64 GSDs in metres');
  const gsdM = q.gsdM.map((g, i) => posNum(g, `quality.gsdM[${i}]`, 100));
  for (let i = 1; i < gsdM.length; i++) if (!(gsdM[i] > gsdM[i - 1])) fail('quality.gsdM', 'strictly increasing GSDs');
  const curve = (x: unknown, f: string): number[] => {
    if (!Array.isArray(x) || x.length !== gsdM.length) fail(f, `an array of ${gsdM.length} numbers, one per quality.gsdM entry`);
    return x.map((r, i) => num(r, `${f}[${i}]`, 0, 1, 'a number from 0 to 1'));
  };
  const out: QualityCurves = { gsdM };
  if (q.recall !== undefined) out.recall = perClass(q.recall, 'quality.recall', classes, curve);
  if (q.precision !== undefined) out.precision = perClass(q.precision, 'quality.precision', classes, curve);
  if (q.ap50 !== undefined) out.ap50 = perClass(q.ap50, 'quality.ap50', classes, (x, f) => num(x, f, 0, 1, 'a number from 0 to 1'));
  if (q.evalSet !== undefined) {
    if (typeof q.evalSet !== 'string' || q.evalSet.length > 4096) fail('quality.evalSet', 'a string of at most 4096 characters');
    out.evalSet = q.evalSet;
  }
  return out;
}

/** Window alignment for a model: its tileAlignPx, else the heatmap's output stride, else 1. */
export function tileAlignPxOf(sc: ModelSidecar): number {
  return sc.tileAlignPx ?? (sc.output.layout === 'center-heatmap' ? sc.output.stride : 1);
}

/** Validate an already-parsed sidecar value. Throws SeamtallyError('sidecar-invalid') naming the first bad field. */
export function validateSidecar(value: unknown): ModelSidecar {
  const s = obj(value, '(top level)');
  if (s.format !== SIDECAR_FORMAT) fail('format', `the string "${SIDECAR_FORMAT}"`);
  if (!Array.isArray(s.classes) || s.classes.length < 1 || s.classes.length > 255) fail('classes', 'an array of 1 to 255 class names');
  const classes = s.classes.map((c, i) => str(c, `classes[${i}]`));
  if (new Set(classes).size !== classes.length) fail('classes', 'class names without duplicates');
  const inputGsdM = posNum(s.inputGsdM, 'inputGsdM', 10);
  const tilePx = int(s.tilePx, 'tilePx', 32, 4096);
  const inp = obj(s.input, 'input');
  if (inp.bands !== 'rgb') fail('input.bands', '"rgb"');
  const out: ModelSidecar = {
    format: SIDECAR_FORMAT, classes, inputGsdM, tilePx,
    input: {
      name: str(inp.name, 'input.name'), bands: 'rgb', scale: posNum(inp.scale, 'input.scale'),
      mean: triple(inp.mean, 'input.mean', false), std: triple(inp.std, 'input.std', true),
    },
    output: parseOutput(s.output, tilePx),
  };
  if (s.tileAlignPx !== undefined) {
    out.tileAlignPx = int(s.tileAlignPx, 'tileAlignPx', 1, 512);
    if (tilePx % out.tileAlignPx !== 0) fail('tileAlignPx', `a divisor of tilePx (${tilePx})`);
  }
  if (s.maxTilePx !== undefined) {
    out.maxTilePx = int(s.maxTilePx, 'maxTilePx', tilePx, 4096);
    const a = out.tileAlignPx ?? 1;
    if (out.maxTilePx % a !== 0) fail('maxTilePx', `a multiple of tileAlignPx (${a})`);
  }
  if (s.contextPx !== undefined) out.contextPx = int(s.contextPx, 'contextPx', 0, 512);
  const name = optStr(s.name, 'name'); if (name !== undefined) out.name = name;
  const version = optStr(s.version, 'version'); if (version !== undefined) out.version = version;
  const card = optStr(s.card, 'card'); if (card !== undefined) out.card = card;
  const summary = optStr(s.summary, 'summary'); if (summary !== undefined) out.summary = summary;
  if (s.minScore !== undefined) {
    out.minScore = num(s.minScore, 'minScore', 0, 1, 'a number between 0 and 1');
    if (out.minScore <= 0 || out.minScore >= 1) fail('minScore', 'a number between 0 and 1 (exclusive)');
  }
  if (s.objects !== undefined) {
    out.objects = perClass(s.objects, 'objects', classes, (x, f) => {
      const o = obj(x, f);
      const criticalDimM = posNum(o.criticalDimM, `${f}.criticalDimM`, 10000);
      const maxExtentM = posNum(o.maxExtentM, `${f}.maxExtentM`, 10000);
      if (criticalDimM > maxExtentM) fail(`${f}.criticalDimM`, `a dimension no larger than maxExtentM (${maxExtentM})`);
      return { criticalDimM, maxExtentM };
    });
  }
  if (s.quality !== undefined) out.quality = parseQuality(s.quality, classes);
  if (s.lowSun !== undefined) {
    const l = obj(s.lowSun, 'lowSun');
    out.lowSun = {
      belowDeg: posNum(l.belowDeg, 'lowSun.belowDeg', 90),
      countBiasPct: perClass(l.countBiasPct, 'lowSun.countBiasPct', classes, (x, f) => num(x, f, -100, 1000, 'a percentage from -100 to 1000')),
    };
    if (l.source !== undefined) {
      if (typeof l.source !== 'string' || l.source.length > 4096) fail('lowSun.source', 'a string of at most 4096 characters');
      out.lowSun.source = l.source;
    }
  }
  return out;
}

/** Parse sidecar text (untrusted): size limit, JSON syntax, then `validateSidecar`. */
export function parseSidecar(text: string): ModelSidecar {
  if (typeof text !== 'string') fail('(file)', 'JSON text');
  if (text.length > MAX_SIDECAR_BYTES) {
    throw new SeamtallyError('sidecar-invalid',
      `The model sidecar is ${text.length} characters long, but at most ${MAX_SIDECAR_BYTES} are accepted: check that you picked the .model.json file.`);
  }
  let value: unknown;
  try { value = JSON.parse(text); } catch (e) {
    throw new SeamtallyError('sidecar-invalid', `The model sidecar is not valid JSON (${(e as Error).message}): fix the .model.json file.`);
  }
  return validateSidecar(value);
}

/**
 * The outputs a run needs: all the sidecar names but the features output, unless the run keeps features (copying
 * it out of onnxruntime costs ~70 % more inference time per tile on the CLI: measured on the demo's 3 000² scene).
 */
export function fetchedOutputNames(sc: ModelSidecar, withFeatures: boolean): string[] {
  const o = sc.output;
  return sidecarOutputNames(sc).filter((n) => withFeatures || o.layout !== 'center-heatmap' || n !== o.features);
}

/** Every ONNX output name the sidecar refers to. */
export function sidecarOutputNames(sc: ModelSidecar): string[] {
  const o = sc.output;
  if (o.layout === 'boxes') return [o.boxes];
  return [o.heatmap, o.size, o.offset, o.angle, o.features].filter((n): n is string => n !== null);
}

/** A dimension as ONNX metadata reports it: a number, or a symbolic name / null when dynamic. */
export type ModelDim = number | string | null;

export interface ModelIO {
  inputNames: readonly string[];
  outputNames: readonly string[];
  inputDims?: Record<string, readonly ModelDim[] | undefined>;
  outputDims?: Record<string, readonly ModelDim[] | undefined>;
}

function mismatch(field: string, what: string): never {
  throw new SeamtallyError('model-mismatch', `The model does not match its sidecar at "${field}" (${what}): use the sidecar written for this .onnx file.`, { field });
}

/** Compare dims with expectations; `null` in `want` means any value; dynamic dims in `got` are accepted. */
function checkDims(field: string, got: readonly ModelDim[] | undefined, want: ReadonlyArray<number | null>): void {
  if (!got || got.length === 0) return; // unknown shape (onnxruntime reports [] when the model declares none)
  if (got.length !== want.length) mismatch(field, `the tensor has ${got.length} dimensions, expected ${want.length} [${want.map((w) => w ?? '?').join(', ')}]`);
  want.forEach((w, i) => {
    const g = got[i];
    if (w !== null && typeof g === 'number' && g >= 0 && g !== w) mismatch(field, `dimension ${i} is ${g}, expected ${w}`);
  });
}

/** Dims by name from onnxruntime's `session.inputMetadata` / `outputMetadata` (non-tensor values are skipped). */
export function dimsFromMetadata(meta: ReadonlyArray<{ name: string; isTensor: boolean; shape?: readonly ModelDim[] }>): Record<string, readonly ModelDim[]> {
  const out: Record<string, readonly ModelDim[]> = {};
  for (const m of meta) if (m.isTensor && m.shape) out[m.name] = m.shape;
  return out;
}

/** Check the ONNX session's names and (where known) shapes against the sidecar. Throws 'model-mismatch'. */
export function checkModelIO(sc: ModelSidecar, io: ModelIO): void {
  if (!io.inputNames.includes(sc.input.name)) mismatch('input.name', `the model has no input "${sc.input.name}" (it has ${io.inputNames.join(', ') || 'none'})`);
  const inDims = io.inputDims?.[sc.input.name];
  checkDims('input.name', inDims, [null, 3, sc.tilePx, sc.tilePx]);
  if (sc.maxTilePx !== undefined && sc.maxTilePx > sc.tilePx && inDims && inDims.length === 4
    && [inDims[2], inDims[3]].some((d) => typeof d === 'number' && d >= 0)) {
    mismatch('maxTilePx', `the model's input is fixed at ${inDims[2]} × ${inDims[3]}, so it cannot take tiles up to ${sc.maxTilePx} px; drop maxTilePx`);
  }
  const o = sc.output;
  const has = (field: string, name: string) => {
    if (!io.outputNames.includes(name)) mismatch(field, `the model has no output "${name}" (it has ${io.outputNames.join(', ') || 'none'})`);
    return io.outputDims?.[name];
  };
  if (o.layout === 'boxes') {
    checkDims('output.boxes', has('output.boxes', o.boxes), [null, null, 6]);
    return;
  }
  const cells = sc.tilePx / o.stride;
  checkDims('output.heatmap', has('output.heatmap', o.heatmap), [null, sc.classes.length, cells, cells]);
  checkDims('output.size', has('output.size', o.size), [null, 2, cells, cells]);
  if (o.offset !== null) checkDims('output.offset', has('output.offset', o.offset), [null, 2, cells, cells]);
  if (o.angle !== null) checkDims('output.angle', has('output.angle', o.angle), [null, 1, cells, cells]);
  if (o.features !== null) checkDims('output.features', has('output.features', o.features), [null, null, cells, cells]);
}
