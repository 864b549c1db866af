// Area of lon/lat polygons (with holes) and multipolygons on the WGS 84 ellipsoid, via GeographicLib.
import { WGS84_GEODESIC } from './wgs84-geodesic.ts';
import type { LonLatDeg } from './types.ts';

export const M2_PER_HA = 10_000;

/**
 * Unsigned geodesic area of one ring (edges are geodesics; closing position optional), in m².
 * For rings that encircle a pole, the smaller of the two regions the ring bounds is returned.
 */
export function ringAreaM2(ringLonLat: readonly LonLatDeg[]): number {
  const n = closedLength(ringLonLat);
  if (n < 3) return 0;
  const poly = WGS84_GEODESIC.Polygon(false);
  for (let i = 0; i < n; i++) poly.AddPoint(ringLonLat[i][1], ringLonLat[i][0]);
  return Math.abs(poly.Compute(false, true).area ?? 0);
}

/** Signed area (counter-clockwise positive) of a ring, m², as GeographicLib's PolygonArea reports it. */
export function signedRingAreaM2(ringLonLat: readonly LonLatDeg[]): number {
  const n = closedLength(ringLonLat);
  if (n < 3) return 0;
  const poly = WGS84_GEODESIC.Polygon(false);
  for (let i = 0; i < n; i++) poly.AddPoint(ringLonLat[i][1], ringLonLat[i][0]);
  return poly.Compute(false, true).area ?? 0;
}

/** Area of a polygon (exterior ring first, then holes), m²: exterior minus holes. */
export function polygonAreaM2(polygonLonLat: readonly (readonly LonLatDeg[])[]): number {
  if (polygonLonLat.length === 0) return 0;
  let area = ringAreaM2(polygonLonLat[0]);
  for (let i = 1; i < polygonLonLat.length; i++) area -= ringAreaM2(polygonLonLat[i]);
  return Math.max(0, area);
}

/** Area of a multipolygon (polygons assumed not to overlap), m². */
export function multiPolygonAreaM2(polygonsLonLat: readonly (readonly (readonly LonLatDeg[])[])[]): number {
  let sum = 0;
  for (const p of polygonsLonLat) sum += polygonAreaM2(p);
  return sum;
}

export function m2ToHa(areaM2: number): number {
  return areaM2 / M2_PER_HA;
}

/** Number of distinct positions of a ring (drops the closing repeat of the first position). */
function closedLength(ring: readonly LonLatDeg[]): number {
  const n = ring.length;
  if (n >= 2 && ring[0][0] === ring[n - 1][0] && ring[0][1] === ring[n - 1][1]) return n - 1;
  return n;
}
