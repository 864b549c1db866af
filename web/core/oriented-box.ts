// Oriented rectangles: corners, convex polygon clipping (Sutherland–Hodgman), polygon area and rotated IoU.
import type { OrientedBoxM } from './types.ts';

/**
 * Polygons are flat coordinate lists `[x0, y0, x1, y1, …]` (no repeated closing vertex), counter-clockwise in a
 * y-up frame (the order `boxCornersInto` produces). Clipping needs both polygons convex and in the same winding.
 */
export type FlatPolygon = Float64Array | number[];

/** Angles closer than this to a multiple of π/2 count as axis-aligned (fast path). */
const AXIS_EPS_RAD = 1e-9;

/**
 * Write the four corners of an oriented rectangle into `out` starting at `offset` (8 numbers), counter-clockwise
 * in a y-up frame: (+l/2,+w/2), (−l/2,+w/2), (−l/2,−w/2), (+l/2,−w/2) in the box's own axes.
 */
export function boxCornersInto(
  cx: number, cy: number, length: number, width: number, angleRad: number,
  out: Float64Array | number[], offset = 0,
): void {
  const c = Math.cos(angleRad);
  const s = Math.sin(angleRad);
  const ux = (c * length) / 2, uy = (s * length) / 2; // half length axis
  const vx = (-s * width) / 2, vy = (c * width) / 2; // half width axis
  out[offset] = cx + ux + vx; out[offset + 1] = cy + uy + vy;
  out[offset + 2] = cx - ux + vx; out[offset + 3] = cy - uy + vy;
  out[offset + 4] = cx - ux - vx; out[offset + 5] = cy - uy - vy;
  out[offset + 6] = cx + ux - vx; out[offset + 7] = cy + uy - vy;
}

/** The four corners of an oriented box as `[x, y]` pairs, counter-clockwise (y-up). */
export function boxCorners(box: OrientedBoxM): Array<[number, number]> {
  const f = new Float64Array(8);
  boxCornersInto(box.cxM, box.cyM, box.lengthM, box.widthM, box.angleRad, f);
  return [[f[0], f[1]], [f[2], f[3]], [f[4], f[5]], [f[6], f[7]]];
}

/** Axis-aligned bounding box half extents of an oriented rectangle: [halfX, halfY]. */
export function boxHalfExtents(length: number, width: number, angleRad: number): [number, number] {
  const c = Math.abs(Math.cos(angleRad));
  const s = Math.abs(Math.sin(angleRad));
  return [(c * length + s * width) / 2, (s * length + c * width) / 2];
}

/** Signed shoelace area of a flat polygon with `n` vertices (positive when counter-clockwise in y-up). */
export function signedPolygonArea(poly: FlatPolygon, n = poly.length / 2): number {
  let a = 0;
  for (let i = 0, j = n - 1; i < n; j = i++) {
    a += poly[2 * j] * poly[2 * i + 1] - poly[2 * i] * poly[2 * j + 1];
  }
  return a / 2;
}

/** Unsigned area of a simple polygon. */
export function polygonArea(poly: FlatPolygon, n = poly.length / 2): number {
  return Math.abs(signedPolygonArea(poly, n));
}

/**
 * Sutherland–Hodgman clipping of `subject` (any simple polygon) by the convex polygon `clip` (counter-clockwise).
 * Returns the clipped polygon as a new flat array (possibly empty). Allocates; the IoU hot path uses scratch space.
 */
export function clipPolygon(subject: FlatPolygon, clip: FlatPolygon): number[] {
  const a = new Float64Array(2 * (subject.length / 2 + clip.length / 2 + 2) * 2);
  const b = new Float64Array(a.length);
  const n = clipInto(subject, subject.length / 2, clip, clip.length / 2, a, b);
  return Array.from(a.subarray(0, 2 * n));
}

/**
 * Clip in place using two scratch buffers; the result lands in `bufA`, its vertex count is returned.
 * Buffers need room for 2 × (nSubject + nClip) vertices.
 */
function clipInto(
  subject: FlatPolygon, nSubject: number, clip: FlatPolygon, nClip: number, bufA: Float64Array, bufB: Float64Array,
): number {
  let src = bufA, dst = bufB;
  for (let i = 0; i < 2 * nSubject; i++) src[i] = subject[i];
  let n = nSubject;
  for (let e = 0; e < nClip && n > 0; e++) {
    const ex0 = clip[2 * e], ey0 = clip[2 * e + 1];
    const e1 = (e + 1) % nClip;
    const dx = clip[2 * e1] - ex0, dy = clip[2 * e1 + 1] - ey0;
    let m = 0;
    let px = src[2 * (n - 1)], py = src[2 * (n - 1) + 1];
    let pSide = dx * (py - ey0) - dy * (px - ex0);
    for (let i = 0; i < n; i++) {
      const qx = src[2 * i], qy = src[2 * i + 1];
      const qSide = dx * (qy - ey0) - dy * (qx - ex0);
      if (qSide >= 0) {
        if (pSide < 0) {
          const t = pSide / (pSide - qSide);
          dst[2 * m] = px + t * (qx - px); dst[2 * m + 1] = py + t * (qy - py); m++;
        }
        dst[2 * m] = qx; dst[2 * m + 1] = qy; m++;
      } else if (pSide >= 0) {
        const t = pSide / (pSide - qSide);
        dst[2 * m] = px + t * (qx - px); dst[2 * m + 1] = py + t * (qy - py); m++;
      }
      px = qx; py = qy; pSide = qSide;
    }
    const tmp = src; src = dst; dst = tmp;
    n = m;
  }
  if (src !== bufA) for (let i = 0; i < 2 * n; i++) bufA[i] = src[i];
  return n;
}

// Scratch space for the allocation-free IoU (single-threaded per worker, so sharing is safe).
const cornersA = new Float64Array(8);
const cornersB = new Float64Array(8);
const scratch1 = new Float64Array(32);
const scratch2 = new Float64Array(32);

function isAxisAligned(angleRad: number): boolean {
  const q = angleRad / (Math.PI / 2);
  return Math.abs(q - Math.round(q)) < AXIS_EPS_RAD;
}

/** Intersection area of two oriented rectangles given as plain numbers (no allocation). */
export function rotatedIntersectionArea(
  ax: number, ay: number, al: number, aw: number, aa: number,
  bx: number, by: number, bl: number, bw: number, ba: number,
): number {
  if (isAxisAligned(aa) && isAxisAligned(ba)) {
    const [ahx, ahy] = boxHalfExtents(al, aw, Math.round(aa / (Math.PI / 2)) * (Math.PI / 2));
    const [bhx, bhy] = boxHalfExtents(bl, bw, Math.round(ba / (Math.PI / 2)) * (Math.PI / 2));
    const ix = Math.min(ax + ahx, bx + bhx) - Math.max(ax - ahx, bx - bhx);
    const iy = Math.min(ay + ahy, by + bhy) - Math.max(ay - ahy, by - bhy);
    return ix > 0 && iy > 0 ? ix * iy : 0;
  }
  // Work relative to A's centre so large map coordinates (UTM metres) do not cost precision.
  boxCornersInto(0, 0, al, aw, aa, cornersA);
  boxCornersInto(bx - ax, by - ay, bl, bw, ba, cornersB);
  const n = clipInto(cornersA, 4, cornersB, 4, scratch1, scratch2);
  return n < 3 ? 0 : Math.abs(signedPolygonArea(scratch1, n));
}

/** IoU of two oriented rectangles given as plain numbers (no allocation); 0 when either has zero area. */
export function rotatedIoUFlat(
  ax: number, ay: number, al: number, aw: number, aa: number,
  bx: number, by: number, bl: number, bw: number, ba: number,
): number {
  const inter = rotatedIntersectionArea(ax, ay, al, aw, aa, bx, by, bl, bw, ba);
  if (inter <= 0) return 0;
  const union = al * aw + bl * bw - inter;
  return union > 0 ? inter / union : 0;
}

/** Intersection over union of two oriented boxes in the same frame. */
export function rotatedIoU(a: OrientedBoxM, b: OrientedBoxM): number {
  return rotatedIoUFlat(a.cxM, a.cyM, a.lengthM, a.widthM, a.angleRad, b.cxM, b.cyM, b.lengthM, b.widthM, b.angleRad);
}
