// AOI GeoJSON: parsing, validation errors (RFC 7946 rules), reprojection with densified edges checked against turf.
import booleanPointInPolygon from '@turf/boolean-point-in-polygon';
import { point, polygon } from '@turf/helpers';
import { describe, expect, it } from 'vitest';
import { aoisToGeoJson, parseAois, reprojectAoi } from '../../../web/core/aoi.ts';
import { lonLatToCrs } from '../../../web/core/crs.ts';
import { SeamtallyError } from '../../../web/core/errors.ts';
import { pointInPolygon } from '../../../web/core/point-in-polygon.ts';

const square = (x0: number, y0: number, d: number) => [[x0, y0], [x0 + d, y0], [x0 + d, y0 + d], [x0, y0 + d], [x0, y0]];

function errorOf(input: unknown): SeamtallyError {
  try {
    parseAois(input);
  } catch (e) {
    if (e instanceof SeamtallyError) return e;
    throw e;
  }
  throw new Error('expected parseAois to fail');
}

describe('parsing', () => {
  it('FeatureCollection with Polygon (with hole) and MultiPolygon; ids and names', () => {
    const fc = {
      type: 'FeatureCollection',
      features: [
        { type: 'Feature', id: 'lot-a', properties: { name: 'Car park A' }, geometry: { type: 'Polygon', coordinates: [square(13.4, 52.5, 0.01), square(13.402, 52.502, 0.002)] } },
        { type: 'Feature', properties: {}, geometry: { type: 'MultiPolygon', coordinates: [[square(13.5, 52.5, 0.01)], [square(13.6, 52.5, 0.01)]] } },
      ],
    };
    const aois = parseAois(JSON.stringify(fc));
    expect(aois.map((a) => [a.id, a.name, a.polygonsLonLat.length])).toEqual([['lot-a', 'Car park A', 1], ['aoi-2', 'aoi-2', 2]]);
    expect(aois[0].polygonsLonLat[0].length).toBe(2);
    expect(parseAois(aoisToGeoJson(aois))).toEqual(aois);
  });
  it('bare geometry and single Feature', () => {
    expect(parseAois({ type: 'Polygon', coordinates: [square(0, 0, 1)] })).toHaveLength(1);
    expect(parseAois({ type: 'Feature', properties: { name: 'x' }, geometry: { type: 'Polygon', coordinates: [square(0, 0, 1)] } })[0].name).toBe('x');
  });
});

describe('validation errors say what to fix', () => {
  const poly = (coordinates: unknown) => ({ type: 'Polygon', coordinates });
  it('projected metres mistaken for lon/lat → aoi-not-lonlat', () => {
    const e = errorOf(poly([square(440720, 3751320, 500)]));
    expect(e.kind).toBe('aoi-not-lonlat');
    expect(e.message).toMatch(/projected metres/);
  });
  it('lat/lon order swapped → aoi-not-lonlat', () => {
    const e = errorOf(poly([[[52.5, 150.1], [52.6, 150.1], [52.6, 150.2], [52.5, 150.1]]]));
    expect(e.kind).toBe('aoi-not-lonlat');
    expect(e.message).toMatch(/wrong order/);
  });
  it('legacy crs member naming a projected CRS → aoi-not-lonlat', () => {
    const e = errorOf({ type: 'FeatureCollection', crs: { type: 'name', properties: { name: 'urn:ogc:def:crs:EPSG::32633' } }, features: [] });
    expect(e.kind).toBe('aoi-not-lonlat');
  });
  it('self-intersecting (bow tie) → aoi-invalid', () => {
    const e = errorOf(poly([[[0, 0], [1, 1], [1, 0], [0, 1], [0, 0]]]));
    expect(e.kind).toBe('aoi-invalid');
    expect(e.message).toMatch(/intersects itself/);
  });
  it('unclosed ring, too few positions, empty, wrong type, hole outside, antimeridian', () => {
    const cases: [unknown, RegExp][] = [
      [poly([[[0, 0], [1, 0], [1, 1], [0, 1]]]), /not closed/],
      [poly([[[0, 0], [1, 0], [0, 0]]]), /at least 4/],
      [poly([]), /empty/],
      [{ type: 'FeatureCollection', features: [] }, /no polygon/],
      [{ type: 'Feature', properties: {}, geometry: null }, /no geometry/],
      [{ type: 'LineString', coordinates: [[0, 0], [1, 1]] }, /Polygon or MultiPolygon/],
      [poly([square(0, 0, 1), square(5, 5, 1)]), /outside its outer ring/],
      [poly([[[179.5, 10], [-179.5, 10], [-179.5, 11], [179.5, 11], [179.5, 10]]]), /antimeridian/],
      [poly([[[0, 0], [1, 0], [2, 0], [0, 0]]]), /no area|intersects itself/],
      ['{not json', /not valid JSON/],
    ];
    for (const [input, re] of cases) {
      const e = errorOf(input);
      expect(e.kind, String(re)).toBe('aoi-invalid');
      expect(e.message).toMatch(re);
    }
  });
});

describe('reprojection into a scene CRS', () => {
  it('vertices match proj4, and long edges are densified so containment agrees with turf in lon/lat', () => {
    // A 0.6° × 0.4° AOI (~45 km wide) in UTM 33N: straight edges in lon/lat (RFC 7946) are curves in UTM.
    const coords = [[[12.2, 52.0], [12.8, 52.0], [12.8, 52.4], [12.2, 52.4], [12.2, 52.0]]];
    const [aoi] = parseAois({ type: 'Polygon', coordinates: coords });
    const utm = reprojectAoi(aoi, 32633, { tolerance: 0.01 });
    expect(utm.polygons[0][0].length).toBeGreaterThan(20);
    const v = lonLatToCrs(32633, [12.8, 52.0]);
    expect(utm.polygons[0][0].some((p) => p[0] === v[0] && p[1] === v[1])).toBe(true);
    const undensified = reprojectAoi(aoi, 32633, { maxDepth: 0 });
    // Points just inside/outside the bottom edge (a parallel: curved in UTM), 2 m away from it.
    // Source for the lon/lat truth: @turf/boolean-point-in-polygon on the original GeoJSON polygon.
    const tp = polygon(coords);
    let disagreeUndensified = 0;
    for (let i = 1; i < 50; i++) {
      const lon = 12.2 + (0.6 * i) / 50;
      for (const dLat of [-2 / 111_000, 2 / 111_000]) {
        const ll: [number, number] = [lon, 52.0 + dLat];
        const want = booleanPointInPolygon(point(ll), tp);
        const xy = lonLatToCrs(32633, ll);
        expect(pointInPolygon(xy[0], xy[1], utm.polygons[0]), `${ll}`).toBe(want);
        if (pointInPolygon(xy[0], xy[1], undensified.polygons[0]) !== want) disagreeUndensified++;
      }
    }
    expect(disagreeUndensified).toBeGreaterThan(10); // without densifying, the edge sags by tens of metres
  });
});
