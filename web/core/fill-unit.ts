// Fast path of filling a tile's tensor when the scene is at the model GSD: copy, mask nodata and normalise in one pass
// (the same values resampleBand + normaliseInPlace give, without the intermediate passes over the tile).
import type { Stretch, InputNormalisation } from './radiometry.ts';
import type { ResamplePlan } from './resample.ts';
import type { SampleArray } from './scene-source.ts';

/**
 * True when `plan` copies a contiguous source block one to one (same GSD, every output pixel inside the raster), so
 * `fillUnit` applies.
 */
export function isContiguousUnit(plan: ResamplePlan): boolean {
  if (!plan.unit) return false;
  for (const a of [plan.x, plan.y]) {
    for (let k = 0; k < a.start.length; k++) if (a.inside[k] !== 1 || a.start[k] !== a.start[0] + k) return false;
  }
  return true;
}

/**
 * Fill a dense NCHW `tensor` of widthPx × the plan's output height (a sized window may be rectangular) from the window
 * bands `src[0..2]` (row-major, `srcW` wide) through a contiguous unit plan; `valid` gets the first channel's validity (as the general path). Values equal those of
 * resampleBand (fill 0 for nodata) followed by normaliseInPlace. Returns whether any pixel is valid.
 */
export function fillUnit(
  src: readonly SampleArray[], srcW: number, plan: ResamplePlan, widthPx: number, nodata: number | null,
  stretch: Stretch, norm: InputNormalisation, tensor: Float32Array, valid: Uint8Array,
): boolean {
  const T = widthPx, H = plan.y.start.length, plane = T * H;
  const x0 = plan.x.start[0], y0 = plan.y.start[0];
  if (src[0] instanceof Uint8Array || src[0] instanceof Uint16Array) {
    if (src.every((b) => b.constructor === src[0].constructor)) {
      return fillUnitLut(src as Array<Uint8Array | Uint16Array>, srcW, x0, y0, T, H, nodata, stretch, norm, tensor, valid);
    }
  }
  const hasNd = nodata !== null, nanNd = hasNd && Number.isNaN(nodata);
  const identity = stretch.kind === 'identity';
  let any = false;
  for (let c = 0; c < 3; c++) {
    const s = src[c];
    const lo = stretch.low[c], k = 255 / (stretch.high[c] - lo);
    const a = norm.scale / norm.std[c], b = -norm.mean[c] / norm.std[c];
    const off = c * plane;
    for (let oy = 0; oy < H; oy++) {
      const row = (y0 + oy) * srcW + x0;
      const o = off + oy * T;
      for (let ox = 0; ox < T; ox++) {
        let v = s[row + ox];
        const ok = !(hasNd && (nanNd ? v !== v : v === nodata));
        if (c === 0) { valid[oy * T + ox] = ok ? 1 : 0; if (ok) any = true; }
        let v8: number;
        if (!valid[oy * T + ox]) v8 = 0;
        else {
          v = ok ? Math.fround(v) : 0;
          if (identity) v8 = v;
          else { v8 = (v - lo) * k; v8 = v8 < 0 ? 0 : v8 > 255 ? 255 : v8; }
        }
        tensor[o + ox] = v8 * a + b;
      }
    }
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

function fillUnitLut(
  src: ReadonlyArray<Uint8Array | Uint16Array>, srcW: number, x0: number, y0: number, T: number, H: number, nodata: number | null,
  stretch: Stretch, norm: InputNormalisation, tensor: Float32Array, valid: Uint8Array,
): boolean {
  const plane = T * H;
  const luts = channelLuts(stretch, norm, src[0] instanceof Uint8Array ? 256 : 65536);
  // an integer band never holds a fractional or NaN nodata value: then every pixel is valid
  const nd = nodata !== null && Number.isInteger(nodata) ? nodata : -1;
  // an invalid pixel: 0 · a + b, as in the general loop
  const fills = [0, 1, 2].map((c) => 0 * (norm.scale / norm.std[c]) + -norm.mean[c] / norm.std[c]);
  const s0 = src[0], s1 = src[1], s2 = src[2], l0 = luts[0], l1 = luts[1], l2 = luts[2];
  let validCount = 0;
  // one pass over the three bands; a row without a nodata pixel (the common case) takes the branch-free loop
  for (let oy = 0; oy < H; oy++) {
    const row = (y0 + oy) * srcW + x0;
    const o = oy * T, o1 = plane + o, o2 = 2 * plane + o;
    let rowValid = 0;
    for (let ox = 0; ox < T; ox++) {
      const v = s0[row + ox];
      const ok = v === nd ? 0 : 1;
      valid[o + ox] = ok;
      rowValid += ok;
      tensor[o + ox] = l0[v];
    }
    validCount += rowValid;
    if (rowValid === T) {
      for (let ox = 0; ox < T; ox++) {
        tensor[o1 + ox] = l1[s1[row + ox]];
        tensor[o2 + ox] = l2[s2[row + ox]];
      }
    } else {
      for (let ox = 0; ox < T; ox++) {
        if (valid[o + ox]) {
          tensor[o1 + ox] = l1[s1[row + ox]];
          tensor[o2 + ox] = l2[s2[row + ox]];
        } else {
          tensor[o + ox] = fills[0]; tensor[o1 + ox] = fills[1]; tensor[o2 + ox] = fills[2];
        }
      }
    }
  }
  return validCount > 0;
}
