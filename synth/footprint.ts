// The acquisition footprint: a rotated, inset rectangle; pixels whose centre lies outside it are nodata (the collar).
import type { SceneParams } from './scene-params.ts';

/** The footprint's centre, half-sizes and rotation in pixel coordinates. */
function footprintFrame(p: SceneParams) {
  const a = (p.footprintRotDeg * Math.PI) / 180;
  return {
    cx: p.widthPx / 2,
    cy: p.heightPx / 2,
    hw: (p.widthPx / 2) * (1 - p.footprintInset),
    hh: (p.heightPx / 2) * (1 - p.footprintInset),
    c: Math.cos(a),
    s: Math.sin(a),
  };
}

/** Footprint corners in pixel coordinates (x right, y down), counter-clockwise on the map. */
export function footprintCornersPx(p: SceneParams): [number, number][] {
  const { cx, cy, hw, hh, c, s } = footprintFrame(p);
  return [[-hw, hh], [hw, hh], [hw, -hh], [-hw, -hh]].map(([x, y]) => [cx + x * c - y * s, cy + x * s + y * c]);
}

/** A test for pixel (xPx, yPx): true when its centre lies inside the footprint. */
export function footprintTest(p: SceneParams): (xPx: number, yPx: number) => boolean {
  const { cx, cy, hw, hh, c, s } = footprintFrame(p);
  return (xPx, yPx) => {
    const dx = xPx + 0.5 - cx;
    const dy = yPx + 0.5 - cy;
    return Math.abs(dx * c + dy * s) <= hw && Math.abs(-dx * s + dy * c) <= hh;
  };
}

/** The same test for a map point (scene CRS metres). */
export function footprintTestMap(p: SceneParams): (xM: number, yM: number) => boolean {
  const t = footprintTest(p);
  return (xM, yM) => {
    const xPx = (xM - p.originXM) / p.gsdM - 0.5;
    const yPx = (p.originYM - yM) / p.gsdM - 0.5;
    return xPx >= -0.5 && yPx >= -0.5 && xPx < p.widthPx - 0.5 && yPx < p.heightPx - 0.5 && t(xPx, yPx);
  };
}
