// GeoKey directory parsing: geotiff.js objects and raw SHORT arrays, from files GDAL wrote; typed CRS errors.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SeamtallyError } from '../../../web/core/errors.ts';
import { decodeGeoKeyDirectory, readGeoKeys } from '../../../web/core/geokeys.ts';
import { makeGdalGeoTiffs, readGeoTiffTags, type GdalFixture } from '../../fixtures/gdal/make-geotiffs.ts';

function errorOf(fn: () => unknown): SeamtallyError {
  try {
    fn();
  } catch (e) {
    if (e instanceof SeamtallyError) return e;
    throw e;
  }
  throw new Error('expected a SeamtallyError');
}

describe('GeoKeys of GDAL-written files (source: GDAL gdal_create / gdal_translate write the keys)', () => {
  let dir = '';
  let fixtures: GdalFixture[] = [];
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'seamtally-gk-'));
    fixtures = makeGdalGeoTiffs(dir);
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('named keys and the raw directory give the EPSG code GDAL was told', async () => {
    for (const f of fixtures) {
      const r = await readGeoTiffTags(f.path);
      const named = readGeoKeys(r.geoKeys);
      const raw = readGeoKeys(r.rawGeoKeyDirectory!);
      expect(named.epsg, f.name).toBe(f.epsg);
      expect(named.isGeographic, f.name).toBe(f.epsg === 4326);
      expect(raw).toEqual(named);
      const decoded = decodeGeoKeyDirectory(r.rawGeoKeyDirectory!, r.geoDoubleParams, r.geoAsciiParams);
      expect(decoded.GTCitationGeoKey ?? decoded.GeogCitationGeoKey).toBe(r.geoKeys.GTCitationGeoKey ?? r.geoKeys.GeogCitationGeoKey);
    }
  });
});

describe('typed errors', () => {
  it('no keys → not-georeferenced', () => {
    expect(errorOf(() => readGeoKeys(undefined)).kind).toBe('not-georeferenced');
    expect(errorOf(() => readGeoKeys({})).kind).toBe('not-georeferenced');
  });
  it('user-defined projected CRS (32767) → unknown-crs naming gdalwarp and proj4', () => {
    const e = errorOf(() => readGeoKeys({ GTModelTypeGeoKey: 1, ProjectedCSTypeGeoKey: 32767, GTCitationGeoKey: 'Local grid' }));
    expect(e.kind).toBe('unknown-crs');
    expect(e.message).toMatch(/gdalwarp -t_srs EPSG:/);
    expect(e.message).toMatch(/proj4/);
    expect(e.message).toMatch(/Local grid/);
  });
  it('user-defined geographic CRS and geocentric model → unknown-crs', () => {
    expect(errorOf(() => readGeoKeys({ GTModelTypeGeoKey: 2, GeographicTypeGeoKey: 32767 })).kind).toBe('unknown-crs');
    expect(errorOf(() => readGeoKeys({ GTModelTypeGeoKey: 3 })).kind).toBe('unknown-crs');
    expect(errorOf(() => readGeoKeys({ GTModelTypeGeoKey: 1 })).kind).toBe('unknown-crs');
  });
  it('raster type: 2 = PixelIsPoint, missing = PixelIsArea (GeoTIFF 1.1 §7.1.2 default)', () => {
    expect(readGeoKeys({ GTModelTypeGeoKey: 1, GTRasterTypeGeoKey: 2, ProjectedCSTypeGeoKey: 32633 }).rasterType).toBe('PixelIsPoint');
    expect(readGeoKeys({ GTModelTypeGeoKey: 2, GeographicTypeGeoKey: 4326 })).toEqual({ epsg: 4326, isGeographic: true, rasterType: 'PixelIsArea' });
  });
  it('raw directory with inline keys (GeoTIFF 1.1 §7.1.3 layout)', () => {
    // header 1,1,0,3 then (id, location, count, value)
    const dir = new Uint16Array([1, 1, 0, 3, 1024, 0, 1, 1, 1025, 0, 1, 2, 3072, 0, 1, 32723]);
    expect(readGeoKeys(dir)).toEqual({ epsg: 32723, isGeographic: false, rasterType: 'PixelIsPoint' });
  });
});
