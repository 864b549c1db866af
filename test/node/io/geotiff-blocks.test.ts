// DEFLATE file blocks through the scene source (web/io/geotiff-blocks.ts → inflate.ts + tiff-predictor.ts): files
// written by Debian gdal-bin (libtiff's zlib encoder, predictors 1/2/3, tiled and stripped, pixel and band
// interleaved) read back as GDAL reads them (gdal_translate -srcwin to raw ENVI) and as the samples written; a tile
// that inflates past its size (a decompression bomb) or short of it ends in the typed 'truncated' error.
import { execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { deflateSync, inflateSync } from 'node:zlib';
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import { SeamtallyError } from '../../../web/core/errors.ts';
import type { SampleArray } from '../../../web/core/scene-source.ts';
import { openGeoTiffBlob } from '../../../web/io/geotiff-source.ts';
import { setSyncInflate } from '../../../web/io/inflate.ts';
import { patchTagValue } from '../../fixtures/bad-input-assets.ts';
import { withTileReplaced, zlibZeros } from '../../fixtures/deflate-bomb.ts';
import { writeGeoTiff, type FixtureDtype } from '../../fixtures/gdal-scenes.ts';

const dir = mkdtempSync(join(tmpdir(), 'seamtally-deflate-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
afterEach(() => setSyncInflate(null));
const GEO = { epsg: 32633, ulX: 500000, ulY: 5000000, gsdM: 0.3, compress: 'DEFLATE' as const };
const ARRAY = { uint8: Uint8Array, uint16: Uint16Array, float32: Float32Array };

/** GDAL's own reading of a window, band-sequential (gdal_translate -srcwin … -of ENVI: raw samples). */
function gdalWindow(path: string, dtype: FixtureDtype, x: number, y: number, w: number, h: number): Uint8Array | Uint16Array | Float32Array {
  const out = join(dir, `gdal-${x}-${y}-${w}-${h}.bin`);
  execFileSync('gdal_translate', ['-q', '-of', 'ENVI', '-co', 'INTERLEAVE=BSQ', '-srcwin', String(x), String(y), String(w), String(h), path, out], { stdio: ['ignore', 'ignore', 'pipe'] });
  const b = readFileSync(out);
  return new ARRAY[dtype](b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
}

/** Samples with noise (so the predictor's differences matter) and smooth ramps; float32 has signs, fractions, NaN. */
function samples(dtype: FixtureDtype, n: number, w: number): Uint8Array | Uint16Array | Float32Array {
  let s = 11;
  const rnd = () => { s ^= s << 13; s >>>= 0; s ^= s >>> 17; s ^= s << 5; s >>>= 0; return s; };
  if (dtype === 'uint8') return new Uint8Array(n).map((_, i) => ((i % w) < 40 ? rnd() & 0xff : ((i % w) + ((i / w) | 0)) & 0xff));
  if (dtype === 'uint16') return new Uint16Array(n).map((_, i) => ((i % w) < 40 ? rnd() & 0xffff : (i * 37) & 0xffff));
  return new Float32Array(n).map((_, i) => (i === 5 ? NaN : (i % w) < 40 ? (rnd() / 2 ** 31 - 1) * 1e3 : Math.sin(i / 50) * 0.8));
}

const sameSamples = (a: ArrayLike<number>, b: ArrayLike<number>) => a.length === b.length && Array.prototype.every.call(a, (v: number, i: number) => Object.is(v, b[i]));

describe('GDAL-written DEFLATE reads back as GDAL reads it', () => {
  const w = 300, h = 201; // edge tiles and a short last strip
  const cases: { name: string; dtype: FixtureDtype; bands: number; blockPx?: number; args: string[] }[] = [
    { name: 'tiled uint8 RGB, PREDICTOR=2', dtype: 'uint8', bands: 3, blockPx: 128, args: ['-co', 'PREDICTOR=2'] },
    { name: 'tiled uint8 RGB, no predictor', dtype: 'uint8', bands: 3, blockPx: 128, args: [] },
    // the one-pass de-interleave that undoes Predictor 2 (unpack-block.ts): 4 bands (RGB+NIR) and 1 band (pan)
    { name: 'tiled uint16 4 bands, PREDICTOR=2', dtype: 'uint16', bands: 4, blockPx: 64, args: ['-co', 'PREDICTOR=2'] },
    { name: 'tiled uint8 1 band, PREDICTOR=2', dtype: 'uint8', bands: 1, blockPx: 128, args: ['-co', 'PREDICTOR=2'] },
    { name: 'stripped uint8 RGB, PREDICTOR=2, 7 rows per strip', dtype: 'uint8', bands: 3, args: ['-co', 'PREDICTOR=2', '-co', 'BLOCKYSIZE=7'] },
    { name: 'stripped uint16, 2 bands, PREDICTOR=2, 16 rows per strip', dtype: 'uint16', bands: 2, args: ['-co', 'PREDICTOR=2', '-co', 'BLOCKYSIZE=16'] },
    { name: 'tiled uint16, PREDICTOR=2, band-interleaved', dtype: 'uint16', bands: 2, blockPx: 64, args: ['-co', 'PREDICTOR=2', '-co', 'INTERLEAVE=BAND'] },
    { name: 'tiled float32, 3 bands, PREDICTOR=3', dtype: 'float32', bands: 3, blockPx: 128, args: ['-co', 'PREDICTOR=3'] },
    // big-endian 16-bit samples go through geotiff's readRasters, whose DEFLATE decoder is the bounded one (inflate.ts);
    // not with PREDICTOR=2, which geotiff.js 3.0.5 undoes before swapping the bytes (wrong samples, also with pako)
    { name: 'tiled uint16 big-endian (geotiff.js general path)', dtype: 'uint16', bands: 2, blockPx: 64, args: ['-co', 'ENDIANNESS=BIG'] },
    { name: 'stripped float32, PREDICTOR=3, band-interleaved', dtype: 'float32', bands: 2, args: ['-co', 'PREDICTOR=3', '-co', 'INTERLEAVE=BAND', '-co', 'BLOCKYSIZE=10'] },
  ];
  for (const c of cases) {
    for (const inflate of ['DecompressionStream', 'node:zlib'] as const) {
      it(`${c.name} (${inflate})`, async () => {
        if (inflate === 'node:zlib') setSyncInflate((bytes, maxOutBytes) => inflateSync(bytes, { maxOutputLength: maxOutBytes }));
        const data = samples(c.dtype, w * h * c.bands, w);
        const p = join(dir, `${c.name.replace(/\W+/g, '-')}.tif`);
        if (!existsSync(p)) writeGeoTiff(p, { widthPx: w, heightPx: h, bandCount: c.bands, dtype: c.dtype, data }, { ...GEO, blockPx: c.blockPx, extraArgs: c.args });
        const src = await openGeoTiffBlob(new Blob([readFileSync(p)]), { name: 'deflate.tif' });
        expect(src.info.dtype).toBe(c.dtype);
        const all = await src.readWindow({ minXPx: 0, minYPx: 0, maxXPx: w, maxYPx: h });
        for (let b = 0; b < c.bands; b++) expect(sameSamples(all.bands[b], data.subarray(b * w * h, (b + 1) * w * h)), `band ${b}`).toBe(true);
        // a window across block edges, against GDAL's reading of the same window
        const [x, y, ww, wh] = [57, 121, 190, 80];
        const win = await src.readWindow({ minXPx: x, minYPx: y, maxXPx: x + ww, maxYPx: y + wh });
        const ref = gdalWindow(p, c.dtype, x, y, ww, wh);
        for (let b = 0; b < c.bands; b++) expect(sameSamples(win.bands[b] as SampleArray, ref.subarray(b * ww * wh, (b + 1) * ww * wh)), `band ${b} of the window`).toBe(true);
        await src.close();
      });
    }
  }

  it('Compression 32946 (the old Deflate code) decodes the same stream', async () => {
    const data = samples('uint8', 64 * 64 * 3, 64);
    const p = writeGeoTiff(join(dir, 'c32946.tif'), { widthPx: 64, heightPx: 64, bandCount: 3, dtype: 'uint8', data }, { ...GEO, blockPx: 64, extraArgs: ['-co', 'PREDICTOR=2'] });
    const src = await openGeoTiffBlob(new Blob([new Uint8Array(patchTagValue(readFileSync(p), 259, 32946))]), { name: 'old.tif' });
    const win = await src.readWindow({ minXPx: 0, minYPx: 0, maxXPx: 64, maxYPx: 64 });
    for (let b = 0; b < 3; b++) expect(sameSamples(win.bands[b], data.subarray(b * 4096, (b + 1) * 4096))).toBe(true);
    await src.close();
  });
});

describe('a tile that inflates to the wrong size', () => {
  // one 256 × 256 uint8 tile (64 KiB), written by GDAL, its bytes then replaced
  const tile = () => readFileSync(writeGeoTiff(join(dir, 'one-tile.tif'), { widthPx: 256, heightPx: 256, bandCount: 1, dtype: 'uint8', data: samples('uint8', 65536, 256) }, { ...GEO, blockPx: 256 }));
  /** The same as big-endian uint16 (128 KiB), which geotiff.js's general path reads. */
  const bigEndianTile = () => readFileSync(writeGeoTiff(join(dir, 'one-tile-be.tif'), { widthPx: 256, heightPx: 256, bandCount: 1, dtype: 'uint16', data: samples('uint16', 65536, 256) }, { ...GEO, blockPx: 256, extraArgs: ['-co', 'ENDIANNESS=BIG'] }));
  async function readError(bytes: Uint8Array): Promise<unknown> {
    const src = await openGeoTiffBlob(new Blob([new Uint8Array(bytes)]), { name: 'bomb.tif' });
    return src.readWindow({ minXPx: 0, minYPx: 0, maxXPx: 256, maxYPx: 256 }).then(() => null, (e: unknown) => e);
  }
  const expectDamaged = (err: unknown) => {
    expect(err).toBeInstanceOf(SeamtallyError);
    expect((err as SeamtallyError).kind).toBe('truncated');
    expect((err as SeamtallyError).message).toBe('"bomb.tif" is damaged (its compressed pixel data cannot be decoded): copy or download the file again, or check it with gdalinfo -checksum.');
  };

  for (const inflate of ['DecompressionStream', 'node:zlib'] as const) {
    it(`200 MiB of zeros in a 64 KiB tile: the typed 'truncated' error, without holding 200 MiB (${inflate})`, async () => {
      if (inflate === 'node:zlib') setSyncInflate((bytes, maxOutBytes) => inflateSync(bytes, { maxOutputLength: maxOutBytes }));
      const bomb = withTileReplaced(tile(), zlibZeros(200));
      const peak = trackArrayBuffers();
      const err = await readError(bomb);
      const grewBytes = peak.stop();
      expectDamaged(err);
      // geotiff's pako path held all 200 MiB; the bound keeps it to the tile plus one input piece (≤ ~17 MiB)
      expect(grewBytes).toBeLessThan(64 * 2 ** 20);
    });
  }

  it('200 MiB of zeros in a big-endian tile (geotiff.js general path): the same typed error', async () => {
    const peak = trackArrayBuffers();
    const err = await readError(withTileReplaced(bigEndianTile(), zlibZeros(200)));
    const grewBytes = peak.stop();
    expectDamaged(err);
    expect(grewBytes).toBeLessThan(64 * 2 ** 20);
  });

  it('a stream that inflates to half the tile (libtiff: "Not enough data") is damage too', async () => {
    expectDamaged(await readError(withTileReplaced(tile(), new Uint8Array(deflateSync(new Uint8Array(32768))))));
  });
});

/** Highest growth of ArrayBuffer memory (process.memoryUsage().arrayBuffers) sampled every turn of the event loop. */
function trackArrayBuffers(): { stop(): number } {
  const base = process.memoryUsage().arrayBuffers;
  let peak = base;
  let on = true;
  const sample = () => { peak = Math.max(peak, process.memoryUsage().arrayBuffers); if (on) setImmediate(sample); };
  sample();
  return { stop() { on = false; sample(); return peak - base; } };
}
