// Fast path of filling a tile's tensor when the scene is at the model GSD: copy, mask nodata and normalise in one pass
// (the same values resampleBand + normaliseInPlace give, without the intermediate passes over the tile).
import type { Stretch, InputNormalisation } from './radiometry.ts';
import { isNodata, type ResamplePlan } from './resample.ts';
import type { SampleArray } from './scene-source.ts';

/**
 * True when `plan` copies a contiguous source block one to one (same GSD, every output pixel inside the raster), so
 * `fillUnit` applies.
 */
export function isContiguousUnit(plan: ResamplePlan): boolean {
  const r = unitInsideRect(plan);
  return r !== null && r.x0 === 0 && r.y0 === 0 && r.w === plan.x.start.length && r.h === plan.y.start.length;
}

/** Output pixels [x0, x0 + w) × [y0, y0 + h) of a plan: the part of a window that lies inside the raster. */
export interface OutputRect { x0: number; y0: number; w: number; h: number }

/**
 * For a same-GSD plan whose window may reach past the raster (a scene-edge tile): the output rectangle whose pixels
 * are inside the raster, when those copy a contiguous source block one to one (then `fillUnit` fills it and every
 * other pixel is invalid). Null for other plans, or when no output pixel is inside.
 */
export function unitInsideRect(plan: ResamplePlan): OutputRect | null {
  if (!plan.unit) return null;
  const runs: Array<[number, number]> = [];
  for (const a of [plan.x, plan.y]) {
    const n = a.start.length;
    let k0 = 0;
    while (k0 < n && a.inside[k0] !== 1) k0++;
    let k1 = k0;
    while (k1 < n && a.inside[k1] === 1 && a.start[k1] === a.start[k0] + (k1 - k0)) k1++;
    for (let k = k1; k < n; k++) if (a.inside[k] === 1) return null; // inside pixels not in one run
    if (k1 === k0) return null;
    runs.push([k0, k1]);
  }
  return { x0: runs[0][0], y0: runs[1][0], w: runs[0][1] - runs[0][0], h: runs[1][1] - runs[1][0] };
}

/**
 * Fill a dense NCHW `tensor` of widthPx × the plan's output height (a sized window may be rectangular) from the window
 * bands `src[0..2]` (row-major, `srcW` wide) through a contiguous unit plan (`isContiguousUnit`), or, with `rect`
 * (`unitInsideRect`), a unit plan whose window reaches past the raster: `rect` is filled from the source, the rest
 * marked nodata. `valid` gets the first channel's validity (as the general path). Values equal those of
 * resampleBand (fill 0 for nodata) followed by normaliseInPlace. Returns whether any pixel is valid.
 */
export function fillUnit(
  src: readonly SampleArray[], srcW: number, plan: ResamplePlan, widthPx: number, nodata: number | null,
  stretch: Stretch, norm: InputNormalisation, tensor: Float32Array, valid: Uint8Array, rect?: OutputRect,
): boolean {
  const T = widthPx, H0 = plan.y.start.length, plane = T * H0;
  const r = rect ?? { x0: 0, y0: 0, w: T, h: H0 };
  // only a part (a scene-edge tile, `unitInsideRect`): every pixel outside it is nodata, as resampleBand +
  // normaliseInPlace make it
  if (r.x0 > 0 || r.y0 > 0 || r.w < T || r.h < H0) fillInvalid(T, H0, r, norm, tensor, valid);
  const x0 = plan.x.start[r.x0], y0 = plan.y.start[r.y0];
  if (src[0] instanceof Uint8Array || src[0] instanceof Uint16Array) {
    if (src.every((b) => b.constructor === src[0].constructor)) {
      return fillUnitLut(src as Array<Uint8Array | Uint16Array>, srcW, x0, y0, T, plane, r, nodata, stretch, norm, tensor, valid);
    }
  }
  const H = r.h;
  const identity = stretch.kind === 'identity';
  let any = false;
  for (let c = 0; c < 3; c++) {
    const s = src[c];
    const lo = stretch.low[c], k = 255 / (stretch.high[c] - lo);
    const a = norm.scale / norm.std[c], b = -norm.mean[c] / norm.std[c];
    const off = c * plane;
    for (let oy = 0; oy < H; oy++) {
      const vo = (r.y0 + oy) * T + r.x0;
      if (fillRowGeneral(s, (y0 + oy) * srcW + x0, c === 0, tensor, off + vo, valid, vo, r.w, nodata, identity, lo, k, a, b)) any = true;
    }
  }
  return any;
}

/**
 * One row of one channel of the general loop (any sample type): `first` (channel 0) also sets `valid`; returns whether
 * a pixel of the row is valid (channel 0 only). A row per call, see `lutRowFirst`.
 */
function fillRowGeneral(
  s: SampleArray, row: number, first: boolean, tensor: Float32Array, o: number, valid: Uint8Array, vo: number, w: number,
  nodata: number | null, identity: boolean, lo: number, k: number, a: number, b: number,
): boolean {
  let any = false;
  for (let ox = 0; ox < w; ox++) {
    let v = s[row + ox];
    const ok = !isNodata(v, nodata);
    if (first) { valid[vo + ox] = ok ? 1 : 0; if (ok) any = true; }
    let v8: number;
    if (!valid[vo + ox]) v8 = 0;
    else {
      v = ok ? Math.fround(v) : 0;
      if (identity) v8 = v;
      else { v8 = (v - lo) * k; v8 = v8 < 0 ? 0 : v8 > 255 ? 255 : v8; }
    }
    tensor[o + ox] = v8 * a + b;
  }
  return any;
}

/**
 * Per-channel tables raw value → tensor value for 8- and 16-bit samples (256 or 65 536 entries), computed with the
 * very expressions of the general loop, so a table look-up gives the same float32 value. Kept per stretch and
 * normalisation (they are fixed for a scene), so each tile costs one look-up per sample.
 */
const lutCache = new WeakMap<Stretch, { norm: InputNormalisation; size: number; luts: Float32Array[] }>();

function channelLuts(stretch: Stretch, norm: InputNormalisation, size: number): Float32Array[] {
  const hit = lutCache.get(stretch);
  if (hit && hit.norm === norm && hit.size === size) return hit.luts;
  const identity = stretch.kind === 'identity';
  const luts: Float32Array[] = [];
  for (let c = 0; c < 3; c++) {
    const lo = stretch.low[c], k = 255 / (stretch.high[c] - lo);
    const a = norm.scale / norm.std[c], b = -norm.mean[c] / norm.std[c];
    const lut = new Float32Array(size);
    for (let v = 0; v < size; v++) {
      let v8: number;
      if (identity) v8 = v;
      else { v8 = (Math.fround(v) - lo) * k; v8 = v8 < 0 ? 0 : v8 > 255 ? 255 : v8; }
      lut[v] = v8 * a + b;
    }
    luts.push(lut);
  }
  lutCache.set(stretch, { norm, size, luts });
  return luts;
}

/** The tensor value of an invalid pixel in channel c: 0 · a + b, as the general loop gives it (−0 stays −0). */
function nodataValue(norm: InputNormalisation, c: number): number {
  return 0 * (norm.scale / norm.std[c]) + -norm.mean[c] / norm.std[c];
}

/** Every pixel of the T × H tensor outside `r`: invalid, channel value `nodataValue`. */
function fillInvalid(T: number, H: number, r: OutputRect, norm: InputNormalisation, tensor: Float32Array, valid: Uint8Array): void {
  const plane = T * H;
  for (let c = 0; c < 3; c++) {
    const fill = nodataValue(norm, c);
    const off = c * plane;
    for (let y = 0; y < H; y++) {
      const o = off + y * T;
      if (y < r.y0 || y >= r.y0 + r.h) { tensor.fill(fill, o, o + T); continue; }
      tensor.fill(fill, o, o + r.x0);
      tensor.fill(fill, o + r.x0 + r.w, o + T);
    }
  }
  for (let y = 0; y < H; y++) {
    const o = y * T;
    if (y < r.y0 || y >= r.y0 + r.h) { valid.fill(0, o, o + T); continue; }
    valid.fill(0, o, o + r.x0);
    valid.fill(0, o + r.x0 + r.w, o + T);
  }
}

function fillUnitLut(
  src: ReadonlyArray<Uint8Array | Uint16Array>, srcW: number, x0: number, y0: number, T: number, plane: number, r: OutputRect,
  nodata: number | null, stretch: Stretch, norm: InputNormalisation, tensor: Float32Array, valid: Uint8Array,
): boolean {
  const H = r.h, W = r.w;
  const luts = channelLuts(stretch, norm, src[0] instanceof Uint8Array ? 256 : 65536);
  // an integer band never holds a fractional or NaN nodata value: then every pixel is valid
  const nd = nodata !== null && Number.isInteger(nodata) ? nodata : -1;
  const fills = [0, 1, 2].map((c) => nodataValue(norm, c));
  const s0 = src[0], s1 = src[1], s2 = src[2], l0 = luts[0], l1 = luts[1], l2 = luts[2];
  let validCount = 0;
  // one pass over the three bands, a row per call (see `lutRowFirst`); a row without a nodata pixel (the common
  // case) takes the branch-free loop
  for (let oy = 0; oy < H; oy++) {
    const row = (y0 + oy) * srcW + x0;
    const o = (r.y0 + oy) * T + r.x0;
    const rowValid = lutRowFirst(s0, l0, row, tensor, valid, o, W, nd);
    validCount += rowValid;
    if (rowValid === W) lutRowRest(s1, s2, l1, l2, row, tensor, o + plane, o + 2 * plane, W);
    else lutRowRestMasked(s1, s2, l1, l2, row, tensor, valid, o, plane, W, fills);
  }
  return validCount > 0;
}

// The row loops of fillUnitLut, one row per call. A tile's loops run a few million times but the function holding them
// is called once per tile, so V8 would run them as on-stack-replaced inner loops, and Chromium's V8 leaves such code
// at every exit of the inner loop (each row: "exit from OSR'd inner loop" in --trace-deopt) and runs the rest of the
// row unoptimised; a function called once per row is optimised as a whole after a few hundred rows and stays so.

/** First band of one row: table values and validity; returns the row's valid pixels. */
function lutRowFirst(s0: Uint8Array | Uint16Array, l0: Float32Array, row: number, tensor: Float32Array, valid: Uint8Array, o: number, W: number, nd: number): number {
  let rowValid = 0;
  for (let ox = 0; ox < W; ox++) {
    const v = s0[row + ox];
    const ok = v === nd ? 0 : 1;
    valid[o + ox] = ok;
    rowValid += ok;
    tensor[o + ox] = l0[v];
  }
  return rowValid;
}

/** Second and third bands of a row without nodata. */
function lutRowRest(s1: Uint8Array | Uint16Array, s2: Uint8Array | Uint16Array, l1: Float32Array, l2: Float32Array, row: number, tensor: Float32Array, o1: number, o2: number, W: number): void {
  for (let ox = 0; ox < W; ox++) {
    tensor[o1 + ox] = l1[s1[row + ox]];
    tensor[o2 + ox] = l2[s2[row + ox]];
  }
}

/** Second and third bands of a row with nodata pixels (those get the nodata value in all three channels). */
function lutRowRestMasked(
  s1: Uint8Array | Uint16Array, s2: Uint8Array | Uint16Array, l1: Float32Array, l2: Float32Array, row: number, tensor: Float32Array,
  valid: Uint8Array, o: number, plane: number, W: number, fills: readonly number[],
): void {
  const o1 = o + plane, o2 = o + 2 * plane;
  for (let ox = 0; ox < W; ox++) {
    if (valid[o + ox]) {
      tensor[o1 + ox] = l1[s1[row + ox]];
      tensor[o2 + ox] = l2[s2[row + ox]];
    } else {
      tensor[o + ox] = fills[0]; tensor[o1 + ox] = fills[1]; tensor[o2 + ox] = fills[2];
    }
  }
}
