// SceneGeoref from GDAL-written GeoTIFFs: lon/lat footprint vs gdaltransform, GSD vs textbook radii of curvature.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SeamtallyError } from '../../../web/core/errors.ts';
import { sceneGeoref } from '../../../web/core/georef.ts';
import { groundSampleDistance } from '../../../web/core/gsd.ts';
import { gdalPixelsToLonLat, makeGdalGeoTiffs, readGeoTiffTags, type GdalFixture } from '../../fixtures/gdal/make-geotiffs.ts';

let dir = '';
let fixtures: GdalFixture[] = [];
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'seamtally-georef-'));
  fixtures = makeGdalGeoTiffs(dir);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('sceneGeoref vs GDAL', () => {
  it('footprint corners and centre in lon/lat agree with gdaltransform -t_srs EPSG:4326 within 1e-7°', async () => {
    // Source: gdaltransform (GDAL 3.6 + PROJ, Debian gdal-bin) applied to the file's own georeferencing.
    for (const f of fixtures.filter((x) => x.epsg !== 26711)) {
      const r = await readGeoTiffTags(f.path);
      const g = sceneGeoref(r, { footprintPointsPerSide: 1 });
      expect(g.epsg).toBe(f.epsg);
      const px: [number, number][] = [[0, 0], [0, g.heightPx], [g.widthPx, g.heightPx], [g.widthPx, 0], [g.widthPx / 2, g.heightPx / 2]];
      const ref = gdalPixelsToLonLat(f.path, px);
      const ours = [...g.footprintLonLat.slice(0, 4), g.centreLonLat];
      // footprint is counter-clockwise; find each GDAL corner in it
      for (let i = 0; i < 4; i++) {
        const hit = ours.slice(0, 4).some((p) => Math.abs(p[0] - ref[i][0]) < 1e-7 && Math.abs(p[1] - ref[i][1]) < 1e-7);
        expect(hit, `${f.name} corner ${px[i]}`).toBe(true);
      }
      expect(Math.abs(ours[4][0] - ref[4][0])).toBeLessThan(1e-7);
      expect(Math.abs(ours[4][1] - ref[4][1])).toBeLessThan(1e-7);
      // ring closed and counter-clockwise (shoelace > 0)
      const ring = g.footprintLonLat;
      expect(ring[0]).toEqual(ring[ring.length - 1]);
      let s = 0;
      for (let i = 0; i + 1 < ring.length; i++) s += ring[i][0] * ring[i + 1][1] - ring[i + 1][0] * ring[i][1];
      expect(s).toBeGreaterThan(0);
    }
  });

  it('GSD of projected scenes is the pixel size', async () => {
    const want: Record<string, number> = { 'utm33n-area': 60, 'utm23s-area': 0.25, 'etrs89-32n': 0.3, 'nad83-15n': 0.3 };
    for (const [name, gsd] of Object.entries(want)) {
      const g = sceneGeoref(await readGeoTiffTags(fixtures.find((f) => f.name === name)!.path));
      expect(g.gsdM, name).toBeCloseTo(gsd, 9);
    }
  });

  it('a TIFF without georeferencing is a typed error', async () => {
    const plain = join(dir, 'plain.tif');
    execFileSync('gdal_create', ['-of', 'GTiff', '-outsize', '8', '8', '-bands', '1', plain]);
    const r = await readGeoTiffTags(plain);
    let err: unknown;
    try {
      sceneGeoref(r);
    } catch (e) {
      err = e;
    }
    expect((err as SeamtallyError).kind).toBe('not-georeferenced');
  });

  it('an EPSG code with no built-in definition (NAD27 / UTM 11N) is unknown-crs unless the user supplies it', async () => {
    const r = await readGeoTiffTags(fixtures.find((f) => f.name === 'byte-like')!.path);
    expect(() => sceneGeoref(r)).toThrow(/EPSG:26711/);
    const g = sceneGeoref(r, { userDefs: { 26711: '+proj=utm +zone=11 +datum=NAD27 +units=m +no_defs' } });
    expect(g.geoTransform).toEqual([440720, 60, 0, 3751320, 0, -60]);
  });
});

describe('GSD of geographic scenes (metres per degree at the centre)', () => {
  // Source: Snyder (1987), Map Projections — A Working Manual, eqs. 4-18 / 4-20: meridian radius
  // M = a(1−e²)/(1−e² sin²φ)^1.5, prime-vertical radius N = a/(1−e² sin²φ)^0.5; metres per degree of latitude = M·π/180,
  // of longitude = N·cosφ·π/180. WGS 84: a = 6378137, f = 1/298.257223563.
  const a = 6378137;
  const f = 1 / 298.257223563;
  const e2 = f * (2 - f);
  for (const latDeg of [0, 33.4, 52.6, 70]) {
    it(`lat ${latDeg}°`, () => {
      const phi = (latDeg * Math.PI) / 180;
      const w = 1 - e2 * Math.sin(phi) ** 2;
      const mPerDegLat = ((a * (1 - e2)) / w ** 1.5) * (Math.PI / 180);
      const mPerDegLon = (a / Math.sqrt(w)) * Math.cos(phi) * (Math.PI / 180);
      const d = 2e-6; // degrees per pixel (~0.2 m)
      const gt = [10 - 50 * d, d, 0, latDeg + 50 * d, 0, -d] as const;
      const g = groundSampleDistance(gt, 4326, 50, 50);
      expect(Math.abs(g.gsdXM - mPerDegLon * d) / (mPerDegLon * d)).toBeLessThan(1e-6);
      expect(Math.abs(g.gsdYM - mPerDegLat * d) / (mPerDegLat * d)).toBeLessThan(1e-6);
    });
  }
  it('Web Mercator pixel size shrinks by cos(lat) on the ground (spherical Mercator scale, Snyder eq. 7-3)', () => {
    const g = groundSampleDistance([1490000, 0.5, 0, 6890000, 0, -0.5], 3857, 0, 0);
    const latRad = 2 * Math.atan(Math.exp(6890000 / 6378137)) - Math.PI / 2;
    expect(Math.abs(g.gsdM / (0.5 * Math.cos(latRad)) - 1)).toBeLessThan(0.004); // ellipsoid vs sphere: < 0.4 %
  });
});
