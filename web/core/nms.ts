// Class-aware greedy NMS and Soft-NMS over oriented boxes; candidates from a uniform grid plus an rbush R-tree.
import RBush from 'rbush';
import { boxHalfExtents, rotatedIoUFlat } from './oriented-box.ts';

/** Box columns NMS reads; a `DetectionTable` satisfies it. Units are whatever the frame uses (metres on the ground). */
export interface NmsBoxColumns {
  count: number;
  cxM: ArrayLike<number>;
  cyM: ArrayLike<number>;
  lengthM: ArrayLike<number>;
  widthM: ArrayLike<number>;
  angleRad: ArrayLike<number>;
  score: ArrayLike<number>;
  classIdx: ArrayLike<number>;
}

export interface NmsOptions {
  /** Suppress a box when its IoU with a kept box of the same class is strictly greater than this. Default 0.5. */
  iouThreshold?: number;
  /** Ignore boxes whose score is not strictly greater than this (as ONNX NonMaxSuppression). Default: none. */
  scoreThreshold?: number;
  /** Compare boxes of different classes too. Default false (class-aware). */
  classAgnostic?: boolean;
  /** Put every box in the rbush R-tree instead of the uniform grid (same result; for tests). Default false. */
  forceTree?: boolean;
}

export interface SoftNmsOptions {
  /** 'gaussian' (s ← s·exp(−IoU²/σ)) or 'linear' (s ← s·(1 − IoU) when IoU > iouThreshold). Default 'gaussian'. */
  method?: 'gaussian' | 'linear';
  /** σ of the Gaussian decay. Default 0.5 (Bodla et al. 2017). */
  sigma?: number;
  /** Overlap threshold N_t of the linear decay. Default 0.3 (Bodla et al. 2017). */
  iouThreshold?: number;
  /** Drop boxes whose decayed score falls below this. Default 0.001 (Bodla et al. 2017). */
  scoreThreshold?: number;
  classAgnostic?: boolean;
  forceTree?: boolean;
}

export interface SoftNmsResult {
  /** Indices of kept boxes, in the order they were selected (decayed score descending). */
  keep: Uint32Array;
  /** Decayed score of each kept box, aligned with `keep`. */
  score: Float32Array;
}

/** An R-tree leaf: the box's axis-aligned bounds and its row index. */
interface Leaf { minX: number; minY: number; maxX: number; maxY: number; i: number }

/** Rows sorted by score descending; ties keep the smaller row index first (as onnxruntime's NonMaxSuppression). */
function orderByScore(cols: NmsBoxColumns, scoreThreshold: number): Uint32Array {
  let m = 0;
  const idx = new Uint32Array(cols.count);
  for (let i = 0; i < cols.count; i++) if (cols.score[i] > scoreThreshold) idx[m++] = i;
  const s = cols.score;
  return idx.slice(0, m).sort((a, b) => s[b] - s[a] || a - b);
}

/**
 * Candidate index: for a box, every other box whose axis-aligned bounds might overlap it.
 * Boxes no larger than the grid cell go into a flat uniform grid (counting sort into typed arrays, O(n)), keyed by
 * the cell of their centre; larger boxes (and all boxes when the grid would be too sparse) go into an rbush
 * R-tree. Measured on 1 000 000 boxes: rbush alone ~2–4 s to load plus ~2 s to query, the grid a fraction of that.
 */
class CandidateIndex {
  readonly minX: Float64Array; readonly minY: Float64Array; readonly maxX: Float64Array; readonly maxY: Float64Array;
  private tree: RBush<Leaf> | null = null;
  private cellM = 1; private x0 = 0; private y0 = 0; private nx = 0; private ny = 0;
  private cellStart = new Uint32Array(1); private cellItems = new Uint32Array(0);
  /** Rows found by the last `query`. */
  hits: Uint32Array = new Uint32Array(64);
  private m = 0;

  constructor(cols: NmsBoxColumns, rows: Uint32Array, opts: { forceTree?: boolean } = {}) {
    const n = cols.count;
    this.minX = new Float64Array(n); this.minY = new Float64Array(n); this.maxX = new Float64Array(n); this.maxY = new Float64Array(n);
    for (const i of rows) {
      const [hx, hy] = boxHalfExtents(cols.lengthM[i], cols.widthM[i], cols.angleRad[i]);
      this.minX[i] = cols.cxM[i] - hx; this.maxX[i] = cols.cxM[i] + hx;
      this.minY[i] = cols.cyM[i] - hy; this.maxY[i] = cols.cyM[i] + hy;
    }
    // Cell = 2 × the median box extent (from a deterministic sample of ≤ 2049 rows).
    const step = Math.max(1, Math.floor(rows.length / 2048));
    const sample: number[] = [];
    for (let k = 0; k < rows.length; k += step) { const i = rows[k]; sample.push(Math.max(this.maxX[i] - this.minX[i], this.maxY[i] - this.minY[i])); }
    sample.sort((a, b) => a - b);
    this.cellM = 2 * (sample[sample.length >> 1] ?? 0);
    const small: number[] = [], large: Leaf[] = [];
    let bx0 = Infinity, by0 = Infinity, bx1 = -Infinity, by1 = -Infinity;
    for (const i of rows) {
      const e = Math.max(this.maxX[i] - this.minX[i], this.maxY[i] - this.minY[i]);
      if (opts.forceTree || !(this.cellM > 0) || e > this.cellM) {
        large.push({ minX: this.minX[i], minY: this.minY[i], maxX: this.maxX[i], maxY: this.maxY[i], i });
      } else {
        small.push(i);
        const cx = (this.minX[i] + this.maxX[i]) / 2, cy = (this.minY[i] + this.maxY[i]) / 2;
        if (cx < bx0) bx0 = cx; if (cx > bx1) bx1 = cx; if (cy < by0) by0 = cy; if (cy > by1) by1 = cy;
      }
    }
    if (small.length > 0) {
      this.x0 = bx0; this.y0 = by0;
      this.nx = Math.floor((bx1 - bx0) / this.cellM) + 1; this.ny = Math.floor((by1 - by0) / this.cellM) + 1;
      if (this.nx * this.ny > 4 * small.length + 4096) { // too sparse for a dense grid: everything in the tree
        for (const i of small) large.push({ minX: this.minX[i], minY: this.minY[i], maxX: this.maxX[i], maxY: this.maxY[i], i });
        this.nx = this.ny = 0;
      } else {
        const cellOf = new Uint32Array(small.length);
        this.cellStart = new Uint32Array(this.nx * this.ny + 1);
        small.forEach((i, k) => {
          const cx = (this.minX[i] + this.maxX[i]) / 2, cy = (this.minY[i] + this.maxY[i]) / 2;
          const c = Math.floor((cy - this.y0) / this.cellM) * this.nx + Math.floor((cx - this.x0) / this.cellM);
          cellOf[k] = c; this.cellStart[c + 1]++;
        });
        for (let c = 0; c < this.nx * this.ny; c++) this.cellStart[c + 1] += this.cellStart[c];
        const fill = this.cellStart.slice(0, this.nx * this.ny);
        this.cellItems = new Uint32Array(small.length);
        small.forEach((i, k) => { this.cellItems[fill[cellOf[k]]++] = i; });
      }
    }
    if (large.length > 0) { this.tree = new RBush<Leaf>(16); this.tree.load(large); }
  }

  private push(j: number): void {
    if (this.m === this.hits.length) { const h = new Uint32Array(this.m * 2); h.set(this.hits); this.hits = h; }
    this.hits[this.m++] = j;
  }

  /** Rows whose bounds overlap row i's bounds (including i itself) land in `hits`; returns their count. */
  query(i: number): number {
    this.m = 0;
    const a0 = this.minX[i], a1 = this.maxX[i], b0 = this.minY[i], b1 = this.maxY[i];
    if (this.nx > 0) {
      const half = this.cellM / 2; // a grid box reaches at most half a cell from its centre
      const ix0 = Math.max(0, Math.floor((a0 - half - this.x0) / this.cellM)), ix1 = Math.min(this.nx - 1, Math.floor((a1 + half - this.x0) / this.cellM));
      const iy0 = Math.max(0, Math.floor((b0 - half - this.y0) / this.cellM)), iy1 = Math.min(this.ny - 1, Math.floor((b1 + half - this.y0) / this.cellM));
      for (let iy = iy0; iy <= iy1; iy++) {
        for (let c = iy * this.nx + ix0, end = iy * this.nx + ix1; c <= end; c++) {
          for (let k = this.cellStart[c], e = this.cellStart[c + 1]; k < e; k++) {
            const j = this.cellItems[k];
            if (this.minX[j] <= a1 && this.maxX[j] >= a0 && this.minY[j] <= b1 && this.maxY[j] >= b0) this.push(j);
          }
        }
      }
    }
    if (this.tree) {
      const found = this.tree.search({ minX: a0, minY: b0, maxX: a1, maxY: b1 });
      for (let k = 0; k < found.length; k++) this.push(found[k].i);
    }
    return this.m;
  }
}

function iouOf(c: NmsBoxColumns, i: number, j: number): number {
  return rotatedIoUFlat(
    c.cxM[i], c.cyM[i], c.lengthM[i], c.widthM[i], c.angleRad[i],
    c.cxM[j], c.cyM[j], c.lengthM[j], c.widthM[j], c.angleRad[j],
  );
}

function checkColumns(cols: NmsBoxColumns): void {
  if (!Number.isInteger(cols.count) || cols.count < 0 || cols.count > cols.score.length) {
    throw new RangeError(`NMS got count ${cols.count} for columns of length ${cols.score.length}.`);
  }
}

/**
 * Greedy NMS: repeatedly keep the highest-scoring remaining box and suppress every remaining box of the same class
 * whose IoU with it exceeds `iouThreshold`. Returns kept row indices sorted by score descending.
 * Cost: one R-tree query per kept box, so O(n log n) for scenes where each box overlaps a bounded number of others.
 */
export function greedyNms(cols: NmsBoxColumns, opts: NmsOptions = {}): Uint32Array {
  checkColumns(cols);
  const iouThreshold = opts.iouThreshold ?? 0.5;
  const order = orderByScore(cols, opts.scoreThreshold ?? -Infinity);
  const index = new CandidateIndex(cols, order, { forceTree: opts.forceTree });
  const suppressed = new Uint8Array(cols.count);
  const rank = new Uint32Array(cols.count);
  for (let k = 0; k < order.length; k++) rank[order[k]] = k;
  const keep = new Uint32Array(order.length);
  let nKeep = 0;
  for (let k = 0; k < order.length; k++) {
    const i = order[k];
    if (suppressed[i]) continue;
    keep[nKeep++] = i;
    const count = index.query(i), rows = index.hits;
    for (let h = 0; h < count; h++) {
      const j = rows[h];
      if (suppressed[j] || rank[j] <= k) continue;
      if (!opts.classAgnostic && cols.classIdx[j] !== cols.classIdx[i]) continue;
      if (iouOf(cols, i, j) > iouThreshold) suppressed[j] = 1;
    }
  }
  return keep.slice(0, nKeep);
}

/** Binary max-heap of (score, row) pairs in typed arrays; stale entries are skipped on pop (scores only decay). */
class ScoreHeap {
  private s: Float64Array;
  private r: Uint32Array;
  size = 0;
  constructor(capacity: number) {
    this.s = new Float64Array(Math.max(1, capacity));
    this.r = new Uint32Array(Math.max(1, capacity));
  }
  private before(a: number, b: number): boolean {
    return this.s[a] > this.s[b] || (this.s[a] === this.s[b] && this.r[a] < this.r[b]);
  }
  private swap(a: number, b: number): void {
    const ts = this.s[a]; this.s[a] = this.s[b]; this.s[b] = ts;
    const tr = this.r[a]; this.r[a] = this.r[b]; this.r[b] = tr;
  }
  push(score: number, row: number): void {
    if (this.size === this.s.length) {
      const s = new Float64Array(this.s.length * 2); s.set(this.s); this.s = s;
      const r = new Uint32Array(this.r.length * 2); r.set(this.r); this.r = r;
    }
    let k = this.size++;
    this.s[k] = score; this.r[k] = row;
    while (k > 0) {
      const p = (k - 1) >> 1;
      if (!this.before(k, p)) break;
      this.swap(k, p); k = p;
    }
  }
  /** Remove the top; returns its row, its score in `out[0]`. */
  pop(out: Float64Array): number {
    const row = this.r[0];
    out[0] = this.s[0];
    this.size--;
    if (this.size > 0) {
      this.s[0] = this.s[this.size]; this.r[0] = this.r[this.size];
      let k = 0;
      for (;;) {
        const l = 2 * k + 1, rr = l + 1;
        let m = k;
        if (l < this.size && this.before(l, m)) m = l;
        if (rr < this.size && this.before(rr, m)) m = rr;
        if (m === k) break;
        this.swap(k, m); k = m;
      }
    }
    return row;
  }
}

/**
 * Soft-NMS (Bodla, Singh, Chellappa, Davis 2017, "Soft-NMS — Improving Object Detection With One Line of Code"):
 * instead of deleting overlapping boxes, decay their scores; boxes that fall below `scoreThreshold` are dropped.
 */
export function softNms(cols: NmsBoxColumns, opts: SoftNmsOptions = {}): SoftNmsResult {
  checkColumns(cols);
  const method = opts.method ?? 'gaussian';
  const sigma = opts.sigma ?? 0.5;
  const nt = opts.iouThreshold ?? 0.3;
  const minScore = opts.scoreThreshold ?? 0.001;
  if (!(sigma > 0)) throw new RangeError(`Soft-NMS sigma must be > 0, got ${sigma}.`);
  const all = orderByScore(cols, -Infinity);
  const index = new CandidateIndex(cols, all, { forceTree: opts.forceTree });
  const cur = new Float64Array(cols.count);
  const done = new Uint8Array(cols.count);
  const heap = new ScoreHeap(all.length);
  for (const i of all) { cur[i] = cols.score[i]; if (cur[i] >= minScore) heap.push(cur[i], i); }
  const keepRows: number[] = [];
  const keepScores: number[] = [];
  const top = new Float64Array(1);
  while (heap.size > 0) {
    const i = heap.pop(top);
    if (done[i] || top[0] !== cur[i]) continue; // stale entry
    done[i] = 1;
    keepRows.push(i); keepScores.push(cur[i]);
    const count = index.query(i), rows = index.hits;
    for (let h = 0; h < count; h++) {
      const j = rows[h];
      if (j === i || done[j] || cur[j] < minScore) continue;
      if (!opts.classAgnostic && cols.classIdx[j] !== cols.classIdx[i]) continue;
      const iou = iouOf(cols, i, j);
      if (iou <= 0) continue;
      const w = method === 'gaussian' ? Math.exp(-(iou * iou) / sigma) : iou > nt ? 1 - iou : 1;
      if (w === 1) continue;
      cur[j] *= w;
      if (cur[j] >= minScore) heap.push(cur[j], j);
    }
  }
  return { keep: Uint32Array.from(keepRows), score: Float32Array.from(keepScores) };
}
