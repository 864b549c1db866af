// National and file-defined CRSs against GDAL: GeoTIFFs written by GDAL (Debian gdal-bin) in Swiss LV95, British
// National Grid, Lambert-93, RD New, LAEA Europe, New York Long Island State Plane (US survey feet) and a Transverse
// Mercator defined only by GeoKeys (no EPSG code), plus a real 0.2 m orthophoto crop wrapped as EPSG:2056. seamtally's
// footprint corners and centre in lon/lat must agree with gdaltransform -t_srs EPSG:4326 (GDAL + PROJ) to 1 cm on
// the ground (measured: at most 5 mm, RD New; the others below 1 mm); the GSD with the pixel size (feet converted).
// Also: the committed EPSG table is what scripts/epsg-registry.mjs makes from the installed epsg-index package.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sceneGeoref } from '../../../web/core/georef.ts';
import { isFileDefinedCrs, metricFrameEpsg } from '../../../web/core/crs.ts';
import { SeamtallyError } from '../../../web/core/errors.ts';
import { gdalPixelsToLonLat, readGeoTiffTags } from '../../fixtures/gdal/make-geotiffs.ts';
// @ts-expect-error plain ES module script without types
import { buildRegistry, registrySource } from '../../../scripts/epsg-registry.mjs';

let dir = '';
const gdalCreate = (path: string, srs: string, ullr: number[], w = 40, h = 30) =>
  execFileSync('gdal_create', ['-of', 'GTiff', '-outsize', String(w), String(h), '-bands', '1', '-ot', 'Byte', '-a_srs', srs, '-a_ullr', ...ullr.map(String), path], { stdio: 'ignore' });

interface Case { name: string; srs: string; ullr: number[]; gsdM: number }
// Upper-left / lower-right corners inside each CRS's area of use (Bern, London, Paris, Amsterdam, Central Europe,
// Manhattan; a TM of our own over Bavaria); 40 × 30 px.
const CASES: Case[] = [
  { name: 'lv95', srs: 'EPSG:2056', ullr: [2600100, 1200200, 2600112, 1200191], gsdM: 0.3 },
  { name: 'bng', srs: 'EPSG:27700', ullr: [530000, 180030, 530012, 180021], gsdM: 0.3 },
  { name: 'lambert93', srs: 'EPSG:2154', ullr: [652000, 6862030, 652012, 6862021], gsdM: 0.3 },
  { name: 'rdnew', srs: 'EPSG:28992', ullr: [121000, 487030, 121012, 487021], gsdM: 0.3 },
  { name: 'laea-europe', srs: 'EPSG:3035', ullr: [4321000, 3210030, 4321012, 3210021], gsdM: 0.3 },
  { name: 'ny-longisland-usft', srs: 'EPSG:2263', ullr: [987000, 212030, 987040, 212000], gsdM: 1200 / 3937 },
  { name: 'geokeys-tm', srs: '+proj=tmerc +lat_0=0 +lon_0=10.3333333333 +k=0.9999 +x_0=250000 +y_0=-5000000 +ellps=GRS80 +units=m +no_defs', ullr: [251000, 330030, 251012, 330021], gsdM: 0.3 },
];

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'seamtally-crs-'));
  for (const c of CASES) gdalCreate(join(dir, `${c.name}.tif`), c.srs, c.ullr);
  // the real crop: its file name is its LV95 centre; it spans ±12.5 m (test/fixtures/real/CREDITS.md)
  execFileSync('gdal_translate', ['-q', '-a_srs', 'EPSG:2056', '-a_ullr', '2558426.5', '1217469.5', '2558451.5', '1217444.5',
    'test/fixtures/real/ortho_2558439_1217457.png', join(dir, 'real-crop.tif')]);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Ground distance in metres between two nearby lon/lat points (local equirectangular). */
const metres = (a: readonly number[], b: readonly number[]) =>
  Math.hypot((a[0] - b[0]) * 111_320 * Math.cos((b[1] * Math.PI) / 180), (a[1] - b[1]) * 110_574);

async function compareWithGdal(path: string): Promise<{ epsg: number; gsdM: number; worstM: number }> {
  const g = sceneGeoref(await readGeoTiffTags(path), { footprintPointsPerSide: 1 });
  const px: [number, number][] = [[0, 0], [0, g.heightPx], [g.widthPx, g.heightPx], [g.widthPx, 0], [g.widthPx / 2, g.heightPx / 2]];
  const ref = gdalPixelsToLonLat(path, px);
  let worstM = metres(g.centreLonLat, ref[4]);
  for (let i = 0; i < 4; i++) worstM = Math.max(worstM, Math.min(...g.footprintLonLat.slice(0, 4).map((p) => metres(p, ref[i]))));
  return { epsg: g.epsg, gsdM: g.gsdM, worstM };
}

describe('national CRSs from the EPSG registry and a GeoKeys-defined projection vs gdaltransform', () => {
  for (const c of CASES) {
    it(`${c.name} (${c.srs.startsWith('EPSG') ? c.srs : 'GeoKeys only'}): corners within 1 cm, GSD = pixel size`, async () => {
      const r = await compareWithGdal(join(dir, `${c.name}.tif`));
      expect(r.worstM).toBeLessThan(0.01);
      // US survey feet: 1 ft = 1200/3937 m (NIST); our GSD is geodesic there, so the LCC scale (< 1e-4 here) shows
      expect(r.gsdM).toBeCloseTo(c.gsdM, 4);
      if (c.name === 'geokeys-tm') {
        expect(isFileDefinedCrs(r.epsg)).toBe(true);
        // a CRS known only from its file is never the merge frame: exports name frames by EPSG code
        expect(metricFrameEpsg(r.epsg, [10.5, 48])).toBe(32632);
      } else {
        expect(r.epsg).toBe(Number(c.srs.slice(5)));
      }
    });
  }

  it('a real 0.2 m orthophoto crop wrapped as EPSG:2056 lies where gdaltransform puts it', async () => {
    const r = await compareWithGdal(join(dir, 'real-crop.tif'));
    expect(r.epsg).toBe(2056);
    expect(r.worstM).toBeLessThan(0.01);
    expect(r.gsdM).toBeCloseTo(0.2, 6);
  });

  it('a code whose definition needs a datum grid seamtally does not carry is refused with what to do', async () => {
    const path = join(dir, 'nad27.tif');
    gdalCreate(path, 'EPSG:26711', [440720, 3751320, 441920, 3750120], 20, 20);
    let err: unknown;
    try { sceneGeoref(await readGeoTiffTags(path)); } catch (e) { err = e; }
    expect((err as SeamtallyError).kind).toBe('unknown-crs');
    expect(String((err as Error).message)).toMatch(/NTv2_0\.gsb.*gdalwarp/);
  });

  it('the committed EPSG table is what the generator makes from the installed epsg-index', () => {
    expect(readFileSync('web/core/epsg-registry.generated.ts', 'utf8')).toBe(registrySource(buildRegistry()));
  });
});
