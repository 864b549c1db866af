// Class-aware greedy NMS and Soft-NMS over oriented boxes; candidate pairs from candidate-index.ts (grids + rbush).
import { neighbourLists, type BoxColumns } from './candidate-index.ts';
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
  /** Put every box in the rbush R-tree instead of the uniform grids (same result; for tests). Default false. */
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

/**
 * Rows with score > `scoreThreshold`, sorted by score descending; ties keep the smaller row index first (as
 * onnxruntime's NonMaxSuppression). Float32 scores (every DetectionTable) take a radix sort, others a comparator.
 */
export function orderByScore(cols: NmsBoxColumns, scoreThreshold: number): Uint32Array {
  const n = cols.count, s = cols.score;
  const rows = new Uint32Array(n);
  let m = 0;
  if (!(s instanceof Float32Array)) {
    for (let i = 0; i < n; i++) if (s[i] > scoreThreshold) rows[m++] = i;
    return rows.slice(0, m).sort((a, b) => s[b] - s[a] || a - b);
  }
  // One 32-bit key per row whose unsigned order is the score's descending order: a positive float's bits grow with
  // it (flip them), a negative float's bits grow as it falls (keep them); −0 counts as +0, as in `s[b] − s[a]`.
  const bits = new Uint32Array(s.buffer, s.byteOffset, n);
  const key = new Uint32Array(n);
  for (let i = 0; i < n; i++) {
    if (!(s[i] > scoreThreshold)) continue; // also drops NaN
    const b = bits[i] === 0x80000000 ? 0 : bits[i];
    key[m] = (b ^ ((~b >> 31) & 0x7fffffff)) >>> 0;
    rows[m++] = i;
  }
  return radixSortByKey(key.subarray(0, m), rows.subarray(0, m));
}

/**
 * Stable LSD radix sort of `rows` by unsigned 32-bit `key` (ascending), three passes of 11 bits; both arrays are
 * used as scratch. Rows arrive in ascending order, so equal keys keep the smaller row first.
 */
function radixSortByKey(key: Uint32Array, rows: Uint32Array): Uint32Array {
  const m = rows.length;
  const hist = new Uint32Array(3 * 2048);
  for (let p = 0; p < m; p++) {
    const k = key[p];
    hist[k & 2047]++; hist[2048 + ((k >>> 11) & 2047)]++; hist[4096 + (k >>> 22)]++;
  }
  let k1: Uint32Array = key, r1: Uint32Array = rows, k2: Uint32Array = new Uint32Array(m), r2: Uint32Array = new Uint32Array(m);
  for (let pass = 0, shift = 0; pass < 3; pass++, shift += 11) {
    const h = hist.subarray(2048 * pass, 2048 * (pass + 1));
    if (m === 0 || h[(k1[0] >>> shift) & 2047] === m) continue; // every key has this digit: nothing moves
    for (let d = 0, sum = 0; d < 2048; d++) { const c = h[d]; h[d] = sum; sum += c; }
    for (let p = 0; p < m; p++) {
      const k = k1[p], at = h[(k >>> shift) & 2047]++;
      k2[at] = k; r2[at] = r1[p];
    }
    const tk = k1; k1 = k2; k2 = tk;
    const tr = r1; r1 = r2; r2 = tr;
  }
  return r1;
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

/** Row states of the greedy pass (bits). */
const HAS_NEIGHBOURS = 1, DONE = 2, SUPPRESSED = 4;

/**
 * Greedy NMS: repeatedly keep the highest-scoring remaining box and suppress every remaining box of the same class
 * whose IoU with it exceeds `iouThreshold`. Returns kept row indices sorted by score descending.
 * Cost: linear (a radix sort, grids, neighbour lists) when each box overlaps a bounded number of others.
 */
export function greedyNms(cols: NmsBoxColumns, opts: NmsOptions = {}): Uint32Array {
  checkColumns(cols);
  const iouThreshold = opts.iouThreshold ?? 0.5;
  const scoreThreshold = opts.scoreThreshold ?? -Infinity;
  const order = orderByScore(cols, scoreThreshold);
  // The index is built over the rows in table order (tiles arrive as runs of nearby rows), not in score order.
  const rows = new Uint32Array(order.length);
  for (let i = 0, m = 0; i < cols.count; i++) if (cols.score[i] > scoreThreshold) rows[m++] = i;
  // Candidate pairs first, in spatial order; then the greedy pass in score order only walks the neighbour lists of
  // rows that have any (querying an index in score order jumps all over memory).
  const nb = neighbourLists(cols, rows, opts.classAgnostic ? null : cols.classIdx, { forceTree: opts.forceTree });
  const { start, nbr } = nb;
  const state = new Uint8Array(cols.count);
  for (let i = 0; i < cols.count; i++) if (start[i + 1] > start[i]) state[i] = HAS_NEIGHBOURS;
  const keep = new Uint32Array(order.length);
  let nKeep = 0;
  for (let k = 0; k < order.length; k++) {
    const i = order[k], st = state[i];
    if (st & SUPPRESSED) continue;
    keep[nKeep++] = i;
    if (!(st & HAS_NEIGHBOURS)) continue;
    state[i] = st | DONE;
    // Lists hold same-class rows only (unless class-agnostic); rows DONE or SUPPRESSED were handled before i.
    for (let h = start[i], e = start[i + 1]; h < e; h++) {
      const j = nbr[h];
      if (state[j] & (DONE | SUPPRESSED)) continue;
      if (iouOf(cols, i, j) > iouThreshold) state[j] |= SUPPRESSED;
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
  const nb = neighbourLists(cols, all.slice().sort(), opts.classAgnostic ? null : cols.classIdx, { forceTree: opts.forceTree });
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
    for (let h = nb.start[i], e = nb.start[i + 1]; h < e; h++) {
      const j = nb.nbr[h]; // same class unless class-agnostic
      if (done[j] || cur[j] < minScore) continue;
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
