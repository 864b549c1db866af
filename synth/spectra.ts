// Surface reflectance of scene materials at four anchor bands (blue, green, red, NIR) and their mapping to band layouts.
import type { BandLayout } from './scene-params.ts';
import type { Rng } from './rng.ts';

/** Reflectance 0–1 at blue, green, red, near-infrared. Values are plausible, from memory, not measured spectra. */
export type Refl = readonly [number, number, number, number];

const RAW_MATERIALS = {
  asphalt: [0.07, 0.075, 0.08, 0.11],
  asphaltOld: [0.11, 0.115, 0.12, 0.15],
  concrete: [0.27, 0.28, 0.29, 0.31],
  paving: [0.2, 0.19, 0.2, 0.24],
  paint: [0.62, 0.63, 0.63, 0.6],
  paintYellow: [0.12, 0.45, 0.55, 0.55],
  grass: [0.04, 0.09, 0.05, 0.42],
  grassDry: [0.08, 0.13, 0.13, 0.32],
  soil: [0.12, 0.15, 0.2, 0.26],
  soilDark: [0.07, 0.09, 0.12, 0.18],
  water: [0.05, 0.06, 0.04, 0.02],
  tree: [0.025, 0.06, 0.03, 0.38],
  treeDark: [0.02, 0.045, 0.025, 0.3],
  roofRedTile: [0.09, 0.1, 0.27, 0.35],
  roofSlate: [0.09, 0.095, 0.1, 0.13],
  roofBrown: [0.09, 0.1, 0.14, 0.22],
  roofMembraneGrey: [0.3, 0.31, 0.31, 0.33],
  roofMembraneWhite: [0.58, 0.6, 0.6, 0.6],
  roofGravel: [0.19, 0.2, 0.21, 0.25],
  roofBitumen: [0.08, 0.085, 0.09, 0.1],
  roofMetal: [0.36, 0.38, 0.39, 0.4],
  pvCell: [0.045, 0.04, 0.035, 0.06],
  pvFrame: [0.38, 0.39, 0.4, 0.42],
  glass: [0.04, 0.045, 0.05, 0.05],
  tyreDark: [0.04, 0.04, 0.04, 0.05],
} as const satisfies Record<string, Refl>;
export const MATERIALS: Record<keyof typeof RAW_MATERIALS, Refl> = RAW_MATERIALS;

/** Car paint colours: white, black, grey and silver dominate (common practice, no source). */
export const CAR_COLOURS: readonly (readonly [Refl, number])[] = [
  [[0.62, 0.64, 0.65, 0.66], 0.27], // white
  [[0.03, 0.03, 0.035, 0.05], 0.22], // black
  [[0.2, 0.2, 0.21, 0.24], 0.17], // grey
  [[0.4, 0.41, 0.42, 0.45], 0.14], // silver
  [[0.16, 0.07, 0.04, 0.25], 0.06], // blue
  [[0.05, 0.05, 0.3, 0.35], 0.06], // red
  [[0.06, 0.12, 0.07, 0.22], 0.03], // green
  [[0.08, 0.2, 0.35, 0.4], 0.03], // orange/beige
  [[0.06, 0.28, 0.5, 0.55], 0.02], // yellow
];

/** Scale a reflectance by a factor with a little per-band jitter (keeps materials from looking identical). */
export function jitter(r: Refl, rng: Rng, amount = 0.08): Refl {
  const k = 1 + rng.range(-amount, amount);
  return [r[0] * k * (1 + rng.range(-0.02, 0.02)), r[1] * k, r[2] * k * (1 + rng.range(-0.02, 0.02)), r[3] * k];
}

export function scaleRefl(r: Refl, k: number): Refl {
  return [r[0] * k, r[1] * k, r[2] * k, r[3] * k];
}

/** Band names per layout (written as GDAL band descriptions, so band roles travel with the file). */
export function bandNames(layout: BandLayout): string[] {
  switch (layout) {
    case 'rgb': return ['Red', 'Green', 'Blue'];
    case 'rgbn': return ['Red', 'Green', 'Blue', 'NIR'];
    case 'pan': return ['Panchromatic'];
    case '8': return ['Coastal', 'Blue', 'Green', 'Yellow', 'Red', 'RedEdge', 'NIR1', 'NIR2'];
  }
}

/** Linear map from the 4 anchor bands to a layout's bands, as rows of weights [blue, green, red, nir]. */
export function bandMatrix(layout: BandLayout): number[][] {
  switch (layout) {
    case 'rgb': return [[0, 0, 1, 0], [0, 1, 0, 0], [1, 0, 0, 0]];
    case 'rgbn': return [[0, 0, 1, 0], [0, 1, 0, 0], [1, 0, 0, 0], [0, 0, 0, 1]];
    case 'pan': return [[0.22, 0.33, 0.3, 0.15]];
    case '8': return [
      [0.95, 0.05, 0, 0], [1, 0, 0, 0], [0, 1, 0, 0], [0, 0.45, 0.55, 0],
      [0, 0, 1, 0], [0, 0, 0.45, 0.55], [0, 0, 0, 1], [0, 0, 0.03, 0.97],
    ];
  }
}

/** Project a 4-anchor reflectance onto a layout's bands. */
export function toBands(r: Refl, m: number[][]): Float32Array {
  const out = new Float32Array(m.length);
  for (let i = 0; i < m.length; i++) out[i] = m[i][0] * r[0] + m[i][1] * r[1] + m[i][2] * r[2] + m[i][3] * r[3];
  return out;
}
