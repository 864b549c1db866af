// Vehicles: sizes, colours and the primitives of cars, vans and small trucks seen from above, with their truth boxes.
import { Layer, poly, prismShadow, rectCorners, type Prim } from './prims.ts';
import { CAR_COLOURS, MATERIALS, jitter, scaleRefl, type Refl } from './spectra.ts';
import type { Rng } from './rng.ts';
import type { TruthObject, TruthKind } from './objects.ts';

export interface VehicleSize { lengthM: number; widthM: number; heightM: number }

const clamp = (v: number, lo: number, hi: number) => Math.max(lo, Math.min(hi, v));

/**
 * Sample a vehicle size. Cars: length 3.6–5.2 m around the European average 4.36 m, width 1.6–2.0 m around 1.81 m
 * (published 2023 market data on new-car dimensions in Europe). Vans and small trucks: larger, from memory.
 */
export function sampleSize(kind: TruthKind, rng: Rng): VehicleSize {
  if (kind === 'van') return { lengthM: rng.range(4.8, 6.2), widthM: rng.range(1.9, 2.1), heightM: rng.range(1.9, 2.6) };
  if (kind === 'truck') return { lengthM: rng.range(6.5, 8.5), widthM: rng.range(2.2, 2.5), heightM: rng.range(3.0, 3.5) };
  return {
    lengthM: clamp(4.36 + rng.normal() * 0.33, 3.6, 5.2),
    widthM: clamp(1.81 + rng.normal() * 0.08, 1.6, 2.0),
    heightM: rng.range(1.4, 1.65),
  };
}

/** Offset along the vehicle's own axes (dxM along length, dyM across), as a world point. */
function at(cx: number, cy: number, c: number, s: number, dxM: number, dyM: number): [number, number] {
  return [cx + dxM * c - dyM * s, cy + dxM * s + dyM * c];
}

/** A rectangle between fractions fa..fb of the length (front = +0.5), inset across by `insetM` each side. */
function band(cx: number, cy: number, ang: number, size: VehicleSize, fa: number, fb: number, insetM: number): number[] {
  const c = Math.cos(ang);
  const s = Math.sin(ang);
  const mid = ((fa + fb) / 2) * size.lengthM;
  const [mx, my] = at(cx, cy, c, s, mid, 0);
  return rectCorners(mx, my, Math.abs(fb - fa) * size.lengthM, size.widthM - 2 * insetM, ang);
}

export interface VehicleOpts { sunAzimuthDeg: number; sunElevationDeg: number }

/** Primitives and truth of one vehicle centred at (cxM, cyM), heading `angleRad` (front direction, CCW from east). */
export function vehicle(kind: TruthKind, cxM: number, cyM: number, angleRad: number, rng: Rng, o: VehicleOpts): { prims: Prim[]; truth: TruthObject } {
  const size = sampleSize(kind, rng);
  const paint: Refl = jitter(kind === 'truck' && rng.chance(0.5) ? MATERIALS.roofMembraneWhite : rng.weighted(CAR_COLOURS), rng, 0.06);
  const foot = rectCorners(cxM, cyM, size.lengthM, size.widthM, angleRad);
  const prims: Prim[] = [poly(Layer.lowShadow, prismShadow(foot, size.heightM * 0.9, o.sunAzimuthDeg, o.sunElevationDeg), null)];
  const glass = MATERIALS.glass;
  const v = Layer.vehicle;
  // Body outline a little darker: sides and rounded edges turn away from the viewer.
  prims.push(poly(v, foot, scaleRefl(paint, 0.72)));
  if (kind === 'car') {
    prims.push(poly(v, band(cxM, cyM, angleRad, size, 0.47, -0.47, 0.12), paint, { light: 1.0 }));
    prims.push(poly(v, band(cxM, cyM, angleRad, size, 0.28, 0.08, 0.16), glass)); // windscreen
    prims.push(poly(v, band(cxM, cyM, angleRad, size, 0.08, -0.24, 0.2), paint, { light: 1.08 })); // roof
    prims.push(poly(v, band(cxM, cyM, angleRad, size, -0.24, -0.36, 0.2), glass)); // rear window
    if (rng.chance(0.12)) prims.push(poly(v, band(cxM, cyM, angleRad, size, 0.02, -0.14, 0.45), glass)); // sunroof
  } else if (kind === 'van') {
    prims.push(poly(v, band(cxM, cyM, angleRad, size, 0.48, -0.49, 0.1), paint, { light: 1.0 }));
    prims.push(poly(v, band(cxM, cyM, angleRad, size, 0.42, 0.3, 0.14), glass));
    prims.push(poly(v, band(cxM, cyM, angleRad, size, 0.3, -0.48, 0.12), paint, { light: 1.1 }));
  } else {
    const cab = jitter(rng.weighted(CAR_COLOURS), rng, 0.05);
    prims.push(poly(v, band(cxM, cyM, angleRad, size, 0.5, 0.27, 0.08), cab));
    prims.push(poly(v, band(cxM, cyM, angleRad, size, 0.47, 0.4, 0.15), glass));
    prims.push(poly(v, band(cxM, cyM, angleRad, size, 0.24, -0.5, 0.02), paint, { light: 1.1 }));
  }
  const truth: TruthObject = {
    cls: 'vehicle', kind, cxM, cyM, lengthM: size.lengthM, widthM: size.widthM, angleRad: normAngle(angleRad), heightM: size.heightM,
  };
  return { prims, truth };
}

/** Angle folded into (-π, π]. */
export function normAngle(a: number): number {
  let r = a % (2 * Math.PI);
  if (r <= -Math.PI) r += 2 * Math.PI;
  if (r > Math.PI) r -= 2 * Math.PI;
  return r;
}

/** Vehicle kind mix for general traffic and parking (cars dominate; from memory). */
export function pickKind(rng: Rng, vanShare = 0.08, truckShare = 0.02): TruthKind {
  const r = rng.next();
  return r < truckShare ? 'truck' : r < truckShare + vanShare ? 'van' : 'car';
}
