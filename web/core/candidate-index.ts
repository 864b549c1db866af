// Candidate index for NMS: for a box, every box whose axis-aligned bounds overlap it; uniform grids per size class
// (typed arrays, counting sort) and an rbush R-tree only for boxes no grid suits.
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

/** An R-tree leaf: the box's axis-aligned bounds and its row index. */
interface Leaf { minX: number; minY: number; maxX: number; maxY: number; i: number }

/** Size classes: grid g has cells of cell₀·4^g (cell₀ = 2 × the median box extent). */
const GRID_LEVELS = 4;
const LEVEL_STEP = 4;

/** One uniform grid over box centres; a box in it reaches at most half a cell from its centre. */
class Grid {
  readonly x0: number; readonly y0: number; readonly nx: number; readonly ny: number;
  readonly start: Uint32Array; readonly row: Uint32Array; readonly box: Float64Array;

  constructor(readonly cellM: number, members: Uint32Array, bx: Float64Array) {
    const n = members.length;
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    for (let q = 0; q < n; q++) {
      const i = members[q], cx = (bx[4 * i] + bx[4 * i + 2]) / 2, cy = (bx[4 * i + 1] + bx[4 * i + 3]) / 2;
      if (cx < x0) x0 = cx; if (cx > x1) x1 = cx; if (cy < y0) y0 = cy; if (cy > y1) y1 = cy;
    }
    this.x0 = x0; this.y0 = y0;
    const nx = (this.nx = Math.floor((x1 - x0) / cellM) + 1), ny = (this.ny = Math.floor((y1 - y0) / cellM) + 1);
    const cellOf = new Uint32Array(n);
    const start = (this.start = new Uint32Array(nx * ny + 1));
    for (let q = 0; q < n; q++) {
      const i = members[q], cx = (bx[4 * i] + bx[4 * i + 2]) / 2, cy = (bx[4 * i + 1] + bx[4 * i + 3]) / 2;
      const c = Math.floor((cy - y0) / cellM) * nx + Math.floor((cx - x0) / cellM);
      cellOf[q] = c; start[c + 1]++;
    }
    for (let c = 0; c < nx * ny; c++) start[c + 1] += start[c];
    const fill = start.slice(0, nx * ny);
    this.row = new Uint32Array(n);
    this.box = new Float64Array(4 * n);
    for (let q = 0; q < n; q++) {
      const at = fill[cellOf[q]]++, i = members[q];
      this.row[at] = i;
      for (let d = 0; d < 4; d++) this.box[4 * at + d] = bx[4 * i + d];
    }
  }

  /** Would a grid of this cell size over these centres be dense enough (cells ≤ 4 × boxes + 4096)? */
  static fits(cellM: number, members: Uint32Array, bx: Float64Array): boolean {
    let x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    for (let q = 0; q < members.length; q++) {
      const i = members[q], cx = (bx[4 * i] + bx[4 * i + 2]) / 2, cy = (bx[4 * i + 1] + bx[4 * i + 3]) / 2;
      if (cx < x0) x0 = cx; if (cx > x1) x1 = cx; if (cy < y0) y0 = cy; if (cy > y1) y1 = cy;
    }
    const nx = Math.floor((x1 - x0) / cellM) + 1, ny = Math.floor((y1 - y0) / cellM) + 1;
    return members.length > 0 && nx * ny <= 4 * members.length + 4096;
  }
}

/**
 * Boxes go into the grid of the smallest size class that holds them (2 × the median extent, then ×4, ×16, ×64);
 * boxes larger than every class, classes whose grid would be too sparse, and everything under `forceTree`, go into
 * an rbush R-tree. One query visits the few cells around the box in each grid. (With one grid plus the tree, a
 * scene with cars and a few percent solar arrays spent most of its merge in R-tree searches.)
 */
export class CandidateIndex {
  /** Rows found by the last `query`. */
  hits: Uint32Array = new Uint32Array(64);
  private m = 0;
  private tree: RBush<Leaf> | null = null;
  private readonly bx: Float64Array; // per row: minX, minY, maxX, maxY
  private readonly grids: Grid[] = [];

  constructor(cols: BoxColumns, rows: Uint32Array, opts: { forceTree?: boolean } = {}) {
    const bx = (this.bx = new Float64Array(4 * cols.count));
    const n = rows.length;
    const ext = new Float64Array(n);
    for (let k = 0; k < n; k++) {
      const i = rows[k], l = cols.lengthM[i], w = cols.widthM[i], a = cols.angleRad[i];
      const c = Math.abs(Math.cos(a)), s = Math.abs(Math.sin(a));
      const hx = (c * l + s * w) / 2, hy = (s * l + c * w) / 2;
      bx[4 * i] = cols.cxM[i] - hx; bx[4 * i + 1] = cols.cyM[i] - hy; bx[4 * i + 2] = cols.cxM[i] + hx; bx[4 * i + 3] = cols.cyM[i] + hy;
      ext[k] = 2 * Math.max(hx, hy);
    }
    const step = Math.max(1, Math.floor(n / 2048));
    const sample: number[] = [];
    for (let k = 0; k < n; k += step) sample.push(ext[k]);
    sample.sort((a, b) => a - b);
    const cell0 = opts.forceTree ? 0 : 2 * (sample[sample.length >> 1] ?? 0);
    const level = new Uint8Array(n).fill(GRID_LEVELS); // GRID_LEVELS = the tree
    const perLevel = new Uint32Array(GRID_LEVELS);
    if (cell0 > 0) {
      for (let k = 0; k < n; k++) {
        let g = 0;
        for (let cell = cell0; g < GRID_LEVELS && !(ext[k] <= cell); g++) cell *= LEVEL_STEP;
        level[k] = g;
        if (g < GRID_LEVELS) perLevel[g]++;
      }
    }
    for (let g = 0, cell = cell0; g < GRID_LEVELS; g++, cell *= LEVEL_STEP) {
      if (perLevel[g] === 0) continue;
      const members = new Uint32Array(perLevel[g]);
      let q = 0;
      for (let k = 0; k < n; k++) if (level[k] === g) members[q++] = rows[k];
      if (Grid.fits(cell, members, bx)) this.grids.push(new Grid(cell, members, bx));
      else for (let k = 0; k < n; k++) if (level[k] === g) level[k] = GRID_LEVELS;
    }
    const large: Leaf[] = [];
    for (let k = 0; k < n; k++) {
      if (level[k] !== GRID_LEVELS) continue;
      const i = rows[k];
      large.push({ minX: bx[4 * i], minY: bx[4 * i + 1], maxX: bx[4 * i + 2], maxY: bx[4 * i + 3], i });
    }
    if (large.length > 0) { this.tree = new RBush<Leaf>(16); this.tree.load(large); }
  }

  /** Indexed rows in a spatially coherent order (grid cells in order, then the tree's rows). */
  spatialOrder(): Uint32Array {
    let n = 0;
    for (const g of this.grids) n += g.row.length;
    const treeRows = this.tree ? this.tree.all() : [];
    const out = new Uint32Array(n + treeRows.length);
    let at = 0;
    for (const g of this.grids) { out.set(g.row, at); at += g.row.length; }
    for (const leaf of treeRows) out[at++] = leaf.i;
    return out;
  }

  /**
   * Every pair of indexed rows whose bounds overlap (and whose `classIdx` agree, when given), as neighbour lists:
   * the neighbours of row i are `nbr[start[i] .. start[i + 1])` (itself excluded). Built by querying the rows in
   * spatial order, so the whole pass stays in a small part of memory at a time.
   */
  neighbourLists(count: number, classIdx: ArrayLike<number> | null): { start: Uint32Array; nbr: Uint32Array } {
    let a = new Uint32Array(1024), b = new Uint32Array(1024), m = 0;
    const deg = new Uint32Array(count + 1);
    const rows = this.spatialOrder();
    for (let q = 0; q < rows.length; q++) {
      const i = rows[q];
      const h = this.query(i), hits = this.hits;
      for (let k = 0; k < h; k++) {
        const j = hits[k];
        if (j <= i || (classIdx && classIdx[j] !== classIdx[i])) continue; // each pair once, from its lower row
        if (m === a.length) { const a2 = new Uint32Array(2 * m); a2.set(a); a = a2; const b2 = new Uint32Array(2 * m); b2.set(b); b = b2; }
        a[m] = i; b[m] = j; m++;
        deg[i + 1]++; deg[j + 1]++;
      }
    }
    for (let i = 0; i < count; i++) deg[i + 1] += deg[i];
    const fill = deg.slice(0, count);
    const nbr = new Uint32Array(2 * m);
    for (let k = 0; k < m; k++) { nbr[fill[a[k]]++] = b[k]; nbr[fill[b[k]]++] = a[k]; }
    return { start: deg, nbr };
  }

  private push(j: number): void {
    if (this.m === this.hits.length) { const h = new Uint32Array(this.m * 2); h.set(this.hits); this.hits = h; }
    this.hits[this.m++] = j;
  }

  /** Rows whose bounds overlap row i's bounds (including i itself) land in `hits`; returns their count. */
  query(i: number): number {
    this.m = 0;
    const bx = this.bx;
    const a0 = bx[4 * i], b0 = bx[4 * i + 1], a1 = bx[4 * i + 2], b1 = bx[4 * i + 3];
    for (const g of this.grids) {
      const cell = g.cellM, half = cell / 2;
      const ix0 = Math.max(0, Math.floor((a0 - half - g.x0) / cell)), ix1 = Math.min(g.nx - 1, Math.floor((a1 + half - g.x0) / cell));
      const iy0 = Math.max(0, Math.floor((b0 - half - g.y0) / cell)), iy1 = Math.min(g.ny - 1, Math.floor((b1 + half - g.y0) / cell));
      const cb = g.box, start = g.start, nx = g.nx;
      for (let iy = iy0; iy <= iy1; iy++) {
        // Cells ix0..ix1 of one grid row are contiguous in cell order.
        for (let k = start[iy * nx + ix0], e = start[iy * nx + ix1 + 1]; k < e; k++) {
          if (cb[4 * k] <= a1 && cb[4 * k + 2] >= a0 && cb[4 * k + 1] <= b1 && cb[4 * k + 3] >= b0) this.push(g.row[k]);
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
