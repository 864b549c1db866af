// PV arrays from modules: rooftop (flush) and ground-mounted tilted rows; one truth object per contiguous array.
import { Layer, poly, prismShadow, rectCorners, slopeLight, type Prim } from './prims.ts';
import { MATERIALS, jitter } from './spectra.ts';
import type { Rng } from './rng.ts';
import type { TruthObject } from './objects.ts';
import { normAngle } from './vehicles.ts';

/**
 * Module footprints (long × short side, m): ~1.72 × 1.13 and ~2.28 × 1.13 for modern modules, ~1.65 × 0.99 for
 * older 60-cell ones (published module-size reports).
 */
export const MODULES = {
  modern: { longM: 1.722, shortM: 1.134 },
  large: { longM: 2.278, shortM: 1.134 },
  older: { longM: 1.65, shortM: 0.992 },
} as const;
export type ModuleType = keyof typeof MODULES;

/** Largest array extent the scene makes (m); the detector's tiling overlap is derived from it. */
export const MAX_ARRAY_EXTENT_M = 25;
const GAP_M = 0.02;

export interface ArraySpec {
  /** Centre (world), direction of the array's length axis (CCW from east). */
  cxM: number;
  cyM: number;
  angleRad: number;
  /** Modules along the length axis and across it. */
  cols: number;
  rows: number;
  module: ModuleType;
  /** Module long side along the array's length axis (landscape) or across it (portrait). */
  landscape: boolean;
  kind: 'rooftop' | 'ground';
  /** Plane slope: tilt (degrees) and the ground direction the plane faces (CCW from east); 0 tilt = flat. */
  tiltDeg: number;
  facingRad: number;
  /** Height of the array's top edge above the ground it casts shadow on (ground rows). */
  heightM: number;
}

/** Largest cols/rows that keep the array within MAX_ARRAY_EXTENT_M. */
export function maxModules(module: ModuleType, landscape: boolean, tiltDeg = 0): { cols: number; rows: number } {
  const m = MODULES[module];
  const a = (landscape ? m.longM : m.shortM) + GAP_M;
  const b = ((landscape ? m.shortM : m.longM) + GAP_M) * Math.cos((tiltDeg * Math.PI) / 180);
  return { cols: Math.floor(MAX_ARRAY_EXTENT_M / a), rows: Math.floor(MAX_ARRAY_EXTENT_M / b) };
}

/** Footprint size of an array spec in plan view (m). */
export function arraySize(s: ArraySpec): { lengthM: number; widthM: number; pitchAM: number; pitchBM: number } {
  const m = MODULES[s.module];
  const pitchAM = (s.landscape ? m.longM : m.shortM) + GAP_M;
  const pitchBM = ((s.landscape ? m.shortM : m.longM) + GAP_M) * Math.cos((s.tiltDeg * Math.PI) / 180);
  return { lengthM: s.cols * pitchAM - GAP_M, widthM: s.rows * pitchBM, pitchAM, pitchBM };
}

/** Primitives and the single truth object of one contiguous array. */
export function pvArray(s: ArraySpec, rng: Rng, sun: { sunAzimuthDeg: number; sunElevationDeg: number }): { prims: Prim[]; truth: TruthObject } {
  const { lengthM, widthM, pitchAM, pitchBM } = arraySize(s);
  const corners = rectCorners(s.cxM, s.cyM, lengthM, widthM, s.angleRad);
  const ax = Math.cos(s.angleRad);
  const ay = Math.sin(s.angleRad);
  const tilt = (s.tiltDeg * Math.PI) / 180;
  const nz = Math.cos(tilt);
  const nh = Math.sin(tilt);
  const light = slopeLight(Math.cos(s.facingRad) * nh, Math.sin(s.facingRad) * nh, nz, sun.sunAzimuthDeg, sun.sunElevationDeg);
  const cell = jitter(MATERIALS.pvCell, rng, 0.15);
  const m = MODULES[s.module];
  const prims: Prim[] = [];
  if (s.kind === 'ground') prims.push(poly(Layer.lowShadow, prismShadow(corners, s.heightM, sun.sunAzimuthDeg, sun.sunElevationDeg), null));
  prims.push(poly(s.kind === 'ground' ? Layer.groundPv : Layer.roofPv, corners, cell, {
    light: 0.85 + 0.15 * light,
    grain: 0.04,
    pv: {
      oxM: corners[0], oyM: corners[1], ax, ay, bx: -ay, by: ax,
      pitchAM, pitchBM,
      moduleAM: (s.landscape ? m.longM : m.shortM), moduleBM: pitchBM - GAP_M,
      frame: jitter(MATERIALS.pvFrame, rng, 0.1),
    },
  }));
  const truth: TruthObject = {
    cls: 'solar_panel', kind: s.kind, cxM: s.cxM, cyM: s.cyM, lengthM, widthM, angleRad: normAngle(s.angleRad),
    heightM: s.heightM, moduleCount: s.cols * s.rows,
  };
  return { prims, truth };
}
