// Resampling a scene window onto the model-GSD pixel grid: area-average when downsampling, bilinear when upsampling.
//
// Alignment (exact): the model grid shares its top-left CORNER with the scene grid. With f = scene pixels per model
// pixel on an axis (f = modelGsdM / sceneGsdM), model pixel i covers scene pixel space [i*f, (i+1)*f) and its centre
// is at scene pixel coordinate (i + 0.5) * f (coordinates measured from the scene's top-left corner, PixelIsArea).
// - f > 1 (downsampling): each model pixel is the area-weighted mean of the scene pixels it overlaps (partial pixels
//   weighted by their overlap fraction), nodata pixels left out.
// - f <= 1 (upsampling or same GSD): bilinear between the 4 scene pixel centres around (i + 0.5) * f - 0.5 in
//   pixel-centre index space, indices clamped to the raster (edge replicate), nodata neighbours left out.
//   With f = 1 this is an exact copy.
// A model pixel whose centre lies outside the raster, or whose source pixels are all nodata, is invalid.
import type { PixelBox } from './types.ts';
import type { SampleArray } from './scene-source.ts';

/** Scene pixels per model pixel on each axis (> 0). */
export interface GridScale {
  scenePxPerModelPxX: number;
  scenePxPerModelPxY: number;
}

/** Per-axis resampling weights: output index k reads source indices start[k] .. start[k]+count[k]-1. */
interface AxisWeights {
  start: Int32Array;
  count: Int32Array;
  stride: number;
  w: Float32Array;
  /** 0 where the output index's centre is outside the raster. */
  inside: Uint8Array;
}

/** Scene-pixel window (integers, clipped to the raster) needed to resample `modelBox`. Empty box if none. */
export function sourceWindowFor(modelBox: PixelBox, scale: GridScale, sceneWidthPx: number, sceneHeightPx: number): PixelBox {
  const [x0, x1] = axisSourceRange(modelBox.minXPx, modelBox.maxXPx, scale.scenePxPerModelPxX, sceneWidthPx);
  const [y0, y1] = axisSourceRange(modelBox.minYPx, modelBox.maxYPx, scale.scenePxPerModelPxY, sceneHeightPx);
  return { minXPx: x0, minYPx: y0, maxXPx: Math.max(x0, x1), maxYPx: Math.max(y0, y1) };
}

function axisSourceRange(o0: number, o1: number, f: number, len: number): [number, number] {
  let lo: number;
  let hi: number;
  if (f > 1) {
    lo = Math.floor(o0 * f);
    hi = Math.ceil(o1 * f);
  } else {
    lo = Math.floor((o0 + 0.5) * f - 0.5);
    hi = Math.floor((o1 - 0.5) * f - 0.5) + 2;
  }
  return [Math.max(0, Math.min(len, lo)), Math.max(0, Math.min(len, hi))];
}

/** Size of the model grid covering a scene: ceil(scene size / f) on each axis. */
export function modelGridSize(sceneWidthPx: number, sceneHeightPx: number, scale: GridScale): { widthPx: number; heightPx: number } {
  return {
    widthPx: Math.ceil(sceneWidthPx / scale.scenePxPerModelPxX - 1e-9),
    heightPx: Math.ceil(sceneHeightPx / scale.scenePxPerModelPxY - 1e-9),
  };
}

function axisWeights(outStart: number, outCount: number, f: number, len: number, srcStart: number): AxisWeights {
  const stride = f > 1 ? Math.ceil(f) + 1 : 2;
  const start = new Int32Array(outCount);
  const count = new Int32Array(outCount);
  const w = new Float32Array(outCount * stride);
  const inside = new Uint8Array(outCount);
  for (let k = 0; k < outCount; k++) {
    const i = outStart + k;
    const centre = (i + 0.5) * f;
    inside[k] = centre >= 0 && centre < len ? 1 : 0;
    if (f > 1) {
      const a = i * f;
      const b = (i + 1) * f;
      const s0 = Math.max(0, Math.floor(a));
      const s1 = Math.min(len, Math.ceil(b));
      start[k] = s0 - srcStart;
      count[k] = Math.max(0, s1 - s0);
      for (let s = s0; s < s1; s++) {
        w[k * stride + (s - s0)] = Math.min(b, s + 1) - Math.max(a, s);
      }
    } else {
      const u = Math.min(len - 1, Math.max(0, centre - 0.5));
      const i0 = Math.floor(u);
      const t = u - i0;
      start[k] = i0 - srcStart;
      if (t > 0 && i0 + 1 < len) {
        count[k] = 2;
        w[k * stride] = 1 - t;
        w[k * stride + 1] = t;
      } else {
        count[k] = 1;
        w[k * stride] = 1;
      }
    }
  }
  return { start, count, stride, w, inside };
}

export interface ResampleOptions {
  /** Source nodata value (NaN allowed); null = every pixel valid. Default null. */
  nodata?: number | null;
  /** Output validity mask (1 valid, 0 invalid) of outBox size; written when given. */
  validOut?: Uint8Array;
  /** Value written to invalid output pixels. Default 0. */
  fillValue?: number;
}

/** Resampling plan for one (output box, source window) pair, reusable across the bands of one tile. */
export interface ResamplePlan {
  outBox: PixelBox;
  srcBox: PixelBox;
  x: AxisWeights;
  y: AxisWeights;
  /** True when every output pixel copies exactly one source pixel (same GSD): the fast path. */
  unit: boolean;
}

/** Build the weights for resampling `srcBox` (scene px, as read) onto `outBox` (model px). */
export function planResample(outBox: PixelBox, srcBox: PixelBox, scale: GridScale, sceneWidthPx: number, sceneHeightPx: number): ResamplePlan {
  const outW = outBox.maxXPx - outBox.minXPx;
  const outH = outBox.maxYPx - outBox.minYPx;
  const x = axisWeights(outBox.minXPx, outW, scale.scenePxPerModelPxX, sceneWidthPx, srcBox.minXPx);
  const y = axisWeights(outBox.minYPx, outH, scale.scenePxPerModelPxY, sceneHeightPx, srcBox.minYPx);
  const srcW = srcBox.maxXPx - srcBox.minXPx, srcH = srcBox.maxYPx - srcBox.minYPx;
  for (const [a, len] of [[x, srcW], [y, srcH]] as const) {
    for (let k = 0; k < a.start.length; k++) {
      if (a.count[k] > 0 && (a.start[k] < 0 || a.start[k] + a.count[k] > len)) {
        throw new Error(`planResample: source window ${JSON.stringify(srcBox)} does not hold the pixels output ${JSON.stringify(outBox)} needs`);
      }
    }
  }
  const unitAxis = (a: AxisWeights) => a.count.every((c) => c === 1) && a.w.every((v, i) => i % a.stride !== 0 || v === 1);
  return { outBox, srcBox, x, y, unit: unitAxis(x) && unitAxis(y) };
}

/**
 * Resample one band. `src` holds the pixels of `plan.srcBox` (row-major, its width); `dst` receives
 * outBox-sized row-major floats (e.g. one channel plane of an NCHW tensor).
 */
export function resampleBand(src: SampleArray, plan: ResamplePlan, dst: Float32Array, opts: ResampleOptions = {}): void {
  const nodata = opts.nodata ?? null;
  const fill = opts.fillValue ?? 0;
  const valid = opts.validOut;
  const srcW = plan.srcBox.maxXPx - plan.srcBox.minXPx;
  const { x, y } = plan;
  const outW = x.start.length;
  const outH = y.start.length;
  // a row per call: V8 optimises a function called per row as a whole, where a loop nest called once per tile runs as
  // an on-stack-replaced inner loop that Chromium's V8 leaves at the end of every row (see fill-unit.ts `lutRowFirst`)
  for (let oy = 0; oy < outH; oy++) {
    if (plan.unit) resampleRowUnit(src, srcW, x, y.start[oy], y.inside[oy] === 1, dst, valid, oy * outW, nodata, fill);
    else resampleRow(src, srcW, x, y, oy, dst, valid, oy * outW, nodata, fill);
  }
}

/** True when v is the nodata value `nd` (NaN: any NaN; null: never). */
export function isNodata(v: number, nd: number | null): boolean {
  return nd !== null && (nd !== nd ? v !== v : v === nd);
}

/** One output row of a unit plan: source row `ys`, columns through `x`. */
function resampleRowUnit(src: SampleArray, srcW: number, x: AxisWeights, ys: number, yIn: boolean, dst: Float32Array, valid: Uint8Array | undefined, o0: number, nd: number | null, fill: number): void {
  const row = ys * srcW;
  const outW = x.start.length;
  for (let ox = 0; ox < outW; ox++) {
    const v = src[row + x.start[ox]];
    const ok = yIn && x.inside[ox] === 1 && !isNodata(v, nd);
    dst[o0 + ox] = ok ? v : fill;
    if (valid) valid[o0 + ox] = ok ? 1 : 0;
  }
}

/** One output row `oy` of a weighted plan: each output pixel the weighted mean of its valid source pixels. */
function resampleRow(src: SampleArray, srcW: number, x: AxisWeights, y: AxisWeights, oy: number, dst: Float32Array, valid: Uint8Array | undefined, o0: number, nd: number | null, fill: number): void {
  const ys = y.start[oy];
  const yn = y.count[oy];
  const yIn = y.inside[oy];
  const outW = x.start.length;
  for (let ox = 0; ox < outW; ox++) {
    const o = o0 + ox;
    if (!yIn || !x.inside[ox]) {
      dst[o] = fill;
      if (valid) valid[o] = 0;
      continue;
    }
    const xs = x.start[ox];
    const xn = x.count[ox];
    let sum = 0;
    let wsum = 0;
    for (let j = 0; j < yn; j++) {
      const wy = y.w[oy * y.stride + j];
      const row = (ys + j) * srcW + xs;
      for (let i = 0; i < xn; i++) {
        const v = src[row + i];
        if (isNodata(v, nd)) continue;
        const wgt = wy * x.w[ox * x.stride + i];
        sum += wgt * v;
        wsum += wgt;
      }
    }
    if (wsum > 0) {
      dst[o] = sum / wsum;
      if (valid) valid[o] = 1;
    } else {
      dst[o] = fill;
      if (valid) valid[o] = 0;
    }
  }
}
