// AOIs: GeoJSON (Polygon / MultiPolygon, with holes) parsed and validated in WGS 84, reprojected into a scene CRS.
import { createTransform, type UserCrsDefs } from './crs.ts';
import { SeamtallyError } from './errors.ts';
import { BOUNDARY, OUTSIDE, pointInRing } from './point-in-polygon.ts';
import type { LonLatDeg, MapXY } from './types.ts';

/** One area of interest: polygons → rings (exterior first, then holes) → closed lon/lat positions. */
export interface Aoi {
  id: string;
  name: string;
  polygonsLonLat: LonLatDeg[][][];
}

/** An AOI in the map units of one CRS (after `reprojectAoi`). */
export interface AoiInCrs {
  id: string;
  name: string;
  epsg: number;
  polygons: MapXY[][][];
}

type Json = Record<string, unknown>;
/** AOI ids and names are cut to this many characters (they appear in messages, tables and exports). */
const MAX_NAME_CHARS = 200;
const isObj = (v: unknown): v is Json => typeof v === 'object' && v !== null && !Array.isArray(v);

/** A value as a short JSON excerpt for a message (untrusted input can be megabytes long). */
function short(v: unknown, maxChars = 60): string {
  let text: string | undefined;
  try { text = JSON.stringify(v); } catch { text = undefined; }
  text ??= typeof v;
  return text.length > maxChars ? `${text.slice(0, maxChars - 1)}…` : text;
}

function invalid(message: string, detail: Record<string, unknown> = {}): SeamtallyError {
  return new SeamtallyError('aoi-invalid', message, detail);
}

/**
 * Parse a GeoJSON text or object (FeatureCollection, Feature, Polygon, MultiPolygon) into validated AOIs.
 * Each polygon feature becomes one AOI; its id is the feature id, else properties.id, else "aoi-N"; its name is
 * properties.name, else the id. Throws 'aoi-invalid' or 'aoi-not-lonlat' with what to fix.
 */
export function parseAois(input: unknown): Aoi[] {
  let doc = input;
  if (typeof input === 'string') {
    try {
      doc = JSON.parse(input);
    } catch (err) {
      throw invalid(`The AOI file is not valid JSON (${(err as Error).message}): export it again as GeoJSON.`);
    }
  }
  if (!isObj(doc)) throw invalid('The AOI file is not a GeoJSON object: give a FeatureCollection, Feature, Polygon or MultiPolygon.');
  checkLegacyCrs(doc);
  const features: Json[] = [];
  if (doc.type === 'FeatureCollection') {
    if (!Array.isArray(doc.features)) throw invalid('This FeatureCollection has no "features" array: export it again as GeoJSON.');
    for (const f of doc.features) if (isObj(f)) features.push(f);
  } else if (doc.type === 'Feature') {
    features.push(doc);
  } else {
    features.push({ type: 'Feature', properties: {}, geometry: doc });
  }
  const aois: Aoi[] = [];
  features.forEach((f, i) => {
    const props = isObj(f.properties) ? f.properties : {};
    const rawId = f.id ?? props.id;
    const id = typeof rawId === 'string' || typeof rawId === 'number' ? String(rawId).slice(0, MAX_NAME_CHARS) : `aoi-${i + 1}`;
    const name = typeof props.name === 'string' && props.name.trim() ? props.name.trim().slice(0, MAX_NAME_CHARS) : id;
    const g = f.geometry;
    if (!isObj(g)) throw invalid(`AOI "${name}" has no geometry: draw or export it again as a Polygon.`, { id });
    let polys: unknown[];
    if (g.type === 'Polygon') polys = [g.coordinates];
    else if (g.type === 'MultiPolygon') polys = Array.isArray(g.coordinates) ? g.coordinates : [];
    else if (typeof g.type === 'string') throw invalid(`AOI "${name}" is a ${g.type.slice(0, 40)}, but AOIs must be Polygon or MultiPolygon areas: draw it as a polygon.`, { id });
    else throw invalid(`AOI "${name}" has a geometry without a "type" (it must be "Polygon" or "MultiPolygon"): export it again as GeoJSON.`, { id });
    const aoi: Aoi = { id, name, polygonsLonLat: polys.map((p, k) => readPolygon(p, name, k)) };
    validateAoi(aoi);
    aois.push(aoi);
  });
  if (aois.length === 0) throw invalid('The AOI file contains no polygon: draw at least one area, or check that you exported the right layer.');
  return aois;
}

function checkLegacyCrs(doc: Json): void {
  const crs = doc.crs;
  if (!isObj(crs) || !isObj(crs.properties)) return;
  const name = String(crs.properties.name ?? '');
  if (name && !/(CRS84|EPSG:?:?4326)$/i.test(name)) {
    throw new SeamtallyError(
      'aoi-not-lonlat',
      `The AOI file declares the coordinate system ${name}, but GeoJSON AOIs must be WGS 84 longitude/latitude (RFC 7946): convert it, for example ogr2ogr -t_srs EPSG:4326 out.geojson in.geojson.`,
      { crs: name },
    );
  }
}

function readPolygon(p: unknown, name: string, k: number): LonLatDeg[][] {
  if (!Array.isArray(p)) throw invalid(`Polygon ${k + 1} of AOI "${name}" has no coordinate rings: export it again as GeoJSON.`);
  return p.map((ring, r) => {
    if (!Array.isArray(ring)) throw invalid(`Ring ${r + 1} of polygon ${k + 1} of AOI "${name}" is not a list of positions.`);
    const out: LonLatDeg[] = [];
    for (const pos of ring) {
      if (!Array.isArray(pos) || pos.length < 2 || typeof pos[0] !== 'number' || typeof pos[1] !== 'number' || !Number.isFinite(pos[0]) || !Number.isFinite(pos[1])) {
        throw invalid(`AOI "${name}" has a position that is not a pair of numbers (${short(pos)}): fix the file.`);
      }
      const prev = out[out.length - 1];
      if (!prev || prev[0] !== pos[0] || prev[1] !== pos[1]) out.push([pos[0], pos[1]]);
    }
    return out;
  });
}

/** Check one AOI; throws 'aoi-invalid' / 'aoi-not-lonlat' with a sentence saying what to fix. */
export function validateAoi(aoi: Aoi): void {
  const name = aoi.name;
  if (aoi.polygonsLonLat.length === 0) throw invalid(`AOI "${name}" is empty (it has no polygon): draw it again or remove it from the file.`, { id: aoi.id });
  const all = aoi.polygonsLonLat.flat(2);
  if (all.length === 0) throw invalid(`AOI "${name}" is empty (its polygon has no positions): draw it again or remove it from the file.`, { id: aoi.id });
  const outOfRange = all.find((p) => Math.abs(p[0]) > 180 || Math.abs(p[1]) > 90);
  if (outOfRange && all.every((p) => Math.abs(p[0]) < 360 && Math.abs(p[1]) <= 90) && all.some((p) => Math.abs(p[0]) <= 180)) {
    // longitudes running on past ±180° (some editors write 180.01 instead of -179.99): an antimeridian crossing
    throw invalid(`AOI "${name}" runs past 180° longitude (position ${JSON.stringify(outOfRange)}), i.e. across the antimeridian: split it there into two polygons of a MultiPolygon with longitudes from -180 to 180 (RFC 7946 §3.1.9).`, { id: aoi.id, position: outOfRange });
  }
  if (outOfRange) {
    const swapped = all.every((p) => Math.abs(p[0]) <= 90 && Math.abs(p[1]) <= 180);
    throw new SeamtallyError(
      'aoi-not-lonlat',
      swapped
        ? `AOI "${name}" has latitude/longitude in the wrong order (position ${JSON.stringify(outOfRange)}): GeoJSON positions are [longitude, latitude] (RFC 7946); swap them.`
        : `AOI "${name}" has coordinates that are not longitude/latitude (position ${JSON.stringify(outOfRange)} looks like projected metres): GeoJSON AOIs must be WGS 84 degrees (RFC 7946); convert the file, for example ogr2ogr -t_srs EPSG:4326 out.geojson in.geojson.`,
      { id: aoi.id, position: outOfRange },
    );
  }
  aoi.polygonsLonLat.forEach((poly, k) => {
    if (poly.length === 0) throw invalid(`Polygon ${k + 1} of AOI "${name}" is empty (it has no rings): draw it again or remove it.`, { id: aoi.id });
    poly.forEach((ring, r) => {
      const what = `${r === 0 ? 'The outer ring' : `Hole ${r}`} of polygon ${k + 1} of AOI "${name}"`;
      const a = ring[0];
      const z = ring[ring.length - 1];
      if (ring.length < 4) throw invalid(`${what} has ${ring.length} positions; a ring needs at least 4 (the first repeated at the end): draw at least a triangle.`, { id: aoi.id });
      if (a[0] !== z[0] || a[1] !== z[1]) throw invalid(`${what} is not closed: its last position must repeat its first (RFC 7946 §3.1.6).`, { id: aoi.id });
      for (let i = 1; i < ring.length; i++) {
        if (Math.abs(ring[i][0] - ring[i - 1][0]) > 180) {
          throw invalid(`${what} crosses the antimeridian (180° longitude): split it there into two polygons of a MultiPolygon (RFC 7946 §3.1.9).`, { id: aoi.id });
        }
      }
    });
    const crossing = findSelfIntersection(poly);
    if (crossing) throw invalid(`Polygon ${k + 1} of AOI "${name}" intersects itself near ${crossing[0].toFixed(6)}, ${crossing[1].toFixed(6)}: redraw it so that its edges do not cross.`, { id: aoi.id, at: crossing });
    poly.forEach((ring, r) => {
      if (planarArea(ring) === 0) throw invalid(`${r === 0 ? 'The outer ring' : `Hole ${r}`} of polygon ${k + 1} of AOI "${name}" encloses no area: redraw it.`, { id: aoi.id });
    });
    for (let h = 1; h < poly.length; h++) {
      const probe = poly[h].find((p) => pointInRing(p[0], p[1], poly[0]) !== BOUNDARY);
      if (probe && pointInRing(probe[0], probe[1], poly[0]) === OUTSIDE) {
        throw invalid(`Hole ${h} of polygon ${k + 1} of AOI "${name}" lies outside its outer ring: move it inside or make it a separate polygon.`, { id: aoi.id });
      }
    }
  });
}

function planarArea(ring: readonly (readonly [number, number])[]): number {
  let s = 0;
  for (let i = 0; i + 1 < ring.length; i++) s += ring[i][0] * ring[i + 1][1] - ring[i + 1][0] * ring[i][1];
  return s / 2;
}

const orient = (ax: number, ay: number, bx: number, by: number, cx: number, cy: number) => Math.sign((bx - ax) * (cy - ay) - (by - ay) * (cx - ax));

/**
 * First point where two edges of a polygon's rings cross or overlap (edges sharing a ring vertex may touch there),
 * or undefined. Sweep over edges sorted by min x.
 */
export function findSelfIntersection(poly: readonly (readonly (readonly [number, number])[])[]): readonly [number, number] | undefined {
  interface Edge { ax: number; ay: number; bx: number; by: number; ring: number; i: number; n: number; minX: number; maxX: number }
  const edges: Edge[] = [];
  poly.forEach((ring, r) => {
    const n = ring.length - 1;
    for (let i = 0; i < n; i++) {
      const [ax, ay] = ring[i];
      const [bx, by] = ring[i + 1];
      edges.push({ ax, ay, bx, by, ring: r, i, n, minX: Math.min(ax, bx), maxX: Math.max(ax, bx) });
    }
  });
  edges.sort((p, q) => p.minX - q.minX);
  for (let s = 0; s < edges.length; s++) {
    const e = edges[s];
    for (let t = s + 1; t < edges.length && edges[t].minX <= e.maxX; t++) {
      const f = edges[t];
      const adjacent = e.ring === f.ring && (Math.abs(e.i - f.i) === 1 || Math.abs(e.i - f.i) === e.n - 1);
      const o1 = orient(e.ax, e.ay, e.bx, e.by, f.ax, f.ay);
      const o2 = orient(e.ax, e.ay, e.bx, e.by, f.bx, f.by);
      const o3 = orient(f.ax, f.ay, f.bx, f.by, e.ax, e.ay);
      const o4 = orient(f.ax, f.ay, f.bx, f.by, e.bx, e.by);
      if (o1 * o2 < 0 && o3 * o4 < 0) return [(e.ax + e.bx) / 2, (e.ay + e.by) / 2];
      if (o1 === 0 && o2 === 0) {
        // collinear: overlapping by more than a shared endpoint?
        const ux = e.bx - e.ax, uy = e.by - e.ay;
        const len2 = ux * ux + uy * uy;
        const t1 = ((f.ax - e.ax) * ux + (f.ay - e.ay) * uy) / len2;
        const t2 = ((f.bx - e.ax) * ux + (f.by - e.ay) * uy) / len2;
        const lo = Math.max(0, Math.min(t1, t2));
        const hi = Math.min(1, Math.max(t1, t2));
        if (hi - lo > 1e-12) return [f.ax, f.ay];
      } else if (!adjacent) {
        // a vertex of one edge lying on the interior of the other (T-junction) is a self-touch: reject it too
        const onE = (o: number, px: number, py: number) => o === 0 && between(e, px, py);
        const onF = (o: number, px: number, py: number) => o === 0 && between(f, px, py);
        if (e.ring === f.ring && (onE(o1, f.ax, f.ay) || onE(o2, f.bx, f.by) || onF(o3, e.ax, e.ay) || onF(o4, e.bx, e.by))) {
          return [f.ax, f.ay];
        }
      }
    }
  }
  return undefined;
}

function between(e: { ax: number; ay: number; bx: number; by: number }, px: number, py: number): boolean {
  const strictlyInside = (v: number, a: number, b: number) => (a < b ? v > a && v < b : v < a && v > b);
  return e.ax !== e.bx ? strictlyInside(px, e.ax, e.bx) : strictlyInside(py, e.ay, e.by);
}

export interface ReprojectOptions {
  userDefs?: UserCrsDefs;
  /**
   * Maximum distance, in target CRS units, between a reprojected edge and the true image of the lon/lat edge
   * (edges are straight in lon/lat, RFC 7946). Edges are halved until their midpoint is within this. Default 0.01.
   */
  tolerance?: number;
  /** Maximum halvings per edge (default 12, i.e. ≤ 4096 pieces). */
  maxDepth?: number;
}

/** Reproject an AOI into `epsg`, densifying edges so long edges keep their true shape. */
export function reprojectAoi(aoi: Aoi, epsg: number, options: ReprojectOptions = {}): AoiInCrs {
  const fwd = createTransform(4326, epsg, options.userDefs);
  const tol = options.tolerance ?? 0.01;
  const maxDepth = options.maxDepth ?? 12;
  const densify = (a: LonLatDeg, b: LonLatDeg, pa: MapXY, pb: MapXY, depth: number, out: MapXY[]) => {
    if (depth < maxDepth) {
      const m: LonLatDeg = [(a[0] + b[0]) / 2, (a[1] + b[1]) / 2];
      const pm = fwd(m);
      if (Math.hypot(pm[0] - (pa[0] + pb[0]) / 2, pm[1] - (pa[1] + pb[1]) / 2) > tol) {
        densify(a, m, pa, pm, depth + 1, out);
        densify(m, b, pm, pb, depth + 1, out);
        return;
      }
    }
    out.push(pb);
  };
  const polygons = aoi.polygonsLonLat.map((poly) =>
    poly.map((ring) => {
      const projected = ring.map((p) => fwd(p));
      const out: MapXY[] = [projected[0]];
      for (let i = 0; i + 1 < ring.length; i++) densify(ring[i], ring[i + 1], projected[i], projected[i + 1], 0, out);
      return out;
    }),
  );
  return { id: aoi.id, name: aoi.name, epsg, polygons };
}

/** AOIs back to a GeoJSON FeatureCollection (for saving the user's areas). */
export function aoisToGeoJson(aois: readonly Aoi[]): { type: 'FeatureCollection'; features: unknown[] } {
  return {
    type: 'FeatureCollection',
    features: aois.map((a) => ({
      type: 'Feature',
      id: a.id,
      properties: { name: a.name },
      geometry: a.polygonsLonLat.length === 1
        ? { type: 'Polygon', coordinates: a.polygonsLonLat[0] }
        : { type: 'MultiPolygon', coordinates: a.polygonsLonLat },
    })),
  };
}
