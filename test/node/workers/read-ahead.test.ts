// The detector worker's read-ahead (workers/read-ahead.ts): the tile read ahead is the one handed out when asked
// for, another tile is read afresh, at most two tensors are kept, tensors whose buffer was transferred away are not
// reused, and a failed read ahead surfaces only when its tile is asked for. Self-consistency (no external source).
import { describe, expect, it } from 'vitest';
import { ReadAhead } from '../../../workers/read-ahead.ts';
import type { FilledTile, ScenePipeline, TileScratch } from '../../../web/core/pipeline.ts';

const pipe = (tilePx: number) => ({ plan: { tilePx } }) as unknown as ScenePipeline;

function maker(log: number[], idx: number) {
  return (scratch: TileScratch): Promise<FilledTile> => {
    log.push(idx);
    return Promise.resolve({ tile: { index: idx }, hasPixels: true, scratch, readMs: 0, resampleMs: 0 } as unknown as FilledTile);
  };
}

describe('ReadAhead', () => {
  it('hands out the tile read ahead without reading it again; another tile is read now', async () => {
    const ra = new ReadAhead(), p = pipe(64), log: number[] = [];
    const a = await ra.filled(p, 0, maker(log, 0));
    ra.start(p, 1, maker(log, 1));
    expect(log).toEqual([0, 1]);
    const b = await ra.filled(p, 1, maker(log, 1));
    expect(log).toEqual([0, 1]); // not read twice
    expect(b.scratch).not.toBe(a.scratch); // tile 1 was filled while tile 0's tensor was still in use
    ra.give(a.scratch); ra.give(b.scratch);
    ra.start(p, 2, maker(log, 2));
    const c = await ra.filled(p, 3, maker(log, 3)); // the page sent another tile: read afresh
    expect(log).toEqual([0, 1, 2, 3]);
    expect((c.tile as { index: number }).index).toBe(3);
  });

  it('a read ahead for another scene plan is not used', async () => {
    const ra = new ReadAhead(), log: number[] = [];
    ra.start(pipe(64), 5, maker(log, 5));
    await ra.filled(pipe(64), 5, maker(log, 50));
    expect(log).toEqual([5, 50]);
  });

  it('reuses given-back tensors of the plan size (two at most); drops ones whose buffer is gone', async () => {
    const ra = new ReadAhead(), p = pipe(32), log: number[] = [];
    const a = await ra.filled(p, 0, maker(log, 0));
    ra.give(a.scratch);
    const b = await ra.filled(p, 1, maker(log, 1));
    expect(b.scratch).toBe(a.scratch);
    const gone = structuredClone(b.scratch.tensor.buffer, { transfer: [b.scratch.tensor.buffer] });
    expect(gone.byteLength).toBeGreaterThan(0);
    ra.give(b.scratch); // detached: not kept
    const c = await ra.filled(p, 2, maker(log, 2));
    expect(c.scratch === b.scratch).toBe(false);
    expect(c.scratch.tensor.length).toBe(3 * 32 * 32);
    const d = await ra.filled(pipe(64), 3, maker(log, 3)); // another tile size: a tensor of that size
    expect(d.scratch.tilePx).toBe(64);
  });

  it('a failed read ahead is reported when its tile is asked for, and never as an unhandled rejection', async () => {
    const ra = new ReadAhead(), p = pipe(32);
    ra.start(p, 7, () => Promise.reject(new Error('damaged DEFLATE data')));
    await new Promise((r) => setTimeout(r, 5));
    await expect(ra.filled(p, 7, () => Promise.reject(new Error('not this one')))).rejects.toThrow('damaged DEFLATE');
    ra.start(p, 8, () => Promise.reject(new Error('dropped unseen')));
    ra.drop();
    await new Promise((r) => setTimeout(r, 5));
  });
});
