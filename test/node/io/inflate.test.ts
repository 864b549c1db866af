// The bounded inflate (web/io/inflate.ts) on its three paths — the platform's DecompressionStream, fflate when there
// is none, and an injected sync inflate (the CLI's node:zlib) — against streams written by Node's zlib (the zlib
// reference implementation): same bytes back, bombs and damage stopped with 'damaged DEFLATE data' after little input.
import { deflateSync, inflateSync } from 'node:zlib';
import { Unzlib } from 'fflate';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { SeamtallyError } from '../../../web/core/errors.ts';
import { inflateBounded, setSyncInflate } from '../../../web/io/inflate.ts';
import { zlibZeros } from '../../fixtures/deflate-bomb.ts';

const data = new Uint8Array(300_000).map((_, i) => ((i * 7) ^ (i >> 9)) & 0xff);
const z = new Uint8Array(deflateSync(data));
const withJunk = (bytes: Uint8Array, junk: number[]) => { const out = new Uint8Array(bytes.length + junk.length); out.set(bytes); out.set(junk, bytes.length); return out; };
const BOMB_MIB = 200;
const bomb = zlibZeros(BOMB_MIB);
const TILE_BYTES = 512 * 512 * 3;

const PATHS = {
  native: () => {},
  fflate: () => { vi.stubGlobal('DecompressionStream', undefined); },
  sync: () => { setSyncInflate((bytes, maxOutBytes) => inflateSync(bytes, { maxOutputLength: maxOutBytes })); },
};
afterEach(() => {
  vi.unstubAllGlobals();
  vi.restoreAllMocks();
  setSyncInflate(null);
});

/** Byte equality without element-wise diffing of 300 000 entries. */
const same = (a: Uint8Array, b: Uint8Array) => a.length === b.length && Buffer.compare(a, b) === 0;

it('the bomb fixture is a valid zlib stream of zeros, ~1 KiB per MiB (checked with node:zlib at 3 MiB)', () => {
  expect(bomb.length).toBeLessThan(BOMB_MIB * 1100);
  const out = inflateSync(zlibZeros(3)); // verifies the Adler-32 too
  expect(out.length).toBe(3 * 2 ** 20);
  expect(out.every((v) => v === 0)).toBe(true);
});

for (const [name, use] of Object.entries(PATHS)) {
  describe(`inflateBounded, ${name} path`, () => {
    it('returns the bytes node:zlib compressed, also at exactly the bound', async () => {
      use();
      expect(same(await inflateBounded(z, data.length), data)).toBe(true);
      const roomy = await inflateBounded(z, data.length + 100);
      expect(Object.getPrototypeOf(roomy)).toBe(Uint8Array.prototype); // a plain view, also from node:zlib's Buffer
      expect(same(roomy, data)).toBe(true);
    });

    it('ignores bytes after the end of the stream (as zlib and libtiff do)', async () => {
      use();
      expect(same(await inflateBounded(withJunk(z, [1, 2, 3, 4, 5, 6, 7]), data.length), data)).toBe(true);
    });

    it('one byte over the bound is an error naming the bound', async () => {
      use();
      await expect(inflateBounded(z, data.length - 1)).rejects.toThrow(`damaged DEFLATE data: it inflates to more than the ${data.length - 1} bytes of its block`);
    });

    it('a 200 MiB bomb stops at the size of a tile', async () => {
      use();
      await expect(inflateBounded(bomb, TILE_BYTES)).rejects.toThrow(/^damaged DEFLATE data: it inflates to more than the 786432 bytes/);
    });

    it('a cut stream, a wrong header and noise are damage', async () => {
      use();
      await expect(inflateBounded(z.subarray(0, z.length >> 1), data.length)).rejects.toThrow(/^damaged DEFLATE data: /);
      await expect(inflateBounded(withJunk(Uint8Array.of(0x12, 0x34), Array.from(z.subarray(2))), data.length)).rejects.toThrow(/^damaged DEFLATE data: /);
      await expect(inflateBounded(new Uint8Array(5000).map((_, i) => (i * 97 + 13) & 0xff), data.length)).rejects.toThrow(/^damaged DEFLATE data: /);
    });

    it('an aborted signal ends in the typed "cancelled" error', async () => {
      use();
      const ac = new AbortController();
      ac.abort();
      const err = await inflateBounded(z, data.length, ac.signal).catch((e: unknown) => e);
      expect(err).toBeInstanceOf(SeamtallyError);
      expect((err as SeamtallyError).kind).toBe('cancelled');
    });
  });
}

describe('bounded work on a bomb', () => {
  it('native: at most a few 16 KiB pieces of the 200 KiB bomb reach DecompressionStream', async () => {
    const write = vi.spyOn(WritableStreamDefaultWriter.prototype, 'write');
    await expect(inflateBounded(bomb, TILE_BYTES)).rejects.toThrow(/damaged DEFLATE data/);
    const fed = write.mock.calls.reduce((n, [chunk]) => n + (chunk as Uint8Array).length, 0);
    expect(fed).toBeLessThanOrEqual(3 * 16 * 1024);
    expect(fed).toBeLessThan(bomb.length / 4);
  });

  it('fflate: one 16 KiB piece is inflated, then it stops', async () => {
    vi.stubGlobal('DecompressionStream', undefined);
    const push = vi.spyOn(Unzlib.prototype, 'push');
    await expect(inflateBounded(bomb, TILE_BYTES)).rejects.toThrow(/damaged DEFLATE data/);
    expect(push.mock.calls.length).toBe(1);
  });

  it('sync: the injected inflate is asked for no more than the bound', async () => {
    const seen: number[] = [];
    setSyncInflate((bytes, maxOutBytes) => { seen.push(maxOutBytes); return inflateSync(bytes, { maxOutputLength: maxOutBytes }); });
    await expect(inflateBounded(bomb, TILE_BYTES)).rejects.toThrow(/more than the 786432 bytes/);
    expect(seen).toEqual([TILE_BYTES]);
  });
});

it('when the native inflater refuses a stream, fflate decides (Chromium rejects bytes after the end)', async () => {
  // a DecompressionStream that fails every stream, as Chromium's does with "Junk found after end of compressed data."
  class Refusing extends TransformStream<Uint8Array, Uint8Array> {
    constructor() { super({ transform() { throw new TypeError('Junk found after end of compressed data.'); } }); }
  }
  vi.stubGlobal('DecompressionStream', Refusing);
  expect(same(await inflateBounded(withJunk(z, [9, 9]), data.length), data)).toBe(true);
  await expect(inflateBounded(bomb, TILE_BYTES)).rejects.toThrow(/more than the 786432 bytes/);
});
