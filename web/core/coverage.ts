// Coverage: the fraction of an AOI imaged by valid (non-nodata) pixels of any scene of one date.
import { createTransform, type UserCrsDefs } from './crs.ts';
import { invertGeoTransform } from './geotransform.ts';
import { prepareMultiPolygon, type MultiPolygonRings } from './point-in-polygon.ts';
import type { GeoTransform, MapBox, PixelBox } from './types.ts';

/** One scene's valid-pixel mask, with the mapping from the metric frame into its full-resolution pixels. */
export interface CoverageMask {
  /** Metric-frame point → full-resolution scene pixel position (x right, y down; (0,0) = top-left corner). */
  frameToScenePx: (xM: number, yM: number) => readonly [number, number];
  sceneWidthPx: number;
  sceneHeightPx: number;
  /** Non-zero = valid pixel. Row-major, maskWidth × maskHeight, covering the whole scene (an overview). */
  validMask: Uint8Array;
  maskWidth: number;
  maskHeight: number;
  /** Tiles of this scene that failed (in full-resolution scene pixels): their area counts as not imaged. */
  failedTilesPx?: readonly PixelBox[];
}

export interface CoverageOptions {
  /** Sample spacing in metres of the frame. Default: as fine as `maxSamples` allows over the AOI's bounding box. */
  stepM?: number;
  /** Upper bound on grid samples over the AOI bounding box (default 250 000). */
  maxSamples?: number;
  /** Regions of the metric frame that count as not imaged (e.g. failed tiles expressed in frame metres). */
  excludedFrameBoxes?: readonly MapBox[];
}

export interface Coverage {
  /** covered / inside, in [0, 1]; 0 when no sample fell inside the AOI. */
  fraction: number;
  samplesInside: number;
  samplesCovered: number;
  stepM: number;
}

/**
 * Sample the AOI (rings in the metric frame) on a square grid of cell centres and count samples that hit a valid,
 * non-failed pixel of ANY of the masks. If fewer than 64 samples fall inside, the step is halved (up to 6 times).
 */
export function aoiCoverage(aoiFrame: MultiPolygonRings, masks: readonly CoverageMask[], options: CoverageOptions = {}): Coverage {
  const prepared = prepareMultiPolygon(aoiFrame);
  const { minX, minY, maxX, maxY } = prepared.bbox;
  if (!(maxX > minX && maxY > minY)) return { fraction: 0, samplesInside: 0, samplesCovered: 0, stepM: 0 };
  const maxSamples = options.maxSamples ?? 250_000;
  let stepM = Math.max(options.stepM ?? 0, Math.sqrt(((maxX - minX) * (maxY - minY)) / maxSamples));
  const excluded = options.excludedFrameBoxes ?? [];
  for (let attempt = 0; ; attempt++) {
    let inside = 0;
    let covered = 0;
    const nx = Math.max(1, Math.ceil((maxX - minX) / stepM));
    const ny = Math.max(1, Math.ceil((maxY - minY) / stepM));
    for (let j = 0; j < ny; j++) {
      const y = minY + (j + 0.5) * stepM;
      for (let i = 0; i < nx; i++) {
        const x = minX + (i + 0.5) * stepM;
        if (!prepared.contains(x, y)) continue;
        inside++;
        if (excluded.some((b) => x >= b.minX && x < b.maxX && y >= b.minY && y < b.maxY)) continue;
        for (const m of masks) {
          if (isValidAt(m, x, y)) { covered++; break; }
        }
      }
    }
    if (inside >= 64 || attempt >= 6) {
      return { fraction: inside > 0 ? covered / inside : 0, samplesInside: inside, samplesCovered: covered, stepM };
    }
    stepM /= 2;
  }
}

function isValidAt(m: CoverageMask, xM: number, yM: number): boolean {
  const [xPx, yPx] = m.frameToScenePx(xM, yM);
  if (!(xPx >= 0 && yPx >= 0 && xPx < m.sceneWidthPx && yPx < m.sceneHeightPx)) return false;
  if (m.failedTilesPx) {
    for (const t of m.failedTilesPx) {
      if (xPx >= t.minXPx && xPx < t.maxXPx && yPx >= t.minYPx && yPx < t.maxYPx) return false;
    }
  }
  const col = Math.min(m.maskWidth - 1, Math.floor((xPx * m.maskWidth) / m.sceneWidthPx));
  const row = Math.min(m.maskHeight - 1, Math.floor((yPx * m.maskHeight) / m.sceneHeightPx));
  return m.validMask[row * m.maskWidth + col] !== 0;
}

/** The frame → scene-pixel mapping for a scene with `geoTransform` in `sceneEpsg`, seen from `frameEpsg`. */
export function frameToScenePxMapping(
  geoTransform: GeoTransform,
  sceneEpsg: number,
  frameEpsg: number,
  userDefs?: UserCrsDefs,
): (xM: number, yM: number) => readonly [number, number] {
  const inv = invertGeoTransform(geoTransform);
  const toScene = createTransform(frameEpsg, sceneEpsg, userDefs);
  const same = frameEpsg === sceneEpsg;
  return (xM, yM) => {
    const [x, y] = same ? [xM, yM] : toScene([xM, yM]);
    return [inv[0] + x * inv[1] + y * inv[2], inv[3] + x * inv[4] + y * inv[5]];
  };
}
