// Boxes carried between planes: through a similarity (scale s, y flipped, as a north-up geotransform does) a box
// keeps its shape scaled by s and its angle mirrored; through a real CRS change (UTM 32N → 33N, proj4 with the
// EPSG registry) the mapped box's corners agree with the mapped corners of the original to well under a centimetre
// for a car-sized box; corners in any order around the box give the same box.
import { describe, expect, it } from 'vitest';
import { boxFromCorners, mapOrientedBox } from '../../../web/core/box-mapping.ts';
import { boxCorners } from '../../../web/core/oriented-box.ts';
import { createTransform } from '../../../web/core/crs.ts';

describe('mapOrientedBox', () => {
  it('a north-up geotransform (scale 0.3, y down → up) scales and mirrors the angle', () => {
    const b = mapOrientedBox((x, y) => [500000 + 0.3 * x, 5300000 - 0.3 * y], 100, 200, 15, 6, 0.4);
    expect(b.cxM).toBeCloseTo(500030, 9);
    expect(b.cyM).toBeCloseTo(5299940, 9);
    expect(b.lengthM).toBeCloseTo(4.5, 7); // map coordinates near 5e6 leave ~1e-9 m of float precision
    expect(b.widthM).toBeCloseTo(1.8, 7);
    expect(b.angleRad).toBeCloseTo(-0.4, 7);
  });
  it('angles come back in (−π/2, π/2]', () => {
    const b = mapOrientedBox((x, y) => [x, y], 0, 0, 4, 2, 3);
    expect(b.angleRad).toBeCloseTo(3 - Math.PI, 12);
  });
  it('UTM 32N → 33N: corners of the mapped box equal the mapped corners within 5 mm', () => {
    const f = createTransform(32632, 32633);
    const box = { cxM: 690000, cyM: 5330000, lengthM: 4.6, widthM: 1.9, angleRad: 0.7 };
    const m = mapOrientedBox((x, y) => f([x, y]), box.cxM, box.cyM, box.lengthM, box.widthM, box.angleRad);
    const want = boxCorners(box).map((p) => f(p));
    const got = boxCorners(m);
    got.forEach((p, i) => expect(Math.hypot(p[0] - want[i][0], p[1] - want[i][1])).toBeLessThan(0.005));
  });
});

describe('boxFromCorners', () => {
  it('recovers a box from its corners in any starting order', () => {
    const box = { cxM: 10, cyM: 20, lengthM: 4.5, widthM: 1.8, angleRad: 0.3 };
    const c = boxCorners(box);
    for (let k = 0; k < 4; k++) {
      const b = boxFromCorners([0, 1, 2, 3].map((i) => c[(i + k) % 4]));
      expect(b.cxM).toBeCloseTo(10, 9); expect(b.cyM).toBeCloseTo(20, 9);
      expect(b.lengthM).toBeCloseTo(4.5, 9); expect(b.widthM).toBeCloseTo(1.8, 9);
      expect(b.angleRad).toBeCloseTo(0.3, 9);
    }
  });
});
