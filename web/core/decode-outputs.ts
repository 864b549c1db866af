// Decode a model's raw outputs (center-heatmap or boxes layout) into oriented detections in tile pixels.
import { SeamtallyError } from './errors.ts';
import type { ModelSidecar } from './model-contract.ts';

/**
 * Pixel convention: continuous coordinates, (0, 0) is the top-left CORNER of the tile's top-left pixel and pixel k
 * covers [k, k + 1); y grows downward. `tileOriginPx` (default [0, 0]) is added to every centre, so passing the
 * tile window's top-left in model pixels yields centres in the resampled scene's model pixels.
 *
 * center-heatmap, stride s, heatmap cell (i = column, j = row):
 *   peak   heatmap[c, j, i] ≥ minScore and a 3×3 local maximum. Ties: it must be STRICTLY greater than the
 *          neighbours that come earlier in row-major order (the row above, and the cell to its left) and ≥ the
 *          later ones (right, and the row below). So of two equal adjacent cells exactly one (the earlier) is kept.
 *          Cells outside the map do not count. Each class channel is searched separately.
 *   centre cx = (i + offset[0, j, i]) × s, cy = (j + offset[1, j, i]) × s; without an offset output the offset
 *          is 0.5 (the cell's centre). Training targets: offset = cx / s − floor(cx / s).
 *   size   w = size[0, j, i], h = size[1, j, i] in input pixels; w lies along the angle θ, h along θ + π/2.
 *   angle  θ = angle[0, j, i] radians from +x towards +y (clockwise on screen); θ = 0 without an angle output.
 *   result lengthPx = max(w, h), widthPx = min(w, h), angleRad = direction of the length axis (θ, or θ + π/2 when
 *          h > w), normalised to [−π/2, π/2).
 * boxes [1, N, 6] rows x1, y1, x2, y2, score, class: centre = midpoint, w = |x2 − x1|, h = |y2 − y1|, angle 0 or
 *   π/2 → normalised as above; rows with score < minScore are skipped; a kept row whose class index is not a
 *   whole number < classes.length is a 'model-mismatch'.
 */

export interface TensorLike { data: Float32Array; dims: readonly number[] }

export interface PixelDetections {
  count: number;
  cxPx: Float64Array;
  cyPx: Float64Array;
  lengthPx: Float32Array;
  widthPx: Float32Array;
  angleRad: Float32Array;
  score: Float32Array;
  classIdx: Uint8Array;
  /** Feature vectors at the peaks (`featureDim` per row), when the model has a features output. */
  features?: Float32Array;
  featureDim?: number;
}

/** Largest feature vector the contract allows. */
export const MAX_FEATURE_DIM = 64;

export interface DecodeOptions {
  /** Keep peaks / rows with score ≥ this. */
  minScore: number;
  /** Added to every centre: [xPx, yPx]. Default [0, 0]. */
  tileOriginPx?: readonly [number, number];
}

/** Wrap an angle to [−π/2, π/2): a box's axis has no direction. */
export function normaliseAxisAngle(angleRad: number): number {
  let a = angleRad % Math.PI;
  if (a >= Math.PI / 2) a -= Math.PI;
  else if (a < -Math.PI / 2) a += Math.PI;
  return a;
}

class Rows {
  cx: number[] = []; cy: number[] = []; len: number[] = []; wid: number[] = []; ang: number[] = []; sc: number[] = []; cl: number[] = [];
  add(cx: number, cy: number, w: number, h: number, theta: number, score: number, cls: number): void {
    const aw = Math.abs(w), ah = Math.abs(h);
    this.cx.push(cx); this.cy.push(cy);
    this.len.push(Math.max(aw, ah)); this.wid.push(Math.min(aw, ah));
    this.ang.push(normaliseAxisAngle(ah > aw ? theta + Math.PI / 2 : theta));
    this.sc.push(score); this.cl.push(cls);
  }
  table(): PixelDetections {
    return {
      count: this.cx.length,
      cxPx: Float64Array.from(this.cx), cyPx: Float64Array.from(this.cy),
      lengthPx: Float32Array.from(this.len), widthPx: Float32Array.from(this.wid), angleRad: Float32Array.from(this.ang),
      score: Float32Array.from(this.sc), classIdx: Uint8Array.from(this.cl),
    };
  }
}

function tensor(outputs: Record<string, TensorLike>, name: string, field: string, dims: ReadonlyArray<number | null>): TensorLike {
  const t = outputs[name];
  const bad = (what: string): never => {
    throw new SeamtallyError('model-mismatch', `The model's output "${name}" (sidecar ${field}) ${what}. Use the sidecar written for this .onnx file.`, { field });
  };
  if (!t) bad('is missing');
  if (t.dims.length !== dims.length) bad(`has ${t.dims.length} dimensions, expected ${dims.length}`);
  dims.forEach((d, i) => { if (d !== null && t.dims[i] !== d) bad(`has size ${t.dims[i]} in dimension ${i}, expected ${d}`); });
  const n = t.dims.reduce((a, b) => a * b, 1);
  if (t.data.length !== n) bad(`holds ${t.data.length} values for a shape of ${n}`);
  return t;
}

function decodeHeatmap(sc: ModelSidecar, outputs: Record<string, TensorLike>, minScore: number, ox: number, oy: number): PixelDetections {
  if (sc.output.layout !== 'center-heatmap') throw new Error('unreachable');
  const o = sc.output;
  const C = sc.classes.length;
  const hm = tensor(outputs, o.heatmap, 'output.heatmap', [1, C, null, null]);
  const H = hm.dims[2], W = hm.dims[3];
  const size = tensor(outputs, o.size, 'output.size', [1, 2, H, W]).data;
  const off = o.offset === null ? null : tensor(outputs, o.offset, 'output.offset', [1, 2, H, W]).data;
  const ang = o.angle === null ? null : tensor(outputs, o.angle, 'output.angle', [1, 1, H, W]).data;
  const s = o.stride;
  const plane = H * W;
  const rows = new Rows();
  const d = hm.data;
  const peaks: number[] = [];
  // the features output when the run fetched it (fetchedOutputNames: only runs that keep features do)
  const feat = o.features === null || !outputs[o.features] ? null : tensor(outputs, o.features, 'output.features', [1, null, H, W]);
  const F = feat ? feat.dims[1] : 0;
  if (feat && !(F >= 1 && F <= MAX_FEATURE_DIM)) {
    throw new SeamtallyError('model-mismatch', `The model's output "${o.features}" (sidecar output.features) has ${F} channels; the contract allows 1 to ${MAX_FEATURE_DIM}. Use the sidecar written for this .onnx file.`, { field: 'output.features' });
  }
  const fv: number[] = [];
  for (let c = 0; c < C; c++) {
    const base = c * plane;
    for (let j = 0; j < H; j++) {
      peaks.length = 0;
      rowPeaks(d, base, j, H, W, minScore, peaks);
      for (const i of peaks) {
        const k = j * W + i;
        const fx = off ? off[k] : 0.5;
        const fy = off ? off[plane + k] : 0.5;
        rows.add(ox + (i + fx) * s, oy + (j + fy) * s, size[k], size[plane + k], ang ? ang[k] : 0, d[base + k], c);
        if (feat) for (let f = 0; f < F; f++) fv.push(feat.data[f * plane + k]);
      }
    }
  }
  const t = rows.table();
  return feat ? { ...t, features: Float32Array.from(fv), featureDim: F } : t;
}

/**
 * Columns of heatmap row j (plane at `base`, H × W) holding a peak ≥ minScore: a value no smaller than its 8
 * neighbours, ties going to the first in raster order. One row per call, so V8 optimises this function as a whole
 * instead of on-stack-replacing its loop once per tile (see fill-unit.ts, `lutRowFirst`).
 */
function rowPeaks(d: Float32Array, base: number, j: number, H: number, W: number, minScore: number, out: number[]): void {
  for (let i = 0; i < W; i++) {
    const v = d[base + j * W + i];
    if (!(v >= minScore)) continue;
    let peak = true;
    for (let dj = -1; dj <= 1 && peak; dj++) {
      const jj = j + dj;
      if (jj < 0 || jj >= H) continue;
      for (let di = -1; di <= 1; di++) {
        const ii = i + di;
        if ((dj === 0 && di === 0) || ii < 0 || ii >= W) continue;
        const u = d[base + jj * W + ii];
        const earlier = dj < 0 || (dj === 0 && di < 0);
        if (earlier ? u >= v : u > v) { peak = false; break; }
      }
    }
    if (peak) out.push(i);
  }
}

function decodeBoxes(sc: ModelSidecar, outputs: Record<string, TensorLike>, minScore: number, ox: number, oy: number): PixelDetections {
  if (sc.output.layout !== 'boxes') throw new Error('unreachable');
  const t = tensor(outputs, sc.output.boxes, 'output.boxes', [1, null, 6]);
  const n = t.dims[1];
  const d = t.data;
  const rows = new Rows();
  for (let r = 0; r < n; r++) {
    const b = 6 * r;
    const score = d[b + 4];
    if (!(score >= minScore)) continue;
    const cls = d[b + 5];
    if (!Number.isInteger(cls) || cls < 0 || cls >= sc.classes.length) {
      throw new SeamtallyError('model-mismatch',
        `The model's output "${sc.output.boxes}" (sidecar output.boxes) gave class index ${cls}, but the sidecar lists ${sc.classes.length} classes. Use the sidecar written for this .onnx file.`,
        { field: 'output.boxes' });
    }
    const x1 = d[b], y1 = d[b + 1], x2 = d[b + 2], y2 = d[b + 3];
    rows.add(ox + (x1 + x2) / 2, oy + (y1 + y2) / 2, x2 - x1, y2 - y1, 0, score, cls);
  }
  return rows.table();
}

/** Decode one tile's outputs into detections in tile pixels (plus `tileOriginPx`). */
export function decodeOutputs(sidecar: ModelSidecar, outputs: Record<string, TensorLike>, opts: DecodeOptions): PixelDetections {
  const [ox, oy] = opts.tileOriginPx ?? [0, 0];
  return sidecar.output.layout === 'boxes'
    ? decodeBoxes(sidecar, outputs, opts.minScore, ox, oy)
    : decodeHeatmap(sidecar, outputs, opts.minScore, ox, oy);
}
