// Alpha bands and GDAL internal masks are nodata, as GDAL treats them: on GDAL-written files (an RGBA GeoTIFF with
// ExtraSamples alpha, and an RGB GeoTIFF with an internal mask plus overviews), the pixels whose GDAL mask band
// (gdal_translate -b mask, the outside reference) is 0 read as nodata in every band, the rest keep their values,
// the alpha band is not one of the scene's bands, and the coverage mask (valid-mask.ts) equals GDAL's mask.
import { mkdtempSync, readFileSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { openGeoTiffPath } from '../../../web/io/geotiff-source.ts';
import { readValidMask } from '../../../web/core/valid-mask.ts';
import { writeGeoTiff } from '../../fixtures/gdal-scenes.ts';

const dir = mkdtempSync(join(tmpdir(), 'seamtally-mask-'));
const W = 600, H = 520; // its overview (300 × 260) is the level the coverage mask reads (≥ 256 px on the long side)
// RGB values never 0 (so an unmasked pixel can never look like nodata); alpha 0 in a disc and a left strip
const data = new Uint8Array(W * H * 4);
for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) {
  const i = y * W + x;
  data[i] = 1 + ((x * 7 + y) % 250); data[W * H + i] = 1 + ((x + y * 3) % 250); data[2 * W * H + i] = 1 + ((x * y) % 250);
  data[3 * W * H + i] = x < 37 || (x - 360) ** 2 + (y - 240) ** 2 < 120 ** 2 ? 0 : 255;
}

/** GDAL's mask band of a file at a level (the overview level's mask with -ovr), 0 / 255 per pixel. */
function gdalMask(path: string, ovr?: number): Uint8Array {
  const out = join(dir, `m-${Math.random().toString(36).slice(2)}.raw`);
  execFileSync('gdal_translate', ['-q', '-of', 'ENVI', '-b', 'mask', ...(ovr !== undefined ? ['-ovr', String(ovr)] : []), path, out], { stdio: ['ignore', 'ignore', 'pipe'] });
  return new Uint8Array(readFileSync(out));
}

const open = (p: string) => openGeoTiffPath(p, { byteLength: statSync(p).size, head: readFileSync(p).subarray(0, 8) });

describe('alpha bands and internal masks as nodata', () => {
  const rgba = writeGeoTiff(join(dir, 'rgba.tif'), { widthPx: W, heightPx: H, bandCount: 4, dtype: 'uint8', data }, {
    epsg: 32633, ulX: 500000, ulY: 5300000, gsdM: 0.3, blockPx: 64, compress: 'DEFLATE', extraArgs: ['-co', 'ALPHA=YES'],
  });
  const masked = join(dir, 'masked.tif');
  execFileSync('gdal_translate', ['-q', '--config', 'GDAL_TIFF_INTERNAL_MASK', 'YES', '-b', '1', '-b', '2', '-b', '3', '-mask', '4',
    '-co', 'TILED=YES', '-co', 'BLOCKXSIZE=64', '-co', 'BLOCKYSIZE=64', '-co', 'COMPRESS=DEFLATE', rgba, masked], { stdio: ['ignore', 'ignore', 'pipe'] });
  execFileSync('gdaladdo', ['-q', '--config', 'GDAL_TIFF_INTERNAL_MASK', 'YES', '-r', 'nearest', masked, '2'], { stdio: ['ignore', 'ignore', 'pipe'] });

  for (const [label, path, kind] of [['RGBA (alpha band)', rgba, 'alpha'], ['RGB with an internal mask', masked, 'internal-mask']] as const) {
    it(`${label}: masked pixels read as nodata in every band, the others unchanged`, async () => {
      const src = await open(path);
      expect(src.info.bandCount).toBe(3);
      expect(src.info.maskKind).toBe(kind);
      expect(src.info.nodata).toBe(0);
      const ref = gdalMask(path);
      expect(ref.filter((v) => v === 0).length).toBeGreaterThan(W * H * 0.1); // the reference masks something
      const win = await src.readWindow({ minXPx: 0, minYPx: 0, maxXPx: W, maxYPx: H });
      let mismatches = 0;
      for (let i = 0; i < W * H; i++) {
        for (let b = 0; b < 3; b++) {
          const want = ref[i] === 0 ? 0 : data[b * W * H + i];
          if (win.bands[b][i] !== want) mismatches++;
        }
      }
      expect(mismatches).toBe(0);
      await src.close();
    });
  }

  it('internal mask: the coverage mask from an overview equals GDAL\'s mask of that overview', async () => {
    const src = await open(masked);
    expect(src.info.overviews.length).toBe(1);
    const vm = await readValidMask(src);
    expect([vm.maskWidth, vm.maskHeight]).toEqual([src.info.overviews[0].widthPx, src.info.overviews[0].heightPx]);
    const ref = gdalMask(masked, 0);
    let diff = 0;
    for (let i = 0; i < ref.length; i++) if ((ref[i] !== 0 ? 1 : 0) !== vm.validMask[i]) diff++;
    expect(diff).toBe(0);
    await src.close();
  });
});
