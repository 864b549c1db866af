// Geodesic polygon area on WGS 84 against GeographicLib's published examples and an independent UTM figure.
import { describe, expect, it } from 'vitest';
import { lonLatToCrs } from '../../../web/core/crs.ts';
import { m2ToHa, multiPolygonAreaM2, polygonAreaM2, ringAreaM2, signedRingAreaM2 } from '../../../web/core/geodesic-area.ts';
import type { LonLatDeg } from '../../../web/core/types.ts';

const ll = (latLon: [number, number][]): LonLatDeg[] => latLon.map(([lat, lon]) => [lon, lat]);

describe('GeographicLib published test polygons', () => {
  // Source: GeographicLib JavaScript test suite (geographiclib-geodesic test/geodesictest.js, "Planimeter0"),
  // points given there as [lat, lon]; expected areas in m² (tolerance 1 m² as in that suite).
  const table: { name: string; pts: [number, number][]; areaM2: number }[] = [
    { name: 'around the north pole at 89°', pts: [[89, 0], [89, 90], [89, 180], [89, 270]], areaM2: 24952305678 },
    { name: 'diamond at the equator', pts: [[0, -1], [-1, 0], [0, 1], [1, 0]], areaM2: 24619419146 },
    { name: 'octant', pts: [[90, 0], [0, 0], [0, 90]], areaM2: 63758202715511 },
    // Source: "Planimeter5"
    { name: 'pole-crossing triangle', pts: [[89, 0.1], [89, 90.1], [89, -179.9]], areaM2: 12476152838.5 },
  ];
  for (const row of table) {
    it(row.name, () => {
      expect(Math.abs(ringAreaM2(ll(row.pts)) - row.areaM2)).toBeLessThan(1);
    });
  }
  it('Antarctica example: 13662703680020 m², perimeter polygon of 18 points', () => {
    // Source (from memory): GeographicLib documentation, geodesic polygon example "Antarctica" — area
    // 13662703680020.1 m² (≈ 13.66 million km²), perimeter 16831067.9 m.
    const pts: [number, number][] = [[-63.1, -58], [-72.9, -74], [-71.9, -102], [-74.9, -102], [-74.3, -131], [-77.5, -163], [-77.4, 163],
      [-71.7, 172], [-65.9, 140], [-65.7, 113], [-66.6, 88], [-66.9, 59], [-69.8, 25], [-70.0, -4], [-71.0, -14], [-77.3, -33], [-77.9, -46], [-74.7, -61]];
    expect(Math.abs(ringAreaM2(ll(pts)) - 13662703680020.1)).toBeLessThan(1);
    // orientation does not change the unsigned area; it flips the signed one
    expect(Math.abs(ringAreaM2(ll(pts).reverse()) - 13662703680020.1)).toBeLessThan(1);
    expect(Math.sign(signedRingAreaM2(ll(pts)))).toBe(-Math.sign(signedRingAreaM2(ll(pts).reverse())));
  });
});

describe('cross-check against a square laid out in UTM', () => {
  // A 1 km × 1 km square in UTM zone 33N centred on the central meridian: the UTM point scale factor there is
  // k0 = 0.9996 (UTM definition, common practice), so its true area is (1000 / 0.9996)² m² to ~1e-6 relative.
  it('1 km² square on the central meridian at 45°N', () => {
    const inv = (x: number, y: number) => {
      // invert by Newton steps on lonLatToCrs (keeps the test independent of crsToLonLat)
      let p: [number, number] = [15, 45];
      for (let k = 0; k < 6; k++) {
        const q = lonLatToCrs(32633, p);
        const dx = lonLatToCrs(32633, [p[0] + 1e-6, p[1]]);
        const dy = lonLatToCrs(32633, [p[0], p[1] + 1e-6]);
        const j = [(dx[0] - q[0]) / 1e-6, (dy[0] - q[0]) / 1e-6, (dx[1] - q[1]) / 1e-6, (dy[1] - q[1]) / 1e-6];
        const det = j[0] * j[3] - j[1] * j[2];
        const ex = x - q[0];
        const ey = y - q[1];
        p = [p[0] + (j[3] * ex - j[1] * ey) / det, p[1] + (-j[2] * ex + j[0] * ey) / det];
      }
      return p as LonLatDeg;
    };
    const c = lonLatToCrs(32633, [15, 45]);
    const sq: LonLatDeg[] = [[-500, -500], [500, -500], [500, 500], [-500, 500], [-500, -500]].map(([dx, dy]) => inv(c[0] + dx, c[1] + dy));
    const want = (1000 / 0.9996) ** 2;
    expect(Math.abs(ringAreaM2(sq) - want) / want).toBeLessThan(2e-5);
  });
});

describe('holes and multipolygons', () => {
  it('area of a polygon is exterior minus holes; multipolygon sums; ha conversion', () => {
    const outer: LonLatDeg[] = [[10, 50], [10.01, 50], [10.01, 50.01], [10, 50.01], [10, 50]];
    const hole: LonLatDeg[] = [[10.002, 50.002], [10.002, 50.004], [10.004, 50.004], [10.004, 50.002], [10.002, 50.002]];
    const a = ringAreaM2(outer);
    const h = ringAreaM2(hole);
    expect(polygonAreaM2([outer, hole])).toBeCloseTo(a - h, 3);
    expect(multiPolygonAreaM2([[outer, hole], [hole]])).toBeCloseTo(a, 3);
    expect(m2ToHa(a)).toBeCloseTo(a / 1e4, 9);
    expect(a).toBeGreaterThan(700_000); // ~ 0.01° × 0.01° at 50°N ≈ 716 m × 1112 m
    expect(a).toBeLessThan(800_000);
  });
});
