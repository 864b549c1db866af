// Which tiles a quick bench runs: a square block in the middle of the plan (neighbours share file tiles, as in a
// whole run, so the decoded-tile cache behaves as it does for the full scene), and the scene pixels a tile stands for.
import type { PlannedTile, TilePlan } from '../web/core/tiling.ts';

/** About `n` tiles: the centred block of ⌈√n⌉ columns × ⌈n / cols⌉ rows (the whole plan when it is smaller). */
export function centredBlock(plan: TilePlan, n: number): PlannedTile[] {
  if (n >= plan.tiles.length) return plan.tiles;
  const cols = Math.min(plan.cols, Math.ceil(Math.sqrt(n)));
  const rows = Math.min(plan.rows, Math.ceil(n / cols));
  const c0 = Math.floor((plan.cols - cols) / 2), r0 = Math.floor((plan.rows - rows) / 2);
  return plan.tiles.filter((t) => t.col >= c0 && t.col < c0 + cols && t.row >= r0 && t.row < r0 + rows);
}

/** Scene pixels of a tile's core (cores partition the scene, so these sum to the scene's pixels). */
export function tileScenePx(plan: TilePlan, t: PlannedTile): number {
  const c = t.corePx;
  return ((c.maxXPx - c.minXPx) * (c.maxYPx - c.minYPx)) / (plan.scale * plan.scale);
}
