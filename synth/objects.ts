// Truth objects and per-block content shared by the block generators, the renderer and the truth writer.
import type { Prim } from './prims.ts';
import type { Rng } from './rng.ts';
import type { Frame } from './prims.ts';

export type TruthClass = 'vehicle' | 'solar_panel';
export type TruthKind = 'car' | 'van' | 'truck' | 'rooftop' | 'ground';

/** One labelled object: an oriented box in the scene CRS (metres), angle counter-clockwise from east. */
export interface TruthObject {
  cls: TruthClass;
  kind: TruthKind;
  cxM: number;
  cyM: number;
  lengthM: number;
  widthM: number;
  angleRad: number;
  heightM: number;
  /** PV arrays: number of modules in the contiguous array. */
  moduleCount?: number;
  /** Filled in when the scene is assembled: share of the box not hidden by tree crowns. */
  visibleFraction?: number;
}

/** What one world block contributes: paint primitives, truth objects, and tree crowns (for occlusion). */
export interface BlockContent {
  prims: Prim[];
  truth: TruthObject[];
  /** Tree crowns as flat cx, cy, r triples (world metres). */
  crowns: number[];
}

/** Everything a block generator may depend on. All randomness comes from `rng` (seeded by world seed + block). */
export interface BlockCtx {
  frame: Frame;
  rng: Rng;
  /** Per-date random stream (vehicle placement, occupancy); seeded by world seed + block + date. */
  dateRng: Rng;
  date: string;
  sunAzimuthDeg: number;
  sunElevationDeg: number;
  occupancy: number;
  /** Block side (m) and road strip width (m) of the world grid. */
  blockM: number;
  roadM: number;
}
