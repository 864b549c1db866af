// Class-aware greedy NMS and Soft-NMS over oriented boxes; candidates from candidate-index.ts (grids + rbush).
import { CandidateIndex, type BoxColumns } from './candidate-index.ts';
import { rotatedIoUFlat } from './oriented-box.ts';

/** Box columns NMS reads; a `DetectionTable` satisfies it. Units are whatever the frame uses (metres on the ground). */
export interface NmsBoxColumns extends BoxColumns {
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

/** Rows sorted by score descending; ties keep the smaller row index first (as onnxruntime's NonMaxSuppression). */
function orderByScore(cols: NmsBoxColumns, scoreThreshold: number): Uint32Array {
  let m = 0;
  const idx = new Uint32Array(cols.count);
  for (let i = 0; i < cols.count; i++) if (cols.score[i] > scoreThreshold) idx[m++] = i;
  const s = cols.score;
  if (!(s instanceof Float32Array) || cols.count > 1 << 21) return idx.slice(0, m).sort((a, b) => s[b] - s[a] || a - b);
  // Fast path: one Float64 key per row = (descending order-preserving float32 bits) · 2^21 + row, sorted natively.
  const bits = new Uint32Array(s.buffer, s.byteOffset, s.length);
  const keys = new Float64Array(m);
  for (let k = 0; k < m; k++) {
    const i = idx[k], b = bits[i];
    const asc = b & 0x80000000 ? ~b >>> 0 : (b | 0x80000000) >>> 0; // unsigned order = float order
    keys[k] = (0xffffffff - asc) * 2097152 + i;
  }
  keys.sort();
  const out = new Uint32Array(m);
  for (let k = 0; k < m; k++) out[k] = keys[k] % 2097152;
  return out;
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
 * Cost: one index query per box (in spatial order): O(n log n) (the sort) when each box overlaps a bounded number of others.
 */
export function greedyNms(cols: NmsBoxColumns, opts: NmsOptions = {}): Uint32Array {
  checkColumns(cols);
  const iouThreshold = opts.iouThreshold ?? 0.5;
  const order = orderByScore(cols, opts.scoreThreshold ?? -Infinity);
  // The index is built over the rows in table order (tiles arrive as runs of nearby rows), not in score order.
  const index = new CandidateIndex(cols, order.slice().sort(), { forceTree: opts.forceTree });
  // Candidate pairs first, in spatial order; then the greedy pass in score order only walks short neighbour lists
  // (querying the index in score order jumps all over memory: most of the time of a 1 000 000-box merge).
  const nb = index.neighbourLists(cols.count, opts.classAgnostic ? null : cols.classIdx);
  const suppressed = new Uint8Array(cols.count);
  const rank = new Uint32Array(cols.count);
  for (let k = 0; k < order.length; k++) rank[order[k]] = k;
  const keep = new Uint32Array(order.length);
  let nKeep = 0;
  for (let k = 0; k < order.length; k++) {
    const i = order[k];
    if (suppressed[i]) continue;
    keep[nKeep++] = i;
    for (let h = nb.start[i], e = nb.start[i + 1]; h < e; h++) {
      const j = nb.nbr[h];
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
