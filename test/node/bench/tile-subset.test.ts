// The bench's timed block: at most n tiles, a centred rectangle, one size for every scene (a multiple of the workers).
import { describe, expect, it } from 'vitest';
import { blockShape, centredBlock, commonBlockTiles } from '../../../bench/tile-subset.ts';
import { planTiles } from '../../../web/core/tiling.ts';

describe('bench block', () => {
  const rows = [
    { plan: { cols: 3, rows: 3 }, n: 36, want: { cols: 3, rows: 3 } },
    { plan: { cols: 3, rows: 3 }, n: 8, want: { cols: 3, rows: 2 } },
    { plan: { cols: 12, rows: 12 }, n: 36, want: { cols: 6, rows: 6 } },
    { plan: { cols: 12, rows: 12 }, n: 10, want: { cols: 5, rows: 2 } },
    { plan: { cols: 2, rows: 9 }, n: 16, want: { cols: 2, rows: 8 } },
  ];
  for (const r of rows) {
    it(`blockShape ${r.plan.cols}×${r.plan.rows}, n = ${r.n} → ${r.want.cols}×${r.want.rows}`, () => expect(blockShape(r.plan, r.n)).toEqual(r.want));
  }

  it('one block size for a 3×3 and a 12×12 plan: 6 (even, a whole rectangle on both)', () => {
    expect(commonBlockTiles([{ cols: 3, rows: 3 }, { cols: 12, rows: 12 }], 36, 2)).toBe(6);
    expect(commonBlockTiles([{ cols: 12, rows: 12 }, { cols: 12, rows: 12 }], 36, 2)).toBe(36);
    expect(commonBlockTiles([{ cols: 1, rows: 1 }, { cols: 1, rows: 1 }], 4, 2)).toBe(1);
  });

  it('centredBlock returns exactly the block, in the middle of the plan', () => {
    const plan = planTiles({ sceneWidthPx: 4000, sceneHeightPx: 4000, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx: 512, maxObjectExtentM: 20 });
    const block = centredBlock(plan, 6);
    expect(block).toHaveLength(6);
    const cols = new Set(block.map((t) => t.col)), rowsSeen = new Set(block.map((t) => t.row));
    expect(cols.size * rowsSeen.size).toBe(6);
    // centred: as many columns left of it as right, give or take one
    expect(Math.abs(Math.min(...cols) + Math.max(...cols) - (plan.cols - 1))).toBeLessThanOrEqual(1);
  });
});
