// Centre-in-polygon test with holes and multipolygons; the boundary counts as inside (deterministic rule).
import type { MapXY } from './types.ts';

/** Rings are closed or open position lists; polygon = [exterior, ...holes]; multipolygon = list of polygons. */
export type Ring = readonly MapXY[];
export type PolygonRings = readonly Ring[];
export type MultiPolygonRings = readonly PolygonRings[];

/**
 * The counting rule seamtally applies and writes into every export. A point exactly on an outer or hole boundary
 * counts as inside (same as turf's booleanPointInPolygon with ignoreBoundary false), so the rule never depends on
 * ring orientation or on which of two touching AOIs is tested first.
 */
export const COUNTING_RULE =
  'An object counts for an AOI when the centre of its box lies inside the AOI; a centre exactly on the AOI boundary (outer edge or hole edge) counts as inside, so an object on the shared edge of two AOIs counts for both.';

/** Classification of a point against one ring. */
export const OUTSIDE = 0;
export const BOUNDARY = 1;
export const INSIDE = 2;
export type RingRelation = typeof OUTSIDE | typeof BOUNDARY | typeof INSIDE;

/** Classify (x, y) against one ring by crossing number, with an exact on-segment test for the boundary. */
export function pointInRing(x: number, y: number, ring: Ring): RingRelation {
  let n = ring.length;
  if (n > 1 && ring[0][0] === ring[n - 1][0] && ring[0][1] === ring[n - 1][1]) n--;
  let inside = false;
  for (let i = 0, j = n - 1; i < n; j = i++) {
    const r = edgeRelation(x, y, ring[j][0], ring[j][1], ring[i][0], ring[i][1]);
    if (r === 2) return BOUNDARY;
    if (r === 1) inside = !inside;
  }
  return inside ? INSIDE : OUTSIDE;
}

/** 2 = point on the segment, 1 = the rightward ray from the point crosses it (half-open rule), 0 = neither. */
function edgeRelation(x: number, y: number, ax: number, ay: number, bx: number, by: number): number {
  if ((ay > y) !== (by > y)) {
    const cross = (bx - ax) * (y - ay) - (x - ax) * (by - ay);
    if (cross === 0) return 2;
    // crossing x lies right of the point ⇔ sign(cross) matches the edge direction
    return (cross > 0) === (by > ay) ? 1 : 0;
  }
  // horizontal edge or endpoint at the point's y: only the boundary test matters
  if (ay === y && by === y) return x >= Math.min(ax, bx) && x <= Math.max(ax, bx) ? 2 : 0;
  if ((ay === y && ax === x) || (by === y && bx === x)) return 2;
  return 0;
}

/** True when (x, y) lies in the polygon: inside or on its exterior and not strictly inside any hole. */
export function pointInPolygon(x: number, y: number, polygon: PolygonRings): boolean {
  if (polygon.length === 0 || pointInRing(x, y, polygon[0]) === OUTSIDE) return false;
  for (let h = 1; h < polygon.length; h++) if (pointInRing(x, y, polygon[h]) === INSIDE) return false;
  return true;
}

export function pointInMultiPolygon(x: number, y: number, polygons: MultiPolygonRings): boolean {
  for (const p of polygons) if (pointInPolygon(x, y, p)) return true;
  return false;
}

/** One ring with its edges binned into horizontal bands, so a query visits only the edges near its y. */
interface PreparedRing {
  minX: number;
  minY: number;
  maxX: number;
  maxY: number;
  bandH: number;
  /** edge coordinates ax, ay, bx, by per edge */
  edges: Float64Array;
  bandStart: Uint32Array;
  bandEdges: Uint32Array;
}

function prepareRing(ring: Ring): PreparedRing {
  let n = ring.length;
  if (n > 1 && ring[0][0] === ring[n - 1][0] && ring[0][1] === ring[n - 1][1]) n--;
  const edges = new Float64Array(4 * n);
  let minX = Infinity, minY = Infinity, maxX = -Infinity, maxY = -Infinity;
  for (let i = 0, j = n - 1; i < n; j = i++) {
    edges.set([ring[j][0], ring[j][1], ring[i][0], ring[i][1]], 4 * i);
    minX = Math.min(minX, ring[i][0]); maxX = Math.max(maxX, ring[i][0]);
    minY = Math.min(minY, ring[i][1]); maxY = Math.max(maxY, ring[i][1]);
  }
  const bands = Math.max(1, Math.min(4096, Math.ceil(Math.sqrt(n) * 2)));
  const bandH = (maxY - minY) / bands || 1;
  const bandOf = (yv: number) => Math.min(bands - 1, Math.max(0, Math.floor((yv - minY) / bandH)));
  const counts = new Uint32Array(bands + 1);
  for (let e = 0; e < n; e++) {
    const lo = bandOf(Math.min(edges[4 * e + 1], edges[4 * e + 3]));
    const hi = bandOf(Math.max(edges[4 * e + 1], edges[4 * e + 3]));
    for (let b = lo; b <= hi; b++) counts[b + 1]++;
  }
  for (let b = 0; b < bands; b++) counts[b + 1] += counts[b];
  const bandStart = counts.slice();
  const fill = counts.slice();
  const bandEdges = new Uint32Array(bandStart[bands]);
  for (let e = 0; e < n; e++) {
    const lo = bandOf(Math.min(edges[4 * e + 1], edges[4 * e + 3]));
    const hi = bandOf(Math.max(edges[4 * e + 1], edges[4 * e + 3]));
    for (let b = lo; b <= hi; b++) bandEdges[fill[b]++] = e;
  }
  return { minX, minY, maxX, maxY, bandH, edges, bandStart, bandEdges };
}

function preparedRelation(r: PreparedRing, x: number, y: number): RingRelation {
  if (x < r.minX || x > r.maxX || y < r.minY || y > r.maxY) return OUTSIDE;
  const bands = r.bandStart.length - 1;
  const b = Math.min(bands - 1, Math.max(0, Math.floor((y - r.minY) / r.bandH)));
  let inside = false;
  const e4 = r.edges;
  for (let k = r.bandStart[b]; k < r.bandStart[b + 1]; k++) {
    const o = 4 * r.bandEdges[k];
    const rel = edgeRelation(x, y, e4[o], e4[o + 1], e4[o + 2], e4[o + 3]);
    if (rel === 2) return BOUNDARY;
    if (rel === 1) inside = !inside;
  }
  return inside ? INSIDE : OUTSIDE;
}

/** A multipolygon prepared for many queries (same answers as pointInMultiPolygon, faster for big rings). */
export interface PreparedMultiPolygon {
  contains(x: number, y: number): boolean;
  readonly bbox: { minX: number; minY: number; maxX: number; maxY: number };
}

export function prepareMultiPolygon(polygons: MultiPolygonRings): PreparedMultiPolygon {
  const prepared = polygons.filter((p) => p.length > 0).map((p) => p.map(prepareRing));
  const bbox = { minX: Infinity, minY: Infinity, maxX: -Infinity, maxY: -Infinity };
  for (const p of prepared) {
    bbox.minX = Math.min(bbox.minX, p[0].minX); bbox.minY = Math.min(bbox.minY, p[0].minY);
    bbox.maxX = Math.max(bbox.maxX, p[0].maxX); bbox.maxY = Math.max(bbox.maxY, p[0].maxY);
  }
  return {
    bbox,
    contains(x: number, y: number): boolean {
      if (x < bbox.minX || x > bbox.maxX || y < bbox.minY || y > bbox.maxY) return false;
      for (const p of prepared) {
        if (preparedRelation(p[0], x, y) === OUTSIDE) continue;
        let inHole = false;
        for (let h = 1; h < p.length && !inHole; h++) inHole = preparedRelation(p[h], x, y) === INSIDE;
        if (!inHole) return true;
      }
      return false;
    },
  };
}
