// Radiometry: band roles (RGB from RGB / RGB+NIR / 8-band / panchromatic), per-scene percentile stretch from an
// overview (one stretch per scene, never per tile, so all tiles look alike), and mapping into the model's input range.
import { SeamtallyError } from './errors.ts';
import { pickOverviewLevel, type RasterWindow, type SampleArray, type SceneSource } from './scene-source.ts';
import { noValidPixelsError } from './valid-mask.ts';

/** Which scene bands feed the model's R, G, B channels (0-based). Panchromatic = one band replicated. */
export interface BandSelection {
  indices: readonly [number, number, number];
  replicated: boolean;
  /** How the choice was made, for the run log ("explicit", "band names", "layout: 8-band", ...). */
  reason: string;
}

/** What band selection needs from a scene (SceneInfo satisfies it). */
export interface BandLayout {
  bandCount: number;
  bandNames: readonly string[];
  photometric: number | null;
}

const ROLE_PATTERNS: Record<'r' | 'g' | 'b', RegExp> = {
  r: /^(red|r|band_?red|redband)$/i,
  g: /^(green|g|band_?green|greenband)$/i,
  b: /^(blue|b|band_?blue|blueband)$/i,
};

/**
 * Pick the bands for an RGB model. `explicit` (0-based, 1 or 3 indices) wins; else band names from metadata
 * ("Red", "Green", "Blue", GDAL colour interpretation); else by layout: 1–2 bands = panchromatic (+alpha), 3 = RGB,
 * 4 = R,G,B,NIR (the common 4-band order of VHR products, common practice, no source), 8 = the WorldView-2/3
 * order Coastal, Blue, Green, Yellow, Red, RedEdge, NIR1, NIR2 (DigitalGlobe band list, from memory) → R=5th,
 * G=3rd, B=2nd. Any other count needs an explicit choice.
 */
export function selectBands(layout: BandLayout, explicit?: readonly number[]): BandSelection {
  const n = layout.bandCount;
  if (explicit && explicit.length > 0) {
    if (explicit.length !== 1 && explicit.length !== 3) {
      throw new SeamtallyError('bad-argument', `Give one band (panchromatic) or three bands (R,G,B); got ${explicit.length}.`);
    }
    for (const b of explicit) {
      if (!Number.isInteger(b) || b < 0 || b >= n) {
        throw new SeamtallyError('bad-argument', `Band ${b + 1} does not exist: this scene has ${n} band(s). Choose bands 1 to ${n}.`);
      }
    }
    const idx = (explicit.length === 1 ? [explicit[0], explicit[0], explicit[0]] : explicit) as [number, number, number];
    return { indices: idx, replicated: explicit.length === 1, reason: 'explicit' };
  }
  const byName = namedRgb(layout.bandNames);
  if (byName) return { indices: byName, replicated: false, reason: 'band names' };
  if (n === 1 || (n === 2 && layout.photometric !== 2)) return { indices: [0, 0, 0], replicated: true, reason: 'layout: panchromatic' };
  if (n === 3) return { indices: [0, 1, 2], replicated: false, reason: 'layout: RGB' };
  if (n === 4) return { indices: [0, 1, 2], replicated: false, reason: 'layout: RGB+NIR' };
  if (n === 8) return { indices: [4, 2, 1], replicated: false, reason: 'layout: 8-band' };
  throw new SeamtallyError(
    'unsupported-raster',
    `This scene has ${n} bands and no band names, so seamtally cannot tell which are red, green and blue. Choose the bands explicitly.`,
  );
}

function namedRgb(names: readonly string[]): [number, number, number] | null {
  const find = (re: RegExp) => names.findIndex((s) => re.test(s.trim()));
  const r = find(ROLE_PATTERNS.r);
  const g = find(ROLE_PATTERNS.g);
  const b = find(ROLE_PATTERNS.b);
  return r >= 0 && g >= 0 && b >= 0 ? [r, g, b] : null;
}

/** Linear stretch per model channel: value `low[c]` → 0, `high[c]` → 255 (the 8-bit domain models are trained on). */
export interface Stretch {
  low: [number, number, number];
  high: [number, number, number];
  /** 'identity' for 8-bit data (no stretch), 'percentile' otherwise. */
  kind: 'identity' | 'percentile';
}

export interface StretchOptions {
  /** Lower / upper percentiles (0–100). Defaults 1 and 99 (common practice, no source). */
  lowPct?: number;
  highPct?: number;
  /** Meaningful bits (e.g. 11 for 11-bit in uint16). 8 → identity stretch. Default: the window's bitsPerSample. */
  significantBits?: number;
  /** One low/high per channel (true) or shared by the three channels to keep colour balance (false, default). */
  perBand?: boolean;
}

/**
 * Per-scene stretch from an overview window (read once per scene, e.g. via pickOverviewLevel). Nodata pixels are
 * left out. 8-bit scenes get the identity (0 → 0, 255 → 255).
 */
export function computeStretch(overview: RasterWindow, bands: BandSelection, opts: StretchOptions = {}): Stretch {
  const bits = opts.significantBits ?? overview.bitsPerSample;
  if (bits <= 8 && overview.dtype === 'uint8') return { low: [0, 0, 0], high: [255, 255, 255], kind: 'identity' };
  const lowPct = opts.lowPct ?? 1;
  const highPct = opts.highPct ?? 99;
  if (!(lowPct >= 0 && lowPct < highPct && highPct <= 100)) {
    throw new Error(`stretch percentiles must satisfy 0 <= low < high <= 100, got ${lowPct}, ${highPct}`);
  }
  const chans = bands.indices.map((b) => overview.bands[b]);
  const nodata = overview.nodata;
  const lo: number[] = [];
  const hi: number[] = [];
  if (opts.perBand) {
    for (const a of chans) {
      const [l, h] = percentiles([a], nodata, lowPct, highPct);
      lo.push(l);
      hi.push(h);
    }
  } else {
    const [l, h] = percentiles(chans, nodata, lowPct, highPct);
    lo.push(l, l, l);
    hi.push(h, h, h);
  }
  for (let c = 0; c < 3; c++) if (!(hi[c] > lo[c])) hi[c] = lo[c] + 1;
  return { low: lo as [number, number, number], high: hi as [number, number, number], kind: 'percentile' };
}

/** Percentiles (nearest-rank on the sorted valid samples) over several arrays together. */
export function percentiles(arrays: readonly SampleArray[], nodata: number | null, lowPct: number, highPct: number): [number, number] {
  const uniq = Array.from(new Set(arrays));
  let n = 0;
  for (const a of uniq) n += a.length;
  const vals = new Float64Array(n);
  let k = 0;
  const nanNd = nodata !== null && Number.isNaN(nodata);
  for (const a of uniq) {
    for (let i = 0; i < a.length; i++) {
      const v = a[i];
      if (Number.isNaN(v) || (nodata !== null && !nanNd && v === nodata)) continue;
      vals[k++] = v;
    }
  }
  if (k === 0) throw noValidPixelsError(null, nodata);
  const s = vals.subarray(0, k).sort();
  const rank = (p: number) => s[Math.min(k - 1, Math.max(0, Math.ceil((p / 100) * k) - 1))];
  return [rank(lowPct), rank(highPct)];
}

/** The model's input normalisation from its sidecar: x = (v8 * scale - mean[c]) / std[c], v8 in 0..255. */
export interface InputNormalisation {
  scale: number;
  mean: readonly number[];
  std: readonly number[];
}

/**
 * In place on a 3-plane NCHW tensor of `planePx` pixels per plane holding resampled scene values: apply the stretch
 * (clamped to 0..255), then the model normalisation. Invalid pixels (valid[i] = 0) get the value of black (0 in the 8-bit domain).
 */
export function normaliseInPlace(tensor: Float32Array, planePx: number, stretch: Stretch, norm: InputNormalisation, valid?: Uint8Array): void {
  for (let c = 0; c < 3; c++) {
    const lo = stretch.low[c];
    const k = 255 / (stretch.high[c] - lo);
    const a = norm.scale / norm.std[c];
    const b = -norm.mean[c] / norm.std[c];
    const off = c * planePx;
    const identity = stretch.kind === 'identity';
    for (let i = 0; i < planePx; i++) {
      let v8: number;
      if (valid && !valid[i]) v8 = 0;
      else if (identity) v8 = tensor[off + i];
      else {
        v8 = (tensor[off + i] - lo) * k;
        v8 = v8 < 0 ? 0 : v8 > 255 ? 255 : v8;
      }
      tensor[off + i] = v8 * a + b;
    }
  }
}

/** Largest overview side used for the stretch: the coarsest level with at least this many pixels on its long side. */
const STRETCH_OVERVIEW_MIN_PX = 512;

/**
 * Read the stretch sample: the coarsest overview with ≥ 512 px on its long side, whole; without overviews, a 4 × 4
 * grid of 64 px windows spread over the full-resolution scene (never the whole raster). When none of those windows
 * holds a valid pixel (a scene that is mostly nodata), a 16 × 16 grid of windows is read before the scene is called
 * empty; beyond that the scene needs overviews (`gdaladdo`) for its stretch.
 */
export async function readStretchSample(source: SceneSource, signal?: AbortSignal): Promise<RasterWindow[]> {
  const info = source.info;
  const level = pickOverviewLevel(info, STRETCH_OVERVIEW_MIN_PX);
  const long = Math.max(info.widthPx, info.heightPx);
  if (level > 0 || long <= 1024) {
    const sz = level === 0 ? info : info.overviews[level - 1];
    return [await source.readWindow({ minXPx: 0, minYPx: 0, maxXPx: sz.widthPx, maxYPx: sz.heightPx }, { overviewLevel: level, signal })];
  }
  const grid = async (n: number): Promise<RasterWindow[]> => {
    const out: RasterWindow[] = [];
    const s = 64;
    for (let j = 0; j < n; j++) {
      for (let i = 0; i < n; i++) {
        const x = Math.floor(((i + 0.5) * info.widthPx) / n - s / 2);
        const y = Math.floor(((j + 0.5) * info.heightPx) / n - s / 2);
        const x0 = Math.max(0, x), y0 = Math.max(0, y);
        out.push(await source.readWindow({ minXPx: x0, minYPx: y0, maxXPx: Math.min(info.widthPx, x0 + s), maxYPx: Math.min(info.heightPx, y0 + s) }, { signal }));
      }
    }
    return out;
  };
  const coarse = await grid(4);
  return coarse.some((w) => hasValidSample(w)) ? coarse : grid(16);
}

/** Whether any of the given bands (default: all) of the window holds a pixel that is neither nodata nor NaN. */
export function hasValidSample(win: RasterWindow, bandIndices: Iterable<number> = win.bands.keys()): boolean {
  const nd = win.nodata;
  for (const b of bandIndices) {
    const a = win.bands[b];
    for (let i = 0; i < a.length; i++) if (!Number.isNaN(a[i]) && a[i] !== nd) return true;
  }
  return false;
}

/** Concatenate sample windows band by band into one window (for the percentile computation). */
export function joinSamples(ws: RasterWindow[]): RasterWindow {
  if (ws.length === 1) return ws[0];
  const first = ws[0];
  const total = ws.reduce((a, w) => a + w.widthPx * w.heightPx, 0);
  const bands = first.bands.map((_, b) => {
    const out = new Float64Array(total);
    let o = 0;
    for (const w of ws) { out.set(w.bands[b] as ArrayLike<number>, o); o += w.widthPx * w.heightPx; }
    return out;
  });
  return { ...first, widthPx: total, heightPx: 1, bands };
}
