// A scene's valid-pixel mask for coverage, read from one overview (the same rule for the CLI and the browser workers).
import { pickOverviewLevel, type SceneSource } from './scene-source.ts';

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
