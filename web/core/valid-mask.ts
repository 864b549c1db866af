// A scene's valid-pixel mask for coverage, read from one overview, and the one check (and sentence) for a scene with
// no valid pixel at all: the same rule for the CLI and the browser workers.
import { pickOverviewLevel, type SceneSource } from './scene-source.ts';
import { SeamtallyError } from './errors.ts';

/** Largest level (long side, px) read whole to look for NaN-only float scenes without a nodata value. */
const MAX_CHECK_SIDE_PX = 2048;

/** The sentence for a scene without one valid pixel (`name` null: "This scene"). */
export function noValidPixelsError(name: string | null, nodata: number | null): SeamtallyError {
  const what = nodata === null ? 'NaN' : Number.isNaN(nodata) ? 'nodata (NaN)' : `the nodata value ${nodata}`;
  return new SeamtallyError('all-nodata', `${name === null ? 'This scene' : `"${name}"`} has no valid pixels (every pixel is ${what}), so there is nothing to count: check that you picked the right scene, and its nodata value with gdalinfo.`, name === null ? undefined : { name });
}

/**
 * Throw 'all-nodata' when every pixel of the scene is nodata (per its valid mask) or, for a float scene without a
 * nodata value, NaN (read from a level of at most 2048 px). Called when a scene is opened (page) or counted (CLI).
 */
export async function assertSomeValidPixels(src: SceneSource, mask: ValidMask): Promise<void> {
  const info = src.info;
  if (info.nodata !== null && mask.maskWidth * mask.maskHeight > 1) {
    if (!mask.validMask.some((v) => v !== 0)) throw noValidPixelsError(info.name, info.nodata);
    return;
  }
  if (info.nodata !== null || !info.dtype.startsWith('float')) return;
  const level = pickOverviewLevel(info, 256);
  const sz = level === 0 ? info : info.overviews[level - 1];
  if (Math.max(sz.widthPx, sz.heightPx) > MAX_CHECK_SIDE_PX) return;
  const win = await src.readWindow({ minXPx: 0, minYPx: 0, maxXPx: sz.widthPx, maxYPx: sz.heightPx }, { overviewLevel: level });
  for (const b of win.bands) for (let i = 0; i < b.length; i++) if (!Number.isNaN(b[i])) return;
  throw noValidPixelsError(info.name, null);
}

/** Mask of valid pixels on a coarse grid covering the whole scene (CoverageMask's validMask/maskWidth/maskHeight). */
export interface ValidMask {
  validMask: Uint8Array;
  maskWidth: number;
  maskHeight: number;
}

/**
 * Read the coarsest overview with ≥ 256 px on its long side; a pixel is valid when any band differs from nodata.
 * A scene without nodata, or whose chosen level is still larger than 2048 px, gets a 1 × 1 all-valid mask (its
 * footprint alone then decides coverage). Same rule as `seamtally detect`.
 */
export async function readValidMask(src: SceneSource, signal?: AbortSignal): Promise<ValidMask> {
  const info = src.info;
  const level = pickOverviewLevel(info, 256);
  const sz = level === 0 ? info : info.overviews[level - 1];
  if (info.nodata === null || Math.max(sz.widthPx, sz.heightPx) > 2048) return { validMask: new Uint8Array([1]), maskWidth: 1, maskHeight: 1 };
  const win = await src.readWindow({ minXPx: 0, minYPx: 0, maxXPx: sz.widthPx, maxYPx: sz.heightPx }, { overviewLevel: level, signal });
  const n = sz.widthPx * sz.heightPx;
  const validMask = new Uint8Array(n);
  for (const b of win.bands) for (let i = 0; i < n; i++) if (b[i] !== info.nodata) validMask[i] = 1;
  return { validMask, maskWidth: sz.widthPx, maskHeight: sz.heightPx };
}
