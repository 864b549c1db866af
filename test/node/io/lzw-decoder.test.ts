// The bounded LZW decoder: GDAL-written LZW GeoTIFFs (Debian gdal-bin's libtiff encoder, with and without the
// horizontal predictor, tiled and stripped) decode to exactly the samples written; damaged streams fail fast, bounded.
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { SeamtallyError } from '../../../web/core/errors.ts';
import { openGeoTiffBlob } from '../../../web/io/geotiff-source.ts';
import { decodeLzw, decodedBlockBytes } from '../../../web/io/lzw-decoder.ts';
import { writeGeoTiff } from '../../fixtures/gdal-scenes.ts';

const dir = mkdtempSync(join(tmpdir(), 'seamtally-lzw-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Pack codes MSB-first with the TIFF LZW width rule (9 bits, +1 when the next free code + 1 reaches 2^width). */
function pack(codes: number[]): Uint8Array {
  const bits: number[] = [];
  let width = 9, next = 258, afterClear = false;
  for (const c of codes) {
    for (let b = width - 1; b >= 0; b--) bits.push((c >> b) & 1);
    if (c === 256) { width = 9; next = 258; afterClear = true; continue; }
    if (c !== 257 && !afterClear && next < 4096) next++; // the first code after a clear defines nothing
    afterClear = false;
    if (next + 1 >= 1 << width && width < 12) width++;
  }
  const out = new Uint8Array(Math.ceil(bits.length / 8));
  bits.forEach((v, i) => { out[i >> 3] |= v << (7 - (i & 7)); });
  return out;
}

describe('GDAL-written LZW decodes to the samples written', () => {
  const w = 300, h = 200;
  let s = 7;
  const rnd = () => { s ^= s << 13; s >>>= 0; s ^= s >>> 17; s ^= s << 5; s >>>= 0; return s; };
  // noise in the west (fills the 4096-code dictionary, forcing clear codes), smooth ramps in the east
  const u8 = new Uint8Array(w * h * 3).map((_, i) => ((i % w) < 120 ? rnd() & 0xff : ((i % w) + ((i / w) | 0)) & 0xff));
  const u16 = new Uint16Array(w * h * 2).map((_, i) => ((i % w) < 90 ? rnd() & 0xfff : (i * 7) & 0xfff));
  const cases = [
    { name: 'tiled uint8 RGB', data: u8, bands: 3, dtype: 'uint8' as const, opts: { compress: 'LZW' as const, blockPx: 128 } },
    { name: 'stripped uint16, PREDICTOR=2', data: u16, bands: 2, dtype: 'uint16' as const, opts: { compress: 'LZW' as const, extraArgs: ['-co', 'PREDICTOR=2'] } },
    { name: 'tiled uint16, PREDICTOR=2, band-interleaved', data: u16, bands: 2, dtype: 'uint16' as const, opts: { compress: 'LZW' as const, blockPx: 64, extraArgs: ['-co', 'PREDICTOR=2', '-co', 'INTERLEAVE=BAND'] } },
  ];
  for (const c of cases) {
    it(c.name, async () => {
      const p = writeGeoTiff(join(dir, `${c.name.replace(/\W+/g, '-')}.tif`), { widthPx: w, heightPx: h, bandCount: c.bands, dtype: c.dtype, data: c.data },
        { epsg: 32633, ulX: 500000, ulY: 5000000, gsdM: 0.3, ...c.opts });
      const src = await openGeoTiffBlob(new Blob([readFileSync(p)]), { name: 'lzw.tif' });
      const win = await src.readWindow({ minXPx: 0, minYPx: 0, maxXPx: w, maxYPx: h });
      for (let b = 0; b < c.bands; b++) expect(Array.from(win.bands[b]), `band ${b}`).toEqual(Array.from(c.data.subarray(b * w * h, (b + 1) * w * h)));
      await src.close();
    });
  }
});

describe('decodeLzw on hand-made streams', () => {
  it('literals, a back-reference and the code being defined (KwKwK case)', () => {
    // clear, 'A'(65), 'B'(66), 258 (= "AB"), 260 (= the code being defined: "AB" + "A"), EOI
    expect(Array.from(decodeLzw(pack([256, 65, 66, 258, 260, 257]), 100))).toEqual([65, 66, 65, 66, 65, 66, 65]);
  });

  it('an undefined code is damage, not a hang', () => {
    expect(() => decodeLzw(pack([256, 65, 300, 257]), 100)).toThrow(/damaged LZW data: code 300 is not defined yet \(next free code 258\)/);
  });

  it('output beyond the block size stops with an error (no unbounded growth)', () => {
    const codes = [256, ...Array.from({ length: 50 }, () => 65), 257];
    expect(() => decodeLzw(pack(codes), 10)).toThrow(/more than the 10 bytes/);
    expect(decodeLzw(pack(codes), 50)).toHaveLength(50);
  });

  it('a long run without clear codes fills all 4096 codes and keeps decoding', () => {
    // 0, 258, 259, ... each code is the previous string + "0": lengths 1, 2, 3, ... until the table is full
    const codes = [256, 0];
    for (let c = 258; c < 4000; c++) codes.push(c);
    codes.push(257);
    const total = 1 + ((4000 - 258) * (2 + 4000 - 258 + 1)) / 2;
    const out = decodeLzw(pack(codes), total);
    expect(out.length).toBe(total);
    expect(out.every((v) => v === 0)).toBe(true);
  });

  it('block size from decoder parameters (chunky: all samples; planar: one)', () => {
    expect(decodedBlockBytes({ tileWidth: 256, tileHeight: 256, planarConfiguration: 1, bitsPerSample: [8, 8, 8] })).toBe(196608);
    expect(decodedBlockBytes({ tileWidth: 256, tileHeight: 8, planarConfiguration: 2, bitsPerSample: [16, 16] })).toBe(4096);
    expect(decodedBlockBytes({ tileWidth: 10, tileHeight: 3, planarConfiguration: 1, bitsPerSample: [12] })).toBe(45);
  });

  it('a damaged LZW strip in a file ends as a typed "damaged" error through the scene source', async () => {
    const p = writeGeoTiff(join(dir, 'dmg.tif'), { widthPx: 64, heightPx: 64, bandCount: 1, dtype: 'uint8', data: new Uint8Array(4096).map((_, i) => (i * 13) & 0xff) },
      { epsg: 32633, ulX: 500000, ulY: 5000000, gsdM: 0.3, compress: 'LZW' });
    const bytes = new Uint8Array(readFileSync(p));
    for (let i = 400; i < 460; i++) bytes[i] = 0xff; // inside the first strip's data (the IFD and tags come first)
    const src = await openGeoTiffBlob(new Blob([bytes]), { name: 'dmg.tif' });
    const err = await src.readWindow({ minXPx: 0, minYPx: 0, maxXPx: 64, maxYPx: 64 }).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(SeamtallyError);
    expect((err as SeamtallyError).kind).toBe('truncated');
    expect((err as SeamtallyError).message).toMatch(/"dmg\.tif" is damaged/);
  });
});
