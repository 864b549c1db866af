// Rotated-rectangle IoU and polygon clipping, checked against analytic areas and an independent fine-raster count.
import { describe, it, expect } from 'vitest';
import {
  boxCorners, clipPolygon, polygonArea, signedPolygonArea, rotatedIoU, rotatedIntersectionArea,
} from '../../../web/core/oriented-box.ts';
import type { OrientedBoxM } from '../../../web/core/types.ts';

const box = (cxM: number, cyM: number, lengthM: number, widthM: number, angleRad = 0): OrientedBoxM => ({ cxM, cyM, lengthM, widthM, angleRad });

/** Independent area of A ∩ B: count cell centres of a fine raster inside both (point-in-rotated-rectangle test). */
function rasterIoU(a: OrientedBoxM, b: OrientedBoxM, cells = 1200): number {
  const inside = (r: OrientedBoxM, x: number, y: number) => {
    const dx = x - r.cxM, dy = y - r.cyM, c = Math.cos(r.angleRad), s = Math.sin(r.angleRad);
    return Math.abs(dx * c + dy * s) <= r.lengthM / 2 && Math.abs(-dx * s + dy * c) <= r.widthM / 2;
  };
  const ra = Math.hypot(a.lengthM, a.widthM) / 2, rb = Math.hypot(b.lengthM, b.widthM) / 2;
  const x0 = Math.min(a.cxM - ra, b.cxM - rb), x1 = Math.max(a.cxM + ra, b.cxM + rb);
  const y0 = Math.min(a.cyM - ra, b.cyM - rb), y1 = Math.max(a.cyM + ra, b.cyM + rb);
  const hx = (x1 - x0) / cells, hy = (y1 - y0) / cells;
  let inter = 0;
  for (let i = 0; i < cells; i++) for (let j = 0; j < cells; j++) {
    const x = x0 + (i + 0.5) * hx, y = y0 + (j + 0.5) * hy;
    if (inside(a, x, y) && inside(b, x, y)) inter++;
  }
  const interA = inter * hx * hy;
  return interA / (a.lengthM * a.widthM + b.lengthM * b.widthM - interA);
}

describe('polygon area and corners', () => {
  it('shoelace: the 3-4-5 right triangle has area 6, counter-clockwise is positive', () => {
    expect(signedPolygonArea([0, 0, 4, 0, 0, 3])).toBeCloseTo(6, 12);
    expect(signedPolygonArea([0, 0, 0, 3, 4, 0])).toBeCloseTo(-6, 12);
  });
  it('corners of a 4.4 × 1.8 box at 30° are counter-clockwise with area 7.92', () => {
    const c = boxCorners(box(10, 20, 4.4, 1.8, Math.PI / 6));
    expect(signedPolygonArea(c.flat())).toBeCloseTo(4.4 * 1.8, 10);
    // The length axis points along 30°: corner 0 minus corner 1 is the length vector.
    expect(c[0][0] - c[1][0]).toBeCloseTo(4.4 * Math.cos(Math.PI / 6), 10);
    expect(c[0][1] - c[1][1]).toBeCloseTo(4.4 * Math.sin(Math.PI / 6), 10);
  });
});

describe('convex clipping (Sutherland–Hodgman)', () => {
  it('a unit square and the same square rotated 45° meet in a regular octagon of area 2(√2 − 1)', () => {
    // Analytic: octagon with inradius 1/2 has area 8·(1/2)²·tan(π/8) = 2(√2 − 1) ≈ 0.828427.
    const a = boxCorners(box(0, 0, 1, 1)).flat(), b = boxCorners(box(0, 0, 1, 1, Math.PI / 4)).flat();
    const poly = clipPolygon(a, b);
    expect(poly.length / 2).toBe(8);
    expect(polygonArea(poly)).toBeCloseTo(2 * (Math.SQRT2 - 1), 12);
    const oct = 2 * (Math.SQRT2 - 1);
    expect(rotatedIoU(box(0, 0, 1, 1), box(0, 0, 1, 1, Math.PI / 4))).toBeCloseTo(oct / (2 - oct), 12);
  });
  it('a 2 × 2 square and a diamond with vertices on its edge midpoints meet in the diamond (area 2)', () => {
    const diamond = box(0, 0, Math.SQRT2, Math.SQRT2, Math.PI / 4);
    expect(rotatedIntersectionArea(0, 0, 2, 2, 0, 0, 0, Math.SQRT2, Math.SQRT2, Math.PI / 4)).toBeCloseTo(2, 12);
    expect(rotatedIoU(box(0, 0, 2, 2), diamond)).toBeCloseTo(0.5, 12);
  });
  it('a unit square with a corner at the centre of the diamond |x| + |y| ≤ 1: a right triangle of area 1/2 (analytic)', () => {
    // Square [0,1]², diamond |x| + |y| ≤ 1: the part of the square under x + y ≤ 1 is a right triangle, area 1/2.
    expect(rotatedIntersectionArea(0.5, 0.5, 1, 1, 0, 0, 0, Math.SQRT2, Math.SQRT2, Math.PI / 4)).toBeCloseTo(0.5, 12);
  });
  it('disjoint, touching and nested boxes', () => {
    expect(rotatedIoU(box(0, 0, 2, 1, 0.3), box(10, 0, 2, 1, 1.1))).toBe(0);
    expect(rotatedIoU(box(0, 0, 2, 2), box(2, 0, 2, 2))).toBe(0); // share an edge only
    expect(rotatedIoU(box(0, 0, 4, 4, 0.7), box(0, 0, 1, 1, 0.2))).toBeCloseTo(1 / 16, 12);
    expect(rotatedIoU(box(3, 4, 4.4, 1.8, 1.234), box(3, 4, 4.4, 1.8, 1.234))).toBeCloseTo(1, 12);
  });
  it('axis-aligned fast path equals the clipping path (90° turns swap length and width)', () => {
    const a = box(0, 0, 4, 2, 0), b = box(1, 0.5, 2, 4, Math.PI / 2); // b covers x∈[-1,3], y∈[-0.5,1.5]
    // Fast path: A = [-2,2]×[-1,1]; B = [-1,3]×[-0.5,1.5]; intersection 3 × 1.5 = 4.5.
    expect(rotatedIntersectionArea(0, 0, 4, 2, 0, 1, 0.5, 2, 4, Math.PI / 2)).toBeCloseTo(4.5, 12);
    expect(rotatedIntersectionArea(0, 0, 4, 2, 1e-7, 1, 0.5, 2, 4, Math.PI / 2 + 1e-7)).toBeCloseTo(4.5, 5);
    expect(rotatedIoU(a, b)).toBeCloseTo(4.5 / (8 + 8 - 4.5), 12);
  });
});

describe('rotated IoU vs an independent fine raster (1200² cells)', () => {
  // Deterministic pseudo-random pairs; raster error is ~perimeter × cell size, well under 1e-2 in IoU here.
  let seed = 12345;
  const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
  for (let t = 0; t < 12; t++) {
    const a = box(rnd() * 2, rnd() * 2, 2 + rnd() * 3, 0.8 + rnd() * 1.5, rnd() * Math.PI);
    const b = box(a.cxM + (rnd() - 0.5) * 2.5, a.cyM + (rnd() - 0.5) * 2.5, 2 + rnd() * 3, 0.8 + rnd() * 1.5, rnd() * Math.PI);
    it(`pair ${t}`, () => {
      expect(Math.abs(rotatedIoU(a, b) - rasterIoU(a, b))).toBeLessThan(1e-2);
    });
  }
  it('keeps precision at UTM-sized coordinates', () => {
    const a = box(612345.5, 5812345.25, 4.4, 1.8, 0.4), b = box(612345.9, 5812345.05, 4.5, 1.7, 0.5);
    const a0 = box(0.5, 0.25, 4.4, 1.8, 0.4), b0 = box(0.9, 0.05, 4.5, 1.7, 0.5);
    expect(rotatedIoU(a, b)).toBeCloseTo(rotatedIoU(a0, b0), 9);
  });
});
