// RFC 7946 GeoJSON of detections: oriented boxes as lon/lat polygons (CCW exteriors, ≤ 7 decimals) with properties.
import { createTransform, parseEpsgName, type UserCrsDefs } from './crs.ts';
import { COUNTING_RULE } from './point-in-polygon.ts';
import type { DetectionTable, ReviewState } from './types.ts';

/** What each detection's `sceneIdx` refers to. */
export interface ExportScene {
  name: string;
  /** YYYY-MM-DD */
  acquisitionDate: string;
  gsdM: number;
}

export interface DetectionsExportInput {
  detections: DetectionTable;
  classes: readonly string[];
  scenes: readonly ExportScene[];
  review?: readonly ReviewState[];
}

export interface DetectionsExportOptions {
  /** Decimal places of lon/lat (default 7, ~1 cm; RFC 7946 §11.2 advises against more). */
  decimals?: number;
  /** Keep only these rows (e.g. those counted); default all. */
  include?: (row: number) => boolean;
  /** Minimum score in force, written to the top-level member `seamtally` (default undefined). */
  minScore?: number;
  userDefs?: UserCrsDefs;
}

export interface DetectionFeature {
  type: 'Feature';
  id: number;
  geometry: { type: 'Polygon'; coordinates: [number, number][][] };
  properties: {
    class: string;
    score: number;
    scene: string;
    acquisitionDate: string;
    gsdM: number;
    review: ReviewState;
    lengthM: number;
    widthM: number;
    headingDeg: number;
  };
}

export interface DetectionsFeatureCollection {
  type: 'FeatureCollection';
  /** Foreign member (RFC 7946 §6.1): the counting rule, frame and threshold the detections were made under. */
  seamtally: { countingRule: string; frameCrs: string; minScore?: number };
  features: DetectionFeature[];
}

const round = (v: number, decimals: number) => {
  const f = 10 ** decimals;
  const r = Math.round(v * f) / f;
  return r === 0 ? 0 : r; // no -0 in output
};

/** Build the FeatureCollection. Each box's four corners are converted from the metric frame to WGS 84 lon/lat. */
export function detectionsToGeoJson(input: DetectionsExportInput, options: DetectionsExportOptions = {}): DetectionsFeatureCollection {
  const t = input.detections;
  const decimals = options.decimals ?? 7;
  const toLonLat = createTransform(parseEpsgName(t.frameCrs), 4326, options.userDefs);
  const features: DetectionFeature[] = [];
  for (let i = 0; i < t.count; i++) {
    if (options.include && !options.include(i)) continue;
    const scene = input.scenes[t.sceneIdx[i]];
    if (!scene) throw new Error(`detectionsToGeoJson: detection ${i} names scene ${t.sceneIdx[i]} but only ${input.scenes.length} scenes are given`);
    const className = input.classes[t.classIdx[i]];
    if (className === undefined) throw new Error(`detectionsToGeoJson: detection ${i} has class index ${t.classIdx[i]} with no name`);
    const ring = boxRingLonLat(t.cxM[i], t.cyM[i], t.lengthM[i], t.widthM[i], t.angleRad[i], toLonLat, decimals);
    features.push({
      type: 'Feature',
      id: i,
      geometry: { type: 'Polygon', coordinates: [ring] },
      properties: {
        class: className,
        score: round(t.score[i], 4),
        scene: scene.name,
        acquisitionDate: scene.acquisitionDate,
        gsdM: round(scene.gsdM, 4),
        review: input.review?.[i] ?? 'unreviewed',
        lengthM: round(t.lengthM[i], 3),
        widthM: round(t.widthM[i], 3),
        // compass heading of the length axis in the frame (0 = grid north, clockwise), modulo 180
        headingDeg: (((round(90 - (t.angleRad[i] * 180) / Math.PI, 2) % 180) + 180) % 180) + 0,
      },
    });
  }
  return {
    type: 'FeatureCollection',
    seamtally: { countingRule: COUNTING_RULE, frameCrs: t.frameCrs, ...(options.minScore !== undefined ? { minScore: options.minScore } : {}) },
    features,
  };
}

/** Closed lon/lat ring of an oriented box, counter-clockwise (RFC 7946 §3.1.6 right-hand rule). */
export function boxRingLonLat(
  cxM: number, cyM: number, lengthM: number, widthM: number, angleRad: number,
  toLonLat: (xy: readonly [number, number]) => readonly [number, number],
  decimals = 7,
): [number, number][] {
  const c = Math.cos(angleRad);
  const s = Math.sin(angleRad);
  const hl = lengthM / 2;
  const hw = widthM / 2;
  // counter-clockwise in a y-up frame: (+l,-w) → (+l,+w) → (-l,+w) → (-l,-w)
  const local: [number, number][] = [[hl, -hw], [hl, hw], [-hl, hw], [-hl, -hw]];
  const ring = local.map(([u, v]) => {
    const ll = toLonLat([cxM + u * c - v * s, cyM + u * s + v * c]);
    return [round(ll[0], decimals), round(ll[1], decimals)] as [number, number];
  });
  if (shoelace(ring) < 0) ring.reverse();
  ring.push([ring[0][0], ring[0][1]]);
  return ring;
}

/** Twice the signed planar area of an open ring (positive = counter-clockwise). */
function shoelace(ring: readonly (readonly [number, number])[]): number {
  let s = 0;
  for (let i = 0; i < ring.length; i++) {
    const a = ring[i];
    const b = ring[(i + 1) % ring.length];
    s += a[0] * b[1] - b[0] * a[1];
  }
  return s;
}
