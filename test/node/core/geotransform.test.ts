// GeoTIFF tags → GeoTransform: GDAL autotest values, GDAL-written files, pixel ↔ map round trips.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SeamtallyError } from '../../../web/core/errors.ts';
import { readGeoKeys } from '../../../web/core/geokeys.ts';
import {
  cornerCoordinates, geoTransformFromTags, invertGeoTransform, mapBoxToPixelBox, mapToPixel, pixelBoxToMapBox, pixelToMap,
} from '../../../web/core/geotransform.ts';
import { gdalInfo, makeGdalGeoTiffs, readGeoTiffTags, type GdalFixture } from '../../fixtures/gdal/make-geotiffs.ts';

function kindOf(fn: () => unknown): string {
  try {
    fn();
  } catch (e) {
    return e instanceof SeamtallyError ? e.kind : 'not a SeamtallyError';
  }
  return 'no error';
}

describe('GDAL autotest values', () => {
  // Source (from memory): GDAL autotest gcore/data/byte.tif has tiepoint (0,0)→(440720, 3751320), pixel scale 60 m,
  // PixelIsArea, and gdalinfo reports GeoTransform 440720,60,0,3751320,0,-60. Its PixelIsPoint twin
  // (byte_point.tif) stores the same tiepoint; GDAL (GTIFF_POINT_GEO_IGNORE=FALSE, the default) reports 440690,…,3751350.
  const tags = { modelPixelScale: [60, 60, 0], modelTiepoint: [0, 0, 0, 440720, 3751320, 0] };
  it('byte.tif', () => {
    expect(geoTransformFromTags(tags, 'PixelIsArea')).toEqual([440720, 60, 0, 3751320, 0, -60]);
  });
  it('byte_point.tif: half-pixel shift', () => {
    expect(geoTransformFromTags(tags, 'PixelIsPoint')).toEqual([440690, 60, 0, 3751350, 0, -60]);
  });
  it('GTIFF_POINT_GEO_IGNORE=TRUE behaviour on request', () => {
    expect(geoTransformFromTags(tags, 'PixelIsPoint', { pointGeoIgnore: true })).toEqual([440720, 60, 0, 3751320, 0, -60]);
  });
});

describe('agrees with gdalinfo on GeoTIFFs written by GDAL', () => {
  let dir = '';
  let fixtures: GdalFixture[] = [];
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'seamtally-gt-'));
    fixtures = makeGdalGeoTiffs(dir);
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('geoTransform and corner coordinates within 1e-6 (source: gdalinfo -json of Debian gdal-bin)', async () => {
    let rotatedSeen = 0;
    let pointSeen = 0;
    for (const f of fixtures) {
      const info = gdalInfo(f.path);
      const r = await readGeoTiffTags(f.path);
      const keys = readGeoKeys(r.geoKeys);
      if (r.tags.modelTransformation) rotatedSeen++;
      if (keys.rasterType === 'PixelIsPoint') pointSeen++;
      expect(keys.rasterType === 'PixelIsPoint', f.name).toBe(info.metadata?.['']?.AREA_OR_POINT === 'Point');
      const gt = geoTransformFromTags(r.tags, keys.rasterType);
      gt.forEach((v, i) => expect(Math.abs(v - info.geoTransform[i]), `${f.name} gt[${i}]`).toBeLessThan(1e-6));
      const corners = cornerCoordinates(gt, r.widthPx, r.heightPx);
      for (const k of ['upperLeft', 'lowerLeft', 'lowerRight', 'upperRight', 'center'] as const) {
        expect(Math.abs(corners[k][0] - info.cornerCoordinates[k][0]), `${f.name} ${k} x`).toBeLessThan(1e-6);
        expect(Math.abs(corners[k][1] - info.cornerCoordinates[k][1]), `${f.name} ${k} y`).toBeLessThan(1e-6);
      }
    }
    expect(rotatedSeen).toBe(2); // both rotated files were written with ModelTransformation
    expect(pointSeen).toBe(4);
  });

  it('the byte_point twin written by GDAL gives 440690 / 3751350', async () => {
    const f = fixtures.find((x) => x.name === 'byte-point-like')!;
    const r = await readGeoTiffTags(f.path);
    expect(Array.from(r.tags.modelTiepoint!).slice(3, 5)).toEqual([440720, 3751320]);
    expect(geoTransformFromTags(r.tags, readGeoKeys(r.geoKeys).rasterType)).toEqual([440690, 60, 0, 3751350, 0, -60]);
  });
});

describe('pixel ↔ map', () => {
  const gt = [440720, 50, 10, 3751320, 8, -50] as const;
  it('inverse composes to identity, rotated and sheared', () => {
    const inv = invertGeoTransform(gt);
    for (const [x, y] of [[0, 0], [40, 30], [12.25, 7.5], [-3, 100]]) {
      const m = pixelToMap(gt, x, y);
      const back = mapToPixel(gt, m[0], m[1], inv);
      expect(back[0]).toBeCloseTo(x, 9);
      expect(back[1]).toBeCloseTo(y, 9);
    }
  });
  it('box conversions contain the mapped corners', () => {
    const mb = pixelBoxToMapBox(gt, { minXPx: 0, minYPx: 0, maxXPx: 40, maxYPx: 30 });
    expect(mb).toEqual({ minX: 440720, minY: 3751320 - 1500, maxX: 440720 + 2000 + 300, maxY: 3751320 + 320 });
    const pb = mapBoxToPixelBox([100, 1, 0, 200, 0, -1], { minX: 110, minY: 150, maxX: 120, maxY: 190 });
    expect(pb).toEqual({ minXPx: 10, minYPx: 10, maxXPx: 20, maxYPx: 50 });
  });
  it('GCP-only and missing tags are typed errors', () => {
    expect(() => geoTransformFromTags({ modelTiepoint: [0, 0, 0, 1, 2, 0, 10, 10, 0, 5, 6, 0] }, 'PixelIsArea')).toThrow(SeamtallyError);
    expect(kindOf(() => geoTransformFromTags({ modelTiepoint: [0, 0, 0, 1, 2, 0, 10, 10, 0, 5, 6, 0] }, 'PixelIsArea'))).toBe('unsupported-raster');
    expect(kindOf(() => geoTransformFromTags({}, 'PixelIsArea'))).toBe('not-georeferenced');
  });
});
