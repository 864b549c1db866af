// Built-in CRS definitions: EPSG Guidance Note 7-2 TM example, agreement with PROJ (gdaltransform), zones, frames.
import proj4 from 'proj4';
import { describe, expect, it } from 'vitest';
import {
  createTransform, crsDefinition, crsToLonLat, isMetricProjected, lonLatToCrs, metricFrameEpsg, parseEpsgName, utmEpsgForLonLat,
} from '../../../web/core/crs.ts';
import { SeamtallyError } from '../../../web/core/errors.ts';
import { gdalTransformPoints } from '../../fixtures/gdal/make-geotiffs.ts';

describe('EPSG Guidance Note 7-2, Transverse Mercator worked example', () => {
  // Source (from memory of IOGP Guidance Note 7-2, §3.5.3.1 example): OSGB 1936 / British National Grid
  // (Airy 1830; lat0 49°N, lon0 2°W, k0 0.9996012717, FE 400000, FN −100000); φ = 50°30'N, λ = 00°30'E
  // → E = 577274.99 m, N = 69740.50 m.
  const osgbParams = '+lat_0=49 +lon_0=-2 +k=0.9996012717 +x_0=400000 +y_0=-100000 +ellps=airy +units=m +no_defs';
  const airyGeog = '+proj=longlat +ellps=airy +no_defs';
  for (const proj of ['etmerc', 'tmerc']) {
    it(`proj4 ${proj} (the math behind the built-in UTM zones) within ±0.01 m`, () => {
      const [e, n] = proj4(airyGeog, `+proj=${proj} ${osgbParams}`).forward([0.5, 50.5]);
      expect(Math.abs(e - 577274.99)).toBeLessThanOrEqual(0.01);
      expect(Math.abs(n - 69740.5)).toBeLessThanOrEqual(0.01);
    });
  }
  it('built-in UTM definitions are that same TM (k0 0.9996, FE 500000, FN 0 / 10 000 000)', () => {
    // UTM parameters: common practice (NGA / DMA TM 8358.2), no further source.
    for (const [epsg, lon0, south] of [[32631, 3, false], [32733, 15, true], [25832, 9, false], [26915, -93, false]] as const) {
      const tm = `+proj=etmerc +lat_0=0 +lon_0=${lon0} +k=0.9996 +x_0=500000 +y_0=${south ? 10000000 : 0} +ellps=${epsg < 32600 ? 'GRS80' : 'WGS84'} +units=m +no_defs`;
      const ll = [lon0 + 1.7, south ? -23.4 : 47.2] as const;
      const ours = lonLatToCrs(epsg, ll);
      const ref = proj4(epsg < 32600 ? '+proj=longlat +ellps=GRS80 +no_defs' : '+proj=longlat +datum=WGS84 +no_defs', tm).forward([ll[0], ll[1]]);
      expect(Math.abs(ours[0] - ref[0])).toBeLessThan(1e-6);
      expect(Math.abs(ours[1] - ref[1])).toBeLessThan(1e-6);
    }
  });
});

describe('agrees with PROJ via gdaltransform (Debian gdal-bin)', () => {
  const cases: { epsg: number; geog: string; pts: [number, number][] }[] = [
    { epsg: 32633, geog: 'EPSG:4326', pts: [[15, 0.5], [13.4, 52.5], [11.2, 70.1], [17.9, 33.9]] },
    { epsg: 32723, geog: 'EPSG:4326', pts: [[-45, -0.5], [-46.6, -23.5], [-43.2, -60.2]] },
    { epsg: 32660, geog: 'EPSG:4326', pts: [[177.3, 12.5], [179.9, 64]] },
    { epsg: 32701, geog: 'EPSG:4326', pts: [[-178.1, -14.3]] },
    { epsg: 25832, geog: 'EPSG:4258', pts: [[9.5, 48.1], [6.1, 51.2]] },
    { epsg: 25838, geog: 'EPSG:4258', pts: [[45.2, 41.7]] },
    { epsg: 26915, geog: 'EPSG:4269', pts: [[-93.2, 44.9], [-95.9, 30.1]] },
    { epsg: 26901, geog: 'EPSG:4269', pts: [[-177.1, 52.1]] },
    { epsg: 3857, geog: 'EPSG:4326', pts: [[13.4, 52.5], [-122.4, 37.8], [0, 0]] },
  ];
  for (const c of cases) {
    it(`EPSG:${c.epsg} forward and inverse within 1 mm / 1e-8°`, () => {
      const ref = gdalTransformPoints(c.geog, `EPSG:${c.epsg}`, c.pts);
      c.pts.forEach((p, i) => {
        const xy = lonLatToCrs(c.epsg, p);
        expect(Math.abs(xy[0] - ref[i][0]), `x of ${p}`).toBeLessThan(1e-3);
        expect(Math.abs(xy[1] - ref[i][1]), `y of ${p}`).toBeLessThan(1e-3);
        const back = crsToLonLat(c.epsg, ref[i]);
        expect(Math.abs(back[0] - p[0])).toBeLessThan(1e-8);
        expect(Math.abs(back[1] - p[1])).toBeLessThan(1e-8);
      });
    });
  }
  it('cross-CRS transform: UTM 32N → UTM 33N matches gdaltransform', () => {
    const pts: [number, number][] = [[690000, 5336000], [720000, 5400000]];
    const ref = gdalTransformPoints('EPSG:32632', 'EPSG:32633', pts);
    const f = createTransform(32632, 32633);
    pts.forEach((p, i) => {
      const q = f(p);
      expect(Math.abs(q[0] - ref[i][0])).toBeLessThan(1e-3);
      expect(Math.abs(q[1] - ref[i][1])).toBeLessThan(1e-3);
    });
  });
});

describe('zones and metric frame', () => {
  it('utmEpsgForLonLat incl. the Norway / Svalbard exceptions (UTM grid definition, common practice)', () => {
    expect(utmEpsgForLonLat(13.4, 52.5)).toBe(32633);
    expect(utmEpsgForLonLat(-46.6, -23.5)).toBe(32723);
    expect(utmEpsgForLonLat(-180, 10)).toBe(32601);
    expect(utmEpsgForLonLat(180, 10)).toBe(32601);
    expect(utmEpsgForLonLat(179.99, -10)).toBe(32760);
    expect(utmEpsgForLonLat(5.3, 60.4)).toBe(32632); // Bergen: zone 32V
    expect(utmEpsgForLonLat(15.6, 78.2)).toBe(32633); // Longyearbyen: zone 33X
    expect(utmEpsgForLonLat(0, 0)).toBe(32631);
  });
  it('metricFrameEpsg keeps metric projected CRSs, maps 4326 and 3857 to the centre UTM zone', () => {
    expect(metricFrameEpsg(32633, [13, 52])).toBe(32633);
    expect(metricFrameEpsg(25832, [9, 48])).toBe(25832);
    expect(metricFrameEpsg(4326, [-70.5, -33.4])).toBe(32719);
    expect(metricFrameEpsg(3857, [13.4, 52.5])).toBe(32633);
    expect(isMetricProjected(26915)).toBe(true);
    expect(metricFrameEpsg(2056, [7.4, 46.9], { 2056: '+proj=somerc +lat_0=46.9524055555556 +lon_0=7.43958333333333 +k_0=1 +x_0=2600000 +y_0=1200000 +ellps=bessel +units=m +no_defs' })).toBe(2056);
  });
  it('unknown codes get a sentence saying how to supply a definition; user definitions work', () => {
    let err: unknown;
    try {
      crsDefinition(5714); // a vertical CRS (mean sea level height): not a 2D geographic or projected one
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(SeamtallyError);
    expect((err as SeamtallyError).kind).toBe('unknown-crs');
    expect((err as SeamtallyError).message).toMatch(/supply a proj4 definition/);
    const defs = { 2056: '+proj=somerc +lat_0=46.9524055555556 +lon_0=7.43958333333333 +k_0=1 +x_0=2600000 +y_0=1200000 +ellps=bessel +towgs84=674.374,15.056,405.346,0,0,0,0 +units=m +no_defs' };
    const xy = lonLatToCrs(2056, [7.43958333333333, 46.9524055555556], defs);
    expect(Math.abs(xy[0] - 2600000)).toBeLessThan(200); // datum shift only moves it by ~100 m
    expect(parseEpsgName('EPSG:32633')).toBe(32633);
  });
});
