// Candidate pairs for NMS: every pair of same-class boxes whose axis-aligned bounds overlap, as neighbour lists;
// uniform grids per class and size class (typed arrays, counting sort), an rbush R-tree for the few boxes no grid suits.
import RBush from 'rbush';

/** Box columns the index reads (a DetectionTable satisfies them). */
export interface BoxColumns {
  count: number;
  cxM: ArrayLike<number>;
  cyM: ArrayLike<number>;
  lengthM: ArrayLike<number>;
  widthM: ArrayLike<number>;
  angleRad: ArrayLike<number>;
}

/** The neighbours of row i are `nbr[start[i] .. start[i + 1])` (itself excluded); `start` has count + 1 entries. */
export interface NeighbourLists {
  start: Uint32Array;
  nbr: Uint32Array;
}

/** An R-tree leaf: the box's axis-aligned bounds and its row index. */
interface Leaf { minX: number; minY: number; maxX: number; maxY: number; i: number }

/** Size classes: grid g has cells of cell₀·4^g (cell₀ = 2 × the median box extent of the class). */
const GRID_LEVELS = 4;
const LEVEL_STEP = 4;
/** Relative growth of every bound, so that rounding can never hide a pair whose rotated boxes touch. */
const PAD_REL = 2 ** -36;

/** Pairs (a[k], b[k]) in growable typed arrays. */
class PairBuffer {
  a: Uint32Array; b: Uint32Array; m = 0;
  constructor(capacity: number) { this.a = new Uint32Array(capacity); this.b = new Uint32Array(capacity); }
  push(i: number, j: number): void {
    if (this.m === this.a.length) {
      const a = new Uint32Array(2 * this.m); a.set(this.a); this.a = a;
      const b = new Uint32Array(2 * this.m); b.set(this.b); this.b = b;
    }
    this.a[this.m] = i; this.b[this.m] = j; this.m++;
  }
}

/**
 * One uniform grid over box centres, its members in cell order (row-major): position p holds row `row[p]` and its
 * bounds `box[4p .. 4p + 4)`, so a scan reads memory in order. A member reaches at most half a cell (`reachM`,
 * with a margin for rounding) from its centre.
 */
class Grid {
  readonly nx: number; readonly ny: number; readonly reachM: number;
  readonly start: Uint32Array; readonly row: Uint32Array; readonly box: Float64Array;

  constructor(readonly cellM: number, members: Uint32Array, cols: BoxColumns, half: Float32Array, readonly x0: number, readonly y0: number, x1: number, y1: number) {
    const n = members.length;
    const nx = (this.nx = Math.floor((x1 - x0) / cellM) + 1), ny = (this.ny = Math.floor((y1 - y0) / cellM) + 1);
    this.reachM = cellM / 2 + 1e-9 * (Math.max(Math.abs(x0), Math.abs(x1), Math.abs(y0), Math.abs(y1)) + cellM);
    const cellOf = new Uint32Array(n);
    const start = (this.start = new Uint32Array(nx * ny + 1));
    for (let q = 0; q < n; q++) {
      const i = members[q];
      const c = Math.floor((cols.cyM[i] - y0) / cellM) * nx + Math.floor((cols.cxM[i] - x0) / cellM);
      cellOf[q] = c; start[c + 1]++;
    }
    for (let c = 0; c < nx * ny; c++) start[c + 1] += start[c];
    const fill = start.slice(0, nx * ny);
    const row = (this.row = new Uint32Array(n)), box = (this.box = new Float64Array(4 * n));
    for (let q = 0; q < n; q++) {
      const p = fill[cellOf[q]]++, i = members[q], cx = cols.cxM[i], cy = cols.cyM[i], hx = half[2 * i], hy = half[2 * i + 1];
      row[p] = i;
      box[4 * p] = cx - hx; box[4 * p + 1] = cy - hy; box[4 * p + 2] = cx + hx; box[4 * p + 3] = cy + hy;
    }
  }

  /**
   * Push (i, row) for every member whose bounds overlap [a0, a1] × [b0, b1], among positions ≥ `from` in grid rows
   * ≥ `iyFrom`. A box overlapping the query has its centre within `reachM` of it, so only those cells are visited.
   */
  scan(i: number, a0: number, b0: number, a1: number, b1: number, from: number, iyFrom: number, out: PairBuffer): void {
    const cell = this.cellM, r = this.reachM, nx = this.nx;
    const ix0 = Math.max(0, Math.floor((a0 - r - this.x0) / cell)), ix1 = Math.min(nx - 1, Math.floor((a1 + r - this.x0) / cell));
    const iy0 = Math.max(iyFrom, Math.floor((b0 - r - this.y0) / cell)), iy1 = Math.min(this.ny - 1, Math.floor((b1 + r - this.y0) / cell));
    const start = this.start, box = this.box, row = this.row;
    for (let iy = iy0; iy <= iy1; iy++) {
      // Cells ix0..ix1 of one grid row are contiguous in position order.
      for (let p = Math.max(from, start[iy * nx + ix0]), e = start[iy * nx + ix1 + 1]; p < e; p++) {
        if (box[4 * p] <= a1 && box[4 * p + 2] >= a0 && box[4 * p + 1] <= b1 && box[4 * p + 3] >= b0) out.push(i, row[p]);
      }
    }
  }

  /** Pairs within this grid, each found once: from its earlier member, which scans only later positions. */
  pairsWithin(out: PairBuffer): void {
    const { start, box, row, nx } = this;
    for (let c = 0; c < nx * this.ny; c++) {
      const iy = Math.floor(c / nx); // rows above hold earlier positions only
      for (let p = start[c]; p < start[c + 1]; p++) this.scan(row[p], box[4 * p], box[4 * p + 1], box[4 * p + 2], box[4 * p + 3], p + 1, iy, out);
    }
  }

  /** Pairs between this grid's members and `other`'s. */
  pairsWith(other: Grid, out: PairBuffer): void {
    const { box, row } = this;
    for (let p = 0; p < row.length; p++) other.scan(row[p], box[4 * p], box[4 * p + 1], box[4 * p + 2], box[4 * p + 3], 0, 0, out);
  }
}

/**
 * Every pair of the given rows whose axis-aligned bounds overlap, and whose `classIdx` agree when it is given, as
 * neighbour lists over all `cols.count` rows (rows not given have none). Boxes with non-finite bounds or a NaN class
 * get no neighbours (their IoU, or their class comparison, can suppress nothing).
 *
 * Each class is indexed on its own. A box goes into the grid of the smallest size class that holds it (2 × the
 * class's median extent, then ×4, ×16, ×64); boxes larger than every size class, size classes whose grid would be
 * too sparse, and everything under `forceTree`, go into an rbush R-tree. Each pair is found once: inside a grid from
 * its earlier member in cell order; between two grids by the members of the smaller one scanning the other; from
 * the tree's side for tree boxes. Scans run in cell order, so they read memory nearly in order.
 */
export function neighbourLists(
  cols: BoxColumns, rows: Uint32Array, classIdx: ArrayLike<number> | null, opts: { forceTree?: boolean } = {},
): NeighbourLists {
  // Half extents of each row's bounds on x and y, grown a little and rounded up to float32; −1 when not finite.
  const half = new Float32Array(2 * cols.count);
  for (let k = 0; k < rows.length; k++) {
    const i = rows[k], l = cols.lengthM[i], w = cols.widthM[i], a = cols.angleRad[i], cx = cols.cxM[i], cy = cols.cyM[i];
    const c = Math.abs(Math.cos(a)), s = Math.abs(Math.sin(a));
    const hx = (c * l + s * w) / 2, hy = (s * l + c * w) / 2;
    const ok = Number.isFinite(hx + hy + cx + cy);
    half[2 * i] = ok ? (hx + PAD_REL * (Math.abs(cx) + hx)) * (1 + 2 ** -22) + 1e-30 : -1;
    half[2 * i + 1] = ok ? (hy + PAD_REL * (Math.abs(cy) + hy)) * (1 + 2 ** -22) + 1e-30 : -1;
  }
  const pairs = new PairBuffer(Math.max(1024, rows.length >> 2));
  for (const group of groupByClass(rows, classIdx, half)) addPairs(cols, group, half, opts.forceTree ?? false, pairs);
  return toLists(pairs, cols.count);
}

/** The rows of each class (ascending, as given), leaving out rows with a NaN class or non-finite bounds. */
function groupByClass(rows: Uint32Array, classIdx: ArrayLike<number> | null, half: Float32Array): Uint32Array[] {
  const group = new Int32Array(rows.length);
  const ids = new Map<number, number>();
  const sizes: number[] = [];
  let lastClass = NaN, last = -1;
  for (let k = 0; k < rows.length; k++) {
    const i = rows[k], c = classIdx ? classIdx[i] : 0;
    if (c !== c || half[2 * i] < 0) { group[k] = -1; continue; }
    if (c !== lastClass) { // classes come in runs: look the id up only when it changes
      lastClass = c;
      last = ids.get(c) ?? ids.set(c, sizes.push(0) - 1).get(c)!;
    }
    group[k] = last; sizes[last]++;
  }
  const out = sizes.map((s) => new Uint32Array(s));
  const fill = sizes.map(() => 0);
  for (let k = 0; k < rows.length; k++) if (group[k] >= 0) out[group[k]][fill[group[k]]++] = rows[k];
  return out;
}

/** Pairs among `rows` (one class): grids per size class, the rest in an R-tree. */
function addPairs(cols: BoxColumns, rows: Uint32Array, half: Float32Array, forceTree: boolean, pairs: PairBuffer): void {
  const n = rows.length;
  const step = Math.max(1, Math.floor(n / 2048));
  const sample: number[] = [];
  for (let k = 0; k < n; k += step) sample.push(2 * Math.max(half[2 * rows[k]], half[2 * rows[k] + 1]));
  sample.sort((a, b) => a - b);
  const cell0 = forceTree ? 0 : 2 * (sample[sample.length >> 1] ?? 0);
  const TREE = GRID_LEVELS;
  const level = new Uint8Array(n).fill(TREE);
  const perLevel = new Uint32Array(GRID_LEVELS);
  // centre bounds per size class
  const bounds = Float64Array.from({ length: 4 * GRID_LEVELS }, (_, k) => (k % 4 < 2 ? Infinity : -Infinity));
  if (cell0 > 0) {
    for (let k = 0; k < n; k++) {
      const i = rows[k], e = 2 * Math.max(half[2 * i], half[2 * i + 1]);
      let g = 0;
      for (let cell = cell0; g < GRID_LEVELS && !(e <= cell); g++) cell *= LEVEL_STEP;
      level[k] = g;
      if (g === GRID_LEVELS) continue;
      perLevel[g]++;
      const cx = cols.cxM[i], cy = cols.cyM[i], b = 4 * g;
      if (cx < bounds[b]) bounds[b] = cx; if (cy < bounds[b + 1]) bounds[b + 1] = cy;
      if (cx > bounds[b + 2]) bounds[b + 2] = cx; if (cy > bounds[b + 3]) bounds[b + 3] = cy;
    }
  }
  const grids: Grid[] = [];
  for (let g = 0, cell = cell0; g < GRID_LEVELS; g++, cell *= LEVEL_STEP) {
    if (perLevel[g] === 0) continue;
    const [x0, y0, x1, y1] = bounds.subarray(4 * g, 4 * g + 4);
    // Dense enough (cells ≤ 4 × boxes + 4096)? Otherwise these boxes go to the tree.
    if ((Math.floor((x1 - x0) / cell) + 1) * (Math.floor((y1 - y0) / cell) + 1) > 4 * perLevel[g] + 4096) {
      for (let k = 0; k < n; k++) if (level[k] === g) level[k] = TREE;
      continue;
    }
    const members = new Uint32Array(perLevel[g]);
    for (let k = 0, q = 0; k < n; k++) if (level[k] === g) members[q++] = rows[k];
    grids.push(new Grid(cell, members, cols, half, x0, y0, x1, y1));
  }
  for (let g = 0; g < grids.length; g++) {
    grids[g].pairsWithin(pairs);
    for (let h = g + 1; h < grids.length; h++) {
      if (grids[g].row.length <= grids[h].row.length) grids[g].pairsWith(grids[h], pairs);
      else grids[h].pairsWith(grids[g], pairs);
    }
  }
  const large: Leaf[] = [];
  for (let k = 0; k < n; k++) {
    if (level[k] !== TREE) continue;
    const i = rows[k], hx = half[2 * i], hy = half[2 * i + 1];
    large.push({ minX: cols.cxM[i] - hx, minY: cols.cyM[i] - hy, maxX: cols.cxM[i] + hx, maxY: cols.cyM[i] + hy, i });
  }
  if (large.length === 0) return;
  const tree = new RBush<Leaf>(16).load(large);
  for (const leaf of large) {
    for (const G of grids) G.scan(leaf.i, leaf.minX, leaf.minY, leaf.maxX, leaf.maxY, 0, 0, pairs);
    for (const o of tree.search(leaf)) if (o.i > leaf.i) pairs.push(leaf.i, o.i);
  }
}

/** Pairs → neighbour lists (each pair appears in both rows' lists). */
function toLists(pairs: PairBuffer, count: number): NeighbourLists {
  const { a, b, m } = pairs;
  const start = new Uint32Array(count + 1);
  for (let k = 0; k < m; k++) { start[a[k] + 1]++; start[b[k] + 1]++; }
  for (let i = 0; i < count; i++) start[i + 1] += start[i];
  const fill = start.slice(0, count);
  const nbr = new Uint32Array(2 * m);
  for (let k = 0; k < m; k++) { nbr[fill[a[k]]++] = b[k]; nbr[fill[b[k]]++] = a[k]; }
  return { start, nbr };
}
