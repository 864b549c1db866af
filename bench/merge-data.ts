// Invented detections for the merge benchmark: n oriented boxes cut into per-tile tables with duplicates at seams.
// Pure (no DOM, no Node APIs): the same tables are merged in Node and in the browser's tally worker.
import { createDetectionTable, type DetectionTable } from '../web/core/types.ts';
import { mulberry32 as rng } from '../test/helpers/mulberry32.ts';

export interface MergeDataOptions {
  /** Share of objects seen twice (two tiles' detections of one object near a seam). Default 0.1. */
  duplicateShare?: number;
  /** Ground side of one tile's table, metres (the default tiling's core is 412 px × 0.3 m ≈ 124 m). Default 124. */
  tileSideM?: number;
  seed?: number;
}


/**
 * `n` detections in total (objects plus their duplicates): vehicles (4.5 × 1.8 m) and a few solar arrays
 * (12 × 6 m) on a jittered 7 m grid, so neighbours rarely overlap and each duplicate overlaps its object with
 * IoU ≈ 0.8. Rows are grouped into one table per tile, as the workers deliver them.
 */
export function makeMergeTables(n: number, opts: MergeDataOptions = {}): DetectionTable[] {
  const dup = opts.duplicateShare ?? 0.1;
  const side = opts.tileSideM ?? 124;
  const r = rng(opts.seed ?? 7);
  const objects = Math.round(n / (1 + dup));
  const perRow = Math.ceil(Math.sqrt(objects));
  const spacingM = 7;
  const cx = new Float64Array(n), cy = new Float64Array(n);
  const len = new Float32Array(n), wid = new Float32Array(n), ang = new Float32Array(n), sc = new Float32Array(n);
  const cls = new Uint8Array(n);
  let m = 0;
  for (let k = 0; m < n; k++) {
    const x = 500_000 + (k % perRow) * spacingM + r() * 1.5, y = 5_300_000 + Math.floor(k / perRow) * spacingM + r() * 1.5;
    const solar = r() < 0.03;
    const a = (r() - 0.5) * Math.PI;
    const l = solar ? 12 : 4.5, w = solar ? 6 : 1.8;
    cx[m] = x; cy[m] = y; len[m] = l; wid[m] = w; ang[m] = a; sc[m] = 0.3 + 0.7 * r(); cls[m] = solar ? 1 : 0; m++;
    if (m < n && r() < dup) {
      cx[m] = x + (r() - 0.5) * 0.3; cy[m] = y + (r() - 0.5) * 0.3; len[m] = l * 0.97; wid[m] = w * 1.02;
      ang[m] = a + (r() - 0.5) * 0.05; sc[m] = sc[m - 1] * 0.9; cls[m] = cls[m - 1]; m++;
    }
  }
  // one table per tile cell
  const x0 = 500_000 - side, y0 = 5_300_000 - side;
  const cols = Math.ceil((perRow * spacingM + 2) / side) + 2;
  const cellOf = new Uint32Array(m);
  const counts = new Map<number, number>();
  for (let i = 0; i < m; i++) {
    const c = Math.floor((cy[i] - y0) / side) * cols + Math.floor((cx[i] - x0) / side);
    cellOf[i] = c;
    counts.set(c, (counts.get(c) ?? 0) + 1);
  }
  const tables = new Map<number, DetectionTable>();
  for (const [c, k] of counts) tables.set(c, createDetectionTable('EPSG:32632', k));
  for (let i = 0; i < m; i++) {
    const t = tables.get(cellOf[i])!;
    const j = t.count++;
    t.cxM[j] = cx[i]; t.cyM[j] = cy[i]; t.lengthM[j] = len[i]; t.widthM[j] = wid[i]; t.angleRad[j] = ang[i];
    t.score[j] = sc[i]; t.classIdx[j] = cls[i]; t.sceneIdx[j] = 0;
  }
  return [...tables.keys()].sort((a, b) => a - b).map((c) => tables.get(c)!);
}

/** Total rows of a list of tables. */
export function totalRows(tables: readonly DetectionTable[]): number {
  let n = 0;
  for (const t of tables) n += t.count;
  return n;
}
