// gdalinfo (Debian gdal-bin, the outside reference) must report what our COG writer put in the file, for every
// band layout and bit depth: size, CRS EPSG, geotransform, nodata, band count and type, tiles, overviews, date.
import { describe, expect, it, beforeAll, afterAll } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { makeSceneParams, BAND_LAYOUTS, BIT_DEPTHS, type SceneParams } from '../../../synth/scene-params.ts';
import { synthToDir } from '../../../cli/synth.ts';
import { pyramidLevels } from '../../../synth/cog-writer.ts';

let dir: string;
beforeAll(() => { dir = mkdtempSync(join(tmpdir(), 'seamtally-cog-')); });
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function gdalinfo(path: string): any {
  return JSON.parse(execFileSync('gdalinfo', ['-json', path], { encoding: 'utf8' }));
}

/** Check gdalinfo's report against the parameters the file was written from. */
function checkAgainstGdal(p: SceneParams, path: string, bandCount: number): void {
  const info = gdalinfo(path);
  expect(info.driverShortName).toBe('GTiff');
  expect(info.size).toEqual([p.widthPx, p.heightPx]);
  // GDAL geotransform order: [x0, dx, rx, y0, ry, dy] (GDAL data model docs); PixelIsArea, north-up.
  expect(info.geoTransform[0]).toBeCloseTo(p.originXM, 6);
  expect(info.geoTransform[1]).toBeCloseTo(p.gsdM, 9);
  expect(info.geoTransform[2]).toBe(0);
  expect(info.geoTransform[3]).toBeCloseTo(p.originYM, 6);
  expect(info.geoTransform[4]).toBe(0);
  expect(info.geoTransform[5]).toBeCloseTo(-p.gsdM, 9);
  expect(info.stac['proj:epsg']).toBe(p.epsg);
  expect(info.coordinateSystem.wkt).toContain(`ID["EPSG",${p.epsg}]`);
  expect(info.metadata[''].AREA_OR_POINT).toBe('Area');
  expect(info.metadata[''].TIFFTAG_DATETIME).toBe(`${p.date.replace(/-/g, ':')} 10:30:00`);
  expect(info.metadata.IMAGE_STRUCTURE.COMPRESSION).toBe('DEFLATE');
  // PlanarConfiguration=1 (chunky); GDAL names a one-band file's interleave BAND, where the two are the same thing.
  if (bandCount > 1) expect(info.metadata.IMAGE_STRUCTURE.INTERLEAVE).toBe('PIXEL');
  expect(info.bands).toHaveLength(bandCount);
  const levels = pyramidLevels(p.widthPx, p.heightPx, p.tilePx);
  expect(levels.length).toBeGreaterThan(1);
  for (const b of info.bands) {
    expect(b.type).toBe(p.bits === 8 ? 'Byte' : 'UInt16');
    expect(b.noDataValue).toBe(0);
    expect(b.block).toEqual([p.tilePx, p.tilePx]);
    expect(b.overviews.map((o: { size: number[] }) => o.size)).toEqual(levels.slice(1).map((l) => [l.widthPx, l.heightPx]));
  }
}

describe('COG writer vs gdalinfo', () => {
  const bandCount = { rgb: 3, rgbn: 4, pan: 1, '8': 8 } as const;
  for (const bands of BAND_LAYOUTS) {
    for (const bits of BIT_DEPTHS) {
      it(`${bands} ${bits}-bit`, () => {
        const p = makeSceneParams({ seed: 3, gsdM: 0.6, widthPx: 300, heightPx: 260, bands, bits, tilePx: 128, name: `s-${bands}-${bits}`, date: '2023-07-09' });
        synthToDir(dir, p);
        checkAgainstGdal(p, join(dir, `${p.name}.tif`), bandCount[bands]);
        // Colour interpretation as TIFF 6.0 defines Photometric: RGB for rgb/rgbn, gray (MinIsBlack) otherwise.
        const info = gdalinfo(join(dir, `${p.name}.tif`));
        expect(info.bands[0].colorInterpretation).toBe(bands === 'rgb' || bands === 'rgbn' ? 'Red' : 'Gray');
        expect(info.bands.map((b: { description: string }) => b.description)[0]).toBe({ rgb: 'Red', rgbn: 'Red', pan: 'Panchromatic', '8': 'Coastal' }[bands]);
      });
    }
  }

  it('BigTIFF flavour is read by GDAL the same way', () => {
    const p = makeSceneParams({ seed: 4, gsdM: 0.5, widthPx: 200, heightPx: 200, tilePx: 64, name: 'big' });
    synthToDir(dir, p, { flavour: 'bigtiff' });
    const path = join(dir, 'big.tif');
    const head = readFileSync(path).subarray(0, 4);
    expect([...head]).toEqual([0x49, 0x49, 43, 0]); // BigTIFF magic (BigTIFF design note: version 43)
    checkAgainstGdal(p, path, 3);
  });

  it('GDAL decodes every tile without error and its checksum matches a classic-TIFF twin', () => {
    const p = makeSceneParams({ seed: 5, gsdM: 0.4, widthPx: 333, heightPx: 201, tilePx: 64, name: 'twin-a' });
    synthToDir(dir, p);
    synthToDir(dir, { ...p, name: 'twin-b' }, { flavour: 'bigtiff' });
    const sum = (f: string) => execFileSync('gdalinfo', ['-checksum', join(dir, f)], { encoding: 'utf8' }).match(/[Cc]hecksum[=:][^\n]*/g);
    const a = sum('twin-a.tif');
    expect(a).toHaveLength(3 * 2); // per band: "Checksum=" and "Overviews checksum: …" (167×101, 84×51, 42×26)
    expect(a!.filter((l) => l.startsWith('checksum:')).every((l) => l.split(',').length === 3)).toBe(true);
    expect(sum('twin-b.tif')).toEqual(a);
  });
});
