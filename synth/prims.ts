// Drawing primitives of the scene (world-metre polygons and circles in paint layers) and their geometry helpers.
import type { Refl } from './spectra.ts';

/** Paint layers, painted in this order; the two shadow layers are masks that darken what is below them. */
export const Layer = {
  ground: 0, surface: 1, marking: 2, lowShadow: 3, vehicle: 4, groundPv: 5, tallShadow: 6, building: 7, roofPv: 8, tree: 9,
} as const;
export const LAYER_COUNT = 10;

/** A PV module grid painted inside a polygon: frame gaps between modules of cellA × cellB metres. */
export interface PvPattern {
  oxM: number; oyM: number; // array corner (world)
  ax: number; ay: number; // unit vector along module columns
  bx: number; by: number; // unit vector along module rows
  pitchAM: number; pitchBM: number; // module pitch (module + gap)
  moduleAM: number; moduleBM: number; // module size without the gap
  frame: Refl;
}

export interface Prim {
  layer: number;
  /** 'poly': convex polygon x0,y0,x1,y1,… (world metres); 'circle': cx, cy, r. */
  shape: 'poly' | 'circle';
  pts: number[];
  /** Reflectance; null for shadow masks. */
  refl: Refl | null;
  /** Amplitude of low-frequency texture (0 = flat colour) and of per-sample grain. */
  tex: number;
  grain: number;
  /** Multiplier for illumination (slopes facing or turned away from the sun). */
  light: number;
  pv?: PvPattern;
}

/** A block-local frame: world = origin + R(angle)·(u, v). */
export interface Frame { oxM: number; oyM: number; cos: number; sin: number; angleRad: number }

export function toWorld(f: Frame, uM: number, vM: number): [number, number] {
  return [f.oxM + uM * f.cos - vM * f.sin, f.oyM + uM * f.sin + vM * f.cos];
}

/** Corners (counter-clockwise) of a rectangle centred at (cx, cy), length along angle, width across. */
export function rectCorners(cxM: number, cyM: number, lengthM: number, widthM: number, angleRad: number): number[] {
  const c = Math.cos(angleRad);
  const s = Math.sin(angleRad);
  const hl = lengthM / 2;
  const hw = widthM / 2;
  const out: number[] = [];
  for (const [a, b] of [[-hl, -hw], [hl, -hw], [hl, hw], [-hl, hw]]) out.push(cxM + a * c - b * s, cyM + a * s + b * c);
  return out;
}

/** Convex hull (Andrew's monotone chain) of flat x,y pairs, counter-clockwise. */
export function convexHull(flat: number[]): number[] {
  const p: [number, number][] = [];
  for (let i = 0; i < flat.length; i += 2) p.push([flat[i], flat[i + 1]]);
  p.sort((a, b) => a[0] - b[0] || a[1] - b[1]);
  if (p.length < 3) return flat.slice();
  const cross = (o: number[], a: number[], b: number[]) => (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0]);
  const lower: [number, number][] = [];
  for (const q of p) { while (lower.length >= 2 && cross(lower[lower.length - 2], lower[lower.length - 1], q) <= 0) lower.pop(); lower.push(q); }
  const upper: [number, number][] = [];
  for (let i = p.length - 1; i >= 0; i--) { const q = p[i]; while (upper.length >= 2 && cross(upper[upper.length - 2], upper[upper.length - 1], q) <= 0) upper.pop(); upper.push(q); }
  lower.pop(); upper.pop();
  return [...lower, ...upper].flat();
}

/** Ground offset of a shadow cast by a point at `heightM` (sun azimuth clockwise from north). */
export function shadowOffset(heightM: number, sunAzimuthDeg: number, sunElevationDeg: number): [number, number] {
  const len = heightM / Math.tan((sunElevationDeg * Math.PI) / 180);
  const az = (sunAzimuthDeg * Math.PI) / 180;
  return [-Math.sin(az) * len, -Math.cos(az) * len];
}

/** Shadow of a prism with convex footprint `pts` and height: hull of the footprint and its displaced copy. */
export function prismShadow(pts: number[], heightM: number, sunAzDeg: number, sunElDeg: number): number[] {
  const [dx, dy] = shadowOffset(heightM, sunAzDeg, sunElDeg);
  const all = pts.slice();
  for (let i = 0; i < pts.length; i += 2) all.push(pts[i] + dx, pts[i + 1] + dy);
  return convexHull(all);
}

export function poly(layer: number, pts: number[], refl: Refl | null, o: Partial<Pick<Prim, 'tex' | 'grain' | 'light' | 'pv'>> = {}): Prim {
  return { layer, shape: 'poly', pts, refl, tex: o.tex ?? 0, grain: o.grain ?? 0, light: o.light ?? 1, pv: o.pv };
}

export function circle(layer: number, cxM: number, cyM: number, rM: number, refl: Refl | null, o: Partial<Pick<Prim, 'tex' | 'grain' | 'light'>> = {}): Prim {
  return { layer, shape: 'circle', pts: [cxM, cyM, rM], refl, tex: o.tex ?? 0, grain: o.grain ?? 0, light: o.light ?? 1 };
}

/** Axis-aligned bounds [minX, minY, maxX, maxY] of a primitive. */
export function primBounds(p: Prim): [number, number, number, number] {
  if (p.shape === 'circle') return [p.pts[0] - p.pts[2], p.pts[1] - p.pts[2], p.pts[0] + p.pts[2], p.pts[1] + p.pts[2]];
  let a = Infinity, b = Infinity, c = -Infinity, d = -Infinity;
  for (let i = 0; i < p.pts.length; i += 2) {
    a = Math.min(a, p.pts[i]); c = Math.max(c, p.pts[i]);
    b = Math.min(b, p.pts[i + 1]); d = Math.max(d, p.pts[i + 1]);
  }
  return [a, b, c, d];
}

/** Illumination of a plane with unit normal (nx, ny, nz) relative to flat ground. */
export function slopeLight(nx: number, ny: number, nz: number, sunAzDeg: number, sunElDeg: number): number {
  const az = (sunAzDeg * Math.PI) / 180;
  const el = (sunElDeg * Math.PI) / 180;
  const sx = Math.sin(az) * Math.cos(el);
  const sy = Math.cos(az) * Math.cos(el);
  const sz = Math.sin(el);
  const direct = Math.max(0, nx * sx + ny * sy + nz * sz) / sz;
  return 0.3 + 0.7 * direct; // 0.3: diffuse sky share, a modelling choice
}
