// Bounded LRU of decoded tiles: byte budget, least-recently-used eviction, one load per key under concurrency.
import { describe, expect, it } from 'vitest';
import { TileCache } from '../../../web/core/tile-cache.ts';

const blob = (n: number) => new Uint8Array(n);

describe('TileCache', () => {
  it('keeps the byte total within the budget and evicts the least recently used first', () => {
    const c = new TileCache<Uint8Array>({ maxBytes: 300 });
    c.set('a', blob(100));
    c.set('b', blob(100));
    c.set('c', blob(100));
    expect(c.get('a')).toBeDefined(); // a is now most recent; b is the oldest
    c.set('d', blob(100));
    expect(c.has('b')).toBe(false);
    expect(['a', 'c', 'd'].every((k) => c.has(k))).toBe(true);
    expect(c.stats().bytes).toBe(300);
    expect(c.stats().evictions).toBe(1);
  });

  it('does not keep a value larger than the whole budget, and replacing a key re-counts its bytes', () => {
    const c = new TileCache<Uint8Array>({ maxBytes: 100 });
    c.set('big', blob(101));
    expect(c.has('big')).toBe(false);
    c.set('x', blob(60));
    c.set('x', blob(40));
    expect(c.stats().bytes).toBe(40);
  });

  it('getOrLoad loads a key once for concurrent callers and counts hits and misses', async () => {
    const c = new TileCache<Uint8Array>({ maxBytes: 1000 });
    let loads = 0;
    const load = async () => { loads++; await new Promise((r) => setTimeout(r, 5)); return blob(10); };
    const [a, b] = await Promise.all([c.getOrLoad('k', load), c.getOrLoad('k', load)]);
    expect(a).toBe(b);
    await c.getOrLoad('k', load);
    expect(loads).toBe(1);
    expect(c.stats()).toMatchObject({ misses: 1, hits: 2 });
  });

  it('a failed load is not cached', async () => {
    const c = new TileCache<Uint8Array>({ maxBytes: 1000 });
    await expect(c.getOrLoad('k', async () => { throw new Error('disk'); })).rejects.toThrow('disk');
    expect(await c.getOrLoad('k', async () => blob(3))).toHaveLength(3);
  });

  it('memory stays bounded over a long scan (200 distinct 1 MiB tiles, 8 MiB budget)', async () => {
    const c = new TileCache<Uint8Array>({ maxBytes: 8 << 20 });
    for (let i = 0; i < 200; i++) await c.getOrLoad(`t${i}`, async () => blob(1 << 20));
    expect(c.stats().bytes).toBeLessThanOrEqual(8 << 20);
    expect(c.stats().entries).toBe(8);
  });

  it('setMaxBytes changes the budget: a smaller one evicts the least recently used at once, a larger one keeps more', () => {
    const c = new TileCache<Uint8Array>({ maxBytes: 300 });
    for (const k of ['a', 'b', 'c']) c.set(k, blob(100));
    c.setMaxBytes(200);
    expect(c.has('a')).toBe(false);
    expect(c.stats()).toMatchObject({ maxBytes: 200, bytes: 200, evictions: 1 });
    c.setMaxBytes(400);
    c.set('d', blob(100));
    c.set('e', blob(100));
    expect(['b', 'c', 'd', 'e'].every((k) => c.has(k))).toBe(true);
    expect(() => c.setMaxBytes(-1)).toThrow('maxBytes');
  });
});
