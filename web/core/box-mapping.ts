// An oriented box carried from one plane into another (model pixels → metric frame, a scene CRS → the run frame,
// drawn corners → a box): the one place where a box's centre, length, width and angle are re-derived, for the
// pipeline, the evaluation's truth and the boxes an analyst adds.
import { normaliseAxisAngle } from './decode-outputs.ts';
import type { OrientedBoxM } from './types.ts';

/** A point mapping between planes. */
export type PointMap = (x: number, y: number) => readonly [number, number];

/**
 * Map a box through `map`: the centre is mapped, length and width are twice the mapped half-axes (so a scale or
 * a flip of the y axis is absorbed), the angle is that of the mapped length axis in (−π/2, π/2].
 */
export function mapOrientedBox(map: PointMap, cx: number, cy: number, length: number, width: number, angleRad: number): OrientedBoxM {
  const hl = length / 2, hw = width / 2;
  const c = map(cx, cy);
  const pl = map(cx + Math.cos(angleRad) * hl, cy + Math.sin(angleRad) * hl);
  const pw = map(cx - Math.sin(angleRad) * hw, cy + Math.cos(angleRad) * hw);
  return {
    cxM: c[0], cyM: c[1],
    lengthM: 2 * Math.hypot(pl[0] - c[0], pl[1] - c[1]),
    widthM: 2 * Math.hypot(pw[0] - c[0], pw[1] - c[1]),
    angleRad: normaliseAxisAngle(Math.atan2(pl[1] - c[1], pl[0] - c[0])),
  };
}

/** The box of four corners given in order around it (already in the target plane): longer edge = length. */
export function boxFromCorners(p: readonly (readonly [number, number])[]): OrientedBoxM {
  const e1 = Math.hypot(p[1][0] - p[0][0], p[1][1] - p[0][1]);
  const e2 = Math.hypot(p[2][0] - p[1][0], p[2][1] - p[1][1]);
  const long = e1 >= e2 ? [p[0], p[1]] : [p[1], p[2]];
  return {
    cxM: (p[0][0] + p[1][0] + p[2][0] + p[3][0]) / 4, cyM: (p[0][1] + p[1][1] + p[2][1] + p[3][1]) / 4,
    lengthM: Math.max(e1, e2), widthM: Math.min(e1, e2),
    angleRad: normaliseAxisAngle(Math.atan2(long[1][1] - long[0][1], long[1][0] - long[0][0])),
  };
}
