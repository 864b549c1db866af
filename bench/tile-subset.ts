// Which tiles a bench run times: a square-ish block in the middle of the plan (neighbours share file tiles, as in a
// whole run, so the decoded-tile cache behaves as it does for the full scene), one block size for every scene, and
// the scene pixels a tile stands for.
import type { PlannedTile, TilePlan } from '../web/core/tiling.ts';

/** Columns × rows of the largest block of at most `n` tiles that fits the plan; the squarest (wider first) on ties. */
export function blockShape(plan: Pick<TilePlan, 'cols' | 'rows'>, n: number): { cols: number; rows: number } {
  let best = { cols: 0, rows: 0 };
  for (let c = 1; c <= Math.min(plan.cols, n); c++) {
    const r = Math.min(plan.rows, Math.floor(n / c));
    const better = c * r > best.cols * best.rows
      || (c * r === best.cols * best.rows && Math.abs(c - r) <= Math.abs(best.cols - best.rows));
    if (r > 0 && better) best = { cols: c, rows: r };
  }
  return best;
}

/** At most `n` tiles: the centred block of `blockShape(plan, n)` (the whole plan when it has no more than n). */
export function centredBlock(plan: TilePlan, n: number): PlannedTile[] {
  if (n >= plan.tiles.length) return plan.tiles;
  const { cols, rows } = blockShape(plan, n);
  const c0 = Math.floor((plan.cols - cols) / 2), r0 = Math.floor((plan.rows - rows) / 2);
  return plan.tiles.filter((t) => t.col >= c0 && t.col < c0 + cols && t.row >= r0 && t.row < r0 + rows);
}

/**
 * One block size for all scenes, so that every scene (and the CLI and the browser on it) times the same number of
 * tiles: the largest k ≤ `n` that is a whole block on every plan and, when k > 1, a multiple of `multipleOf` (the
 * largest worker count, so the workers get equal shares and scaling is not capped by the last tile).
 */
export function commonBlockTiles(plans: ReadonlyArray<Pick<TilePlan, 'cols' | 'rows'>>, n: number, multipleOf = 1): number {
  const most = Math.min(n, ...plans.map((p) => p.cols * p.rows));
  const whole = (k: number) => plans.every((p) => { const s = blockShape(p, k); return s.cols * s.rows === k; });
  for (let k = most; k > 1; k--) if (k % multipleOf === 0 && whole(k)) return k;
  for (let k = most; k > 1; k--) if (whole(k)) return k;
  return 1;
}

/** Scene pixels of a tile's core (cores partition the scene, so these sum to the scene's pixels). */
export function tileScenePx(plan: TilePlan, t: PlannedTile): number {
  const c = t.corePx;
  return ((c.maxXPx - c.minXPx) * (c.maxYPx - c.minYPx)) / (plan.scale * plan.scale);
}
