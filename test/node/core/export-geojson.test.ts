// Detections GeoJSON: geojson-validation, RFC 7946 winding (shoelace), ≤ 7 decimals, boxes true to size on the ground.
import gjv from 'geojson-validation';
import { describe, expect, it } from 'vitest';
import { lonLatToCrs } from '../../../web/core/crs.ts';
import { detectionsToGeoJson } from '../../../web/core/export-geojson.ts';
import { ringAreaM2 } from '../../../web/core/geodesic-area.ts';
import { createDetectionTable } from '../../../web/core/types.ts';

function table(frame: string, epsg: number, centreLonLat: [number, number], n: number) {
  const t = createDetectionTable(frame, n);
  const c = lonLatToCrs(epsg, centreLonLat);
  for (let i = 0; i < n; i++) {
    t.cxM[i] = c[0] + 7.3 * i;
    t.cyM[i] = c[1] - 3.1 * i;
    t.lengthM[i] = 4.4 + (i % 3);
    t.widthM[i] = 1.8 + (i % 2) * 0.4;
    t.angleRad[i] = (i * 0.7) % (2 * Math.PI) - Math.PI; // all headings, incl. negative angles
    t.score[i] = 0.5 + (i % 5) / 10;
    t.classIdx[i] = i % 2;
    t.sceneIdx[i] = i % 2;
  }
  t.count = n;
  return t;
}

/** Twice the signed planar area (shoelace); > 0 = counter-clockwise. */
const shoelace = (ring: number[][]) => ring.slice(0, -1).reduce((s, p, i) => s + p[0] * ring[i + 1][1] - ring[i + 1][0] * p[1], 0);

describe('detectionsToGeoJson', () => {
  for (const [frame, epsg, ll] of [['EPSG:32633', 32633, [13.4, 52.5]], ['EPSG:32723', 32723, [-46.6, -23.5]]] as const) {
    it(`valid RFC 7946 output from ${frame}`, () => {
      const t = table(frame, epsg, [ll[0], ll[1]], 40);
      const fc = detectionsToGeoJson({
        detections: t,
        classes: ['vehicle', 'solar_panel'],
        scenes: [{ name: 'north.tif', acquisitionDate: '2024-05-01', gsdM: 0.3 }, { name: 'south.tif', acquisitionDate: '2024-05-01', gsdM: 0.5 }],
        review: t.count ? Array.from({ length: t.count }, (_, i) => (i === 3 ? 'rejected' : 'unreviewed')) : undefined,
      }, { minScore: 0.4 });
      // Source: geojson-validation (npm, validates against the GeoJSON spec), trace mode returns the list of problems.
      expect(gjv.valid(fc, true)).toEqual([]);
      expect(gjv.valid(JSON.parse(JSON.stringify(fc)))).toBe(true);
      expect(fc.features).toHaveLength(40);
      for (const f of fc.features) {
        const ring = f.geometry.coordinates[0];
        // RFC 7946 §3.1.6: exterior rings counter-clockwise
        expect(shoelace(ring)).toBeGreaterThan(0);
        expect(ring[0]).toEqual(ring[4]);
        for (const p of ring) for (const v of p) expect(String(v).split('.')[1]?.length ?? 0).toBeLessThanOrEqual(7);
        // box keeps its size on the ground: geodesic area ≈ L × W / k² (UTM scale ~0.9996–1.0004; 7-decimal rounding)
        const want = f.properties.lengthM * f.properties.widthM;
        expect(Math.abs(ringAreaM2(ring as [number, number][]) / want - 1)).toBeLessThan(0.01);
        expect(Object.keys(f.properties).sort()).toEqual(['acquisitionDate', 'class', 'gsdM', 'headingDeg', 'lengthM', 'review', 'scene', 'score', 'widthM']);
      }
      expect(fc.features[3].properties.review).toBe('rejected');
      expect(fc.features[1].properties.scene).toBe('south.tif');
      expect(fc.seamtally.countingRule).toMatch(/centre/);
      expect(fc.seamtally.minScore).toBe(0.4);
    });
  }
  it('heading: length axis along grid north → 0°, along east → 90°', () => {
    const t = table('EPSG:32633', 32633, [15, 52], 2);
    t.angleRad[0] = Math.PI / 2;
    t.angleRad[1] = 0;
    const fc = detectionsToGeoJson({ detections: t, classes: ['v', 's'], scenes: [{ name: 'a', acquisitionDate: 'd', gsdM: 0.3 }, { name: 'b', acquisitionDate: 'd', gsdM: 0.3 }] });
    expect(fc.features.map((f) => f.properties.headingDeg)).toEqual([0, 90]);
  });
  it('heading is a compass bearing (clockwise from north): an axis 30° north of east → 60°, 30° south of east → 120°', () => {
    // compass bearings run clockwise from north (common practice, no source); the table's angle is counter-clockwise
    // from grid east (types.ts), so bearing = 90° − angle (mirrored, 90° + angle, would swap the two).
    const t = table('EPSG:32633', 32633, [15, 52], 2);
    t.angleRad[0] = Math.PI / 6;
    t.angleRad[1] = -Math.PI / 6;
    const fc = detectionsToGeoJson({ detections: t, classes: ['v', 's'], scenes: [{ name: 'a', acquisitionDate: 'd', gsdM: 0.3 }, { name: 'b', acquisitionDate: 'd', gsdM: 0.3 }] });
    const h = fc.features.map((f) => f.properties.headingDeg);
    // and the box drawn on the map agrees: its long edge points that way in lon/lat
    for (const [i, f] of fc.features.entries()) {
      const r = f.geometry.coordinates[0];
      const e1 = [(r[1][0] - r[0][0]) * Math.cos((52 * Math.PI) / 180), r[1][1] - r[0][1]];
      const e2 = [(r[2][0] - r[1][0]) * Math.cos((52 * Math.PI) / 180), r[2][1] - r[1][1]];
      const long = Math.hypot(...e1) > Math.hypot(...e2) ? e1 : e2;
      const bearing = (((Math.atan2(long[0], long[1]) * 180) / Math.PI) % 180 + 180) % 180;
      expect(Math.abs(bearing - h[i])).toBeLessThan(1.5); // UTM grid convergence at 15°E, 52°N is ~0 (central meridian)
    }
    expect(h).toEqual([60, 120]);
  });
});
