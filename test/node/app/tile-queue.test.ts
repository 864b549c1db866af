// Tile hand-out: every tile handed out exactly once, each worker's run contiguous in raster order, idle workers steal.
import { describe, it, expect } from 'vitest';
import { BandQueue } from '../../../web/app/tile-queue.ts';

describe('BandQueue', () => {
  it('splits the raster order into contiguous bands, one per worker', () => {
    const q = new BandQueue([0, 1, 2, 3, 4, 5, 6, 7, 8, 9], 2);
    expect([q.take(0), q.take(0), q.take(1), q.take(1)]).toEqual([0, 1, 5, 6]);
    expect(q.size).toBe(6);
  });

  it('hands out every item exactly once under any interleaving, stealing the far half of the fullest band', () => {
    let seed = 11;
    const rnd = () => ((seed = (seed * 16807) % 2147483647) / 2147483647);
    for (const workers of [1, 2, 3, 5]) {
      const items = Array.from({ length: 97 }, (_, i) => i);
      const q = new BandQueue(items, workers);
      const got: number[] = [];
      const runs = Array.from({ length: workers }, () => [] as number[]);
      for (;;) {
        const live = runs.map((_, w) => w);
        const w = live[Math.floor(rnd() * live.length)];
        const v = q.take(w);
        if (v === undefined) { if (q.size === 0) break; continue; }
        got.push(v);
        runs[w].push(v);
      }
      expect(got.sort((a, b) => a - b)).toEqual(items);
      // each worker's tiles come in a few ascending runs (its band, then stolen halves), not alternating
      for (const r of runs) {
        let breaks = 0;
        for (let i = 1; i < r.length; i++) if (r[i] !== r[i - 1] + 1) breaks++;
        expect(breaks).toBeLessThanOrEqual(12);
      }
    }
  });

  it('a retry goes to the back of its worker\'s band; an item it could not start goes back to the front', () => {
    const q = new BandQueue(['a', 'b', 'c', 'd'], 2);
    const a = q.take(0)!;
    q.putBack(0, a);
    expect(q.take(0)).toBe('b');
    q.putFront(1, 'x');
    expect(q.take(1)).toBe('x');
    expect([q.take(0), q.take(1), q.take(1), q.take(0)]).toEqual(['a', 'c', 'd', undefined]);
  });
  it('peek shows what take would return from the worker\'s own band, without taking or stealing', () => {
    const q = new BandQueue([1, 2, 3, 4], 2);
    expect(q.peek(0)).toBe(1);
    expect(q.take(0)).toBe(1);
    expect(q.peek(0)).toBe(2);
    expect(q.take(0)).toBe(2);
    expect(q.peek(0)).toBeUndefined(); // its band is empty: the next take would steal, peek does not
    expect(q.size).toBe(2);
    expect(q.peek(5)).toBeUndefined();
  });
});
