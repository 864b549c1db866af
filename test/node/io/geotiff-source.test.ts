// geotiff.js scene source on GeoTIFFs written by GDAL: windows match the raw samples, tiles decode once, errors typed.
import { mkdtempSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { AUTO_CACHE_MIN_BYTES, autoCacheBytes, openGeoTiffBlob, openGeoTiffPath, sourceCacheStats } from '../../../web/io/geotiff-source.ts';
import { writeGeoTiff } from '../../fixtures/gdal-scenes.ts';
import { SeamtallyError } from '../../../web/core/errors.ts';

const dir = mkdtempSync(join(tmpdir(), 'seamtally-src-'));
const W = 150, H = 110, B = 3;
const data = new Uint8Array(W * H * B);
for (let b = 0; b < B; b++) for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) data[b * W * H + y * W + x] = (x * 7 + y * 13 + b * 50) & 255;

function open(path: string) {
  return openGeoTiffPath(path, { byteLength: statSync(path).size, head: readFileSync(path).subarray(0, 8) });
}

describe('geotiff source (GDAL-written fixtures)', () => {
  const tiled = writeGeoTiff(join(dir, 'tiled.tif'), { widthPx: W, heightPx: H, bandCount: B, dtype: 'uint8', data }, {
    epsg: 32633, ulX: 500000, ulY: 5300000, gsdM: 0.3, blockPx: 32, compress: 'DEFLATE', overviews: [2, 4], nodata: 0,
    extraArgs: ['-mo', 'TIFFTAG_DATETIME=2024:05:17 10:30:00'],
  });
  const stripped = writeGeoTiff(join(dir, 'strips.tif'), { widthPx: W, heightPx: H, bandCount: B, dtype: 'uint8', data }, {
    epsg: 32633, ulX: 500000, ulY: 5300000, gsdM: 0.3, compress: 'NONE',
  });

  for (const [label, path] of [['tiled DEFLATE', tiled], ['stripped', stripped]] as const) {
    it(`${label}: windows equal the raw samples, outside filled`, async () => {
      const src = await open(path);
      expect(src.info.widthPx).toBe(W);
      expect(src.info.bandCount).toBe(B);
      const win = { minXPx: -5, minYPx: 40, maxXPx: 77, maxYPx: 115 };
      const r = await src.readWindow(win);
      const fill = src.info.nodata ?? 0;
      for (let b = 0; b < B; b++) {
        for (let y = win.minYPx; y < win.maxYPx; y++) {
          for (let x = win.minXPx; x < win.maxXPx; x++) {
            const got = r.bands[b][(y - win.minYPx) * r.widthPx + (x - win.minXPx)];
            const want = x < 0 || y >= H ? fill : data[b * W * H + y * W + x];
            if (got !== want) throw new Error(`band ${b} (${x},${y}): ${got} != ${want}`);
          }
        }
      }
      expect(r.outsideFilled).toBe(true);
      await src.close();
    });
  }

  // Layouts GDAL writes (creation options from https://gdal.org/drivers/raster/gtiff.html): each must read back the
  // exact samples, whether through the fast block decoder or geotiff's general path (big-endian, YCbCr...).
  const layouts: { name: string; dtype: 'uint8' | 'uint16' | 'float32'; co: string[] }[] = [
    { name: 'uint16 DEFLATE predictor 2, tiled', dtype: 'uint16', co: ['-co', 'TILED=YES', '-co', 'BLOCKXSIZE=48', '-co', 'BLOCKYSIZE=32', '-co', 'COMPRESS=DEFLATE', '-co', 'PREDICTOR=2'] },
    { name: 'uint8 LZW band-interleaved (planar 2), tiled', dtype: 'uint8', co: ['-co', 'TILED=YES', '-co', 'BLOCKXSIZE=32', '-co', 'BLOCKYSIZE=32', '-co', 'COMPRESS=LZW', '-co', 'INTERLEAVE=BAND'] },
    { name: 'float32 strips of 7 rows, predictor 3', dtype: 'float32', co: ['-co', 'BLOCKYSIZE=7', '-co', 'COMPRESS=DEFLATE', '-co', 'PREDICTOR=3'] },
    { name: 'uint16 big-endian (general path)', dtype: 'uint16', co: ['-co', 'ENDIANNESS=BIG', '-co', 'TILED=YES', '-co', 'BLOCKXSIZE=32', '-co', 'BLOCKYSIZE=32'] },
  ];
  for (const l of layouts) {
    it(`layout: ${l.name}`, async () => {
      const n = W * H * B;
      const arr = l.dtype === 'uint8' ? new Uint8Array(n) : l.dtype === 'uint16' ? new Uint16Array(n) : new Float32Array(n);
      for (let i = 0; i < n; i++) arr[i] = l.dtype === 'float32' ? Math.sin(i) * 1000 : l.dtype === 'uint16' ? (i * 977) % 4096 : (i * 31) & 255;
      const path = writeGeoTiff(join(dir, `${l.name.replace(/\W+/g, '_')}.tif`), { widthPx: W, heightPx: H, bandCount: B, dtype: l.dtype, data: arr }, {
        epsg: 32633, ulX: 500000, ulY: 5300000, gsdM: 0.3, extraArgs: l.co,
      });
      const src = await open(path);
      const win = { minXPx: 13, minYPx: 5, maxXPx: 140, maxYPx: 101 };
      const r = await src.readWindow(win);
      for (let b = 0; b < B; b++) for (let y = win.minYPx; y < win.maxYPx; y++) for (let x = win.minXPx; x < win.maxXPx; x++) {
        const got = r.bands[b][(y - win.minYPx) * r.widthPx + x - win.minXPx];
        const want = arr[b * W * H + y * W + x];
        if (got !== want) throw new Error(`${l.name} band ${b} (${x},${y}): ${got} != ${want}`);
      }
      await src.close();
    });
  }

  it('reads metadata: tile size, overviews (as gdalinfo lists them), nodata, date', async () => {
    const src = await open(tiled);
    // Outside reference: gdalinfo -json (Debian gdal-bin) of the same file.
    const gi = JSON.parse(execFileSync('gdalinfo', ['-json', tiled]).toString());
    expect([src.info.tileWidthPx, src.info.tileHeightPx]).toEqual(gi.bands[0].block);
    expect(src.info.overviews.map((o) => [o.widthPx, o.heightPx])).toEqual(gi.bands[0].overviews.map((o: { size: number[] }) => o.size));
    expect(src.info.nodata).toBe(gi.bands[0].noDataValue);
    expect(src.info.acquisitionDate).toBe('2024-05-17');
    const ov = await src.readWindow({ minXPx: 0, minYPx: 0, maxXPx: src.info.overviews[1].widthPx, maxYPx: src.info.overviews[1].heightPx }, { overviewLevel: 2 });
    expect(ov.widthPx).toBe(Math.ceil(W / 4));
    await src.close();
  });

  it('overlapping windows decode each file tile once', async () => {
    const src = await open(tiled);
    for (let x = 0; x + 64 <= W; x += 16) await src.readWindow({ minXPx: x, minYPx: 0, maxXPx: x + 64, maxYPx: 64 });
    const st = sourceCacheStats(src)!;
    // 150 px wide, 32 px tiles: columns 0..4, rows 0..1 → 10 distinct file tiles.
    expect(st.misses).toBe(10);
    expect(st.hits).toBeGreaterThan(0);
    await src.close();
  });

  it("the 'auto' budget grows to the row band of the windows read; a fixed budget stays", async () => {
    const auto = await open(tiled);
    await auto.readWindow({ minXPx: 0, minYPx: 0, maxXPx: 64, maxYPx: 64 });
    // 150 px wide, 32 px tiles: 5 columns across; the window touches 2 × 2 file tiles of 32² × 3 bytes
    expect(sourceCacheStats(auto)!.maxBytes).toBe(Math.max(AUTO_CACHE_MIN_BYTES, (5 + 2) * 2 * 32 * 32 * 3));
    await auto.close();
    const fixed = await openGeoTiffPath(tiled, { cacheBytes: 4096 });
    for (let x = 0; x + 64 <= W; x += 16) await fixed.readWindow({ minXPx: x, minYPx: 0, maxXPx: x + 64, maxYPx: 64 });
    expect(sourceCacheStats(fixed)!).toMatchObject({ maxBytes: 4096 });
    expect(sourceCacheStats(fixed)!.bytes).toBeLessThanOrEqual(4096);
    await fixed.close();
  });

  // Rows: { window's file tiles, cap } → budget. 512² RGB 8-bit file tiles (786 432 B); a 1 474 px read touches 4 × 4.
  const MiB = 2 ** 20, tile = 512 * 512 * 3;
  const budgetRows = [
    { name: '4 000² scene: row band (8 across + 4) × 4 rows', w: { levelCols: 8, cols: 4, rows: 4, blockBytes: tile }, cap: 128 * MiB, want: 48 * tile },
    { name: '16 000² scene, 64 MiB cap: two windows (no reuse across rows)', w: { levelCols: 32, cols: 4, rows: 4, blockBytes: tile }, cap: 64 * MiB, want: 32 * tile },
    { name: '16 000² scene, 128 MiB cap: row band (32 + 4) × 4 = 108 MiB', w: { levelCols: 32, cols: 4, rows: 4, blockBytes: tile }, cap: 128 * MiB, want: 144 * tile },
    { name: 'default cap: 8 000² row band (16 + 4) × 4 = 60 MiB fits', w: { levelCols: 16, cols: 4, rows: 4, blockBytes: tile }, cap: undefined, want: 80 * tile },
    { name: 'default cap: 16 000² → two windows', w: { levelCols: 32, cols: 4, rows: 4, blockBytes: tile }, cap: undefined, want: 32 * tile },
    { name: 'tiny windows: the 8 MiB floor', w: { levelCols: 2, cols: 1, rows: 1, blockBytes: 1024 }, cap: 128 * MiB, want: AUTO_CACHE_MIN_BYTES },
    { name: 'a cap below the floor wins', w: { levelCols: 2, cols: 1, rows: 1, blockBytes: 1024 }, cap: MiB, want: MiB },
  ];
  for (const r of budgetRows) it(`autoCacheBytes: ${r.name}`, () => expect(autoCacheBytes(r.w, r.cap)).toBe(r.want));

  it('a Blob source gives the same pixels', async () => {
    const bytes = readFileSync(tiled);
    const src = await openGeoTiffBlob(new Blob([bytes]), { name: 'tiled.tif' });
    const r = await src.readWindow({ minXPx: 10, minYPx: 10, maxXPx: 20, maxYPx: 12 });
    expect(r.bands[1][0]).toBe(data[W * H + 10 * W + 10]);
  });

  it('typed errors: not a TIFF, truncated, not georeferenced', async () => {
    const txt = join(dir, 'notes.tif');
    writeFileSync(txt, 'hello, this is not an image\n');
    await expect(open(txt)).rejects.toMatchObject({ kind: 'not-tiff' });
    const cut = join(dir, 'cut.tif');
    const full = readFileSync(tiled);
    writeFileSync(cut, full.subarray(0, Math.floor(full.length * 0.6)));
    await expect(open(cut)).rejects.toMatchObject({ kind: 'truncated' });
    const plain = writeGeoTiff(join(dir, 'plain.tif'), { widthPx: W, heightPx: H, bandCount: B, dtype: 'uint8', data });
    const err = await open(plain).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(SeamtallyError);
    expect((err as SeamtallyError).kind).toBe('not-georeferenced');
  });
});
