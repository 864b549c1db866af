// Centre-in-polygon with holes and multipolygons against @turf/boolean-point-in-polygon on seeded random cases.
import booleanPointInPolygon from '@turf/boolean-point-in-polygon';
import { multiPolygon, point, polygon } from '@turf/helpers';
import { describe, expect, it } from 'vitest';
import {
  BOUNDARY, INSIDE, OUTSIDE, pointInMultiPolygon, pointInPolygon, pointInRing, prepareMultiPolygon,
} from '../../../web/core/point-in-polygon.ts';
import type { MapXY } from '../../../web/core/types.ts';
import { mulberry32 as rng } from '../../helpers/mulberry32.ts';


/** Random star-shaped ring around (cx, cy), counter-clockwise, closed. */
function star(r: () => number, cx: number, cy: number, rMin: number, rMax: number, n: number, clockwise = false): MapXY[] {
  const pts: MapXY[] = [];
  for (let i = 0; i < n; i++) {
    const a = ((clockwise ? -1 : 1) * 2 * Math.PI * i) / n;
    const rad = rMin + (rMax - rMin) * r();
    pts.push([cx + rad * Math.cos(a), cy + rad * Math.sin(a)]);
  }
  pts.push(pts[0]);
  return pts;
}

const asTurf = (rings: MapXY[][]) => rings.map((ring) => ring.map((p) => [p[0], p[1]]));

describe('agrees with turf booleanPointInPolygon (source: @turf/boolean-point-in-polygon 7, ignoreBoundary false)', () => {
  it('random polygons with holes', () => {
    const r = rng(20240611);
    let inside = 0;
    let tested = 0;
    for (let k = 0; k < 60; k++) {
      const cx = 500000 + 1000 * r();
      const cy = 5000000 + 1000 * r();
      const outer = star(r, cx, cy, 60, 200, 5 + Math.floor(r() * 40));
      // holes: small stars at radius 25 in different directions, wound either way
      const holes = [0, 1, 2].slice(0, Math.floor(r() * 4)).map((h) => {
        const a = (2 * Math.PI * h) / 3 + r();
        return star(r, cx + 30 * Math.cos(a), cy + 30 * Math.sin(a), 5, 18, 3 + Math.floor(r() * 8), r() < 0.5);
      });
      const rings = [outer, ...holes];
      const prepared = prepareMultiPolygon([rings]);
      const tp = polygon(asTurf(rings));
      for (let q = 0; q < 400; q++) {
        const x = cx - 220 + 440 * r();
        const y = cy - 220 + 440 * r();
        const want = booleanPointInPolygon(point([x, y]), tp);
        expect(pointInPolygon(x, y, rings)).toBe(want);
        expect(prepared.contains(x, y)).toBe(want);
        inside += want ? 1 : 0;
        tested++;
      }
    }
    expect(inside).toBeGreaterThan(tested * 0.1);
    expect(inside).toBeLessThan(tested * 0.9);
  });

  it('random multipolygons (disjoint parts, some with holes)', () => {
    const r = rng(7);
    for (let k = 0; k < 30; k++) {
      const polys: MapXY[][][] = [];
      const nParts = 1 + Math.floor(r() * 4);
      for (let p = 0; p < nParts; p++) {
        const cx = 1000 * p;
        const outer = star(r, cx, 0, 100, 400, 6 + Math.floor(r() * 20));
        polys.push(r() < 0.5 ? [outer, star(r, cx, 0, 20, 90, 6, true)] : [outer]);
      }
      const tm = multiPolygon(polys.map(asTurf));
      const prepared = prepareMultiPolygon(polys);
      for (let q = 0; q < 400; q++) {
        const x = -500 + (1000 * nParts) * r();
        const y = -500 + 1000 * r();
        const want = booleanPointInPolygon(point([x, y]), tm);
        expect(pointInMultiPolygon(x, y, polys)).toBe(want);
        expect(prepared.contains(x, y)).toBe(want);
      }
    }
  });

  it('points exactly on outer and hole boundaries and vertices (integer grid, exact in floating point)', () => {
    const outer: MapXY[] = [[0, 0], [10, 0], [10, 10], [5, 15], [0, 10], [0, 0]];
    const hole: MapXY[] = [[2, 2], [2, 6], [6, 6], [6, 2], [2, 2]];
    const rings = [outer, hole];
    const tp = polygon(asTurf(rings));
    const prepared = prepareMultiPolygon([rings]);
    let boundaryHits = 0;
    for (let x = -1; x <= 11; x += 0.5) {
      for (let y = -1; y <= 16; y += 0.5) {
        const want = booleanPointInPolygon(point([x, y]), tp);
        expect(pointInPolygon(x, y, rings), `(${x}, ${y})`).toBe(want);
        expect(prepared.contains(x, y), `(${x}, ${y})`).toBe(want);
        if (pointInRing(x, y, outer) === BOUNDARY || pointInRing(x, y, hole) === BOUNDARY) boundaryHits++;
      }
    }
    expect(boundaryHits).toBeGreaterThan(40);
  });
});

describe('the counting rule', () => {
  it('boundary counts as inside, for the outer edge and a hole edge alike', () => {
    const sq: MapXY[] = [[0, 0], [4, 0], [4, 4], [0, 4], [0, 0]];
    const hole: MapXY[] = [[1, 1], [3, 1], [3, 3], [1, 3], [1, 1]];
    expect(pointInRing(4, 2, sq)).toBe(BOUNDARY);
    expect(pointInRing(2, 2, sq)).toBe(INSIDE);
    expect(pointInRing(5, 2, sq)).toBe(OUTSIDE);
    expect(pointInPolygon(0, 0, [sq, hole])).toBe(true);
    expect(pointInPolygon(1, 2, [sq, hole])).toBe(true); // on the hole's edge
    expect(pointInPolygon(2, 2, [sq, hole])).toBe(false); // inside the hole
    // two AOIs sharing an edge both count a centre on it
    const right: MapXY[] = [[4, 0], [8, 0], [8, 4], [4, 4], [4, 0]];
    expect(pointInPolygon(4, 1, [sq]) && pointInPolygon(4, 1, [right])).toBe(true);
  });
});
