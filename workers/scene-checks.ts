// Checks made when a scene is opened in the page, so an unusable scene is refused with its sentence at once
// instead of failing only when a run starts: a scene with no valid pixel at all, or bands it cannot assign to RGB.
import { SeamtallyError } from '../web/core/errors.ts';
import { pickOverviewLevel, type SceneSource } from '../web/core/scene-source.ts';
import type { ValidMask } from '../web/core/valid-mask.ts';
import { selectBands } from '../web/core/radiometry.ts';

/** Largest level (long side, px) read whole to look for NaN-only float scenes without a nodata value. */
const MAX_CHECK_SIDE_PX = 2048;

/** Throw 'all-nodata' when every pixel is nodata (per the valid mask) or, for float scenes without nodata, NaN. */
export async function assertSomeValidPixels(src: SceneSource, mask: ValidMask): Promise<void> {
  const info = src.info;
  const none = () => new SeamtallyError('all-nodata', `"${info.name}" has no valid pixels (every pixel is ${info.nodata === null ? 'NaN' : `the nodata value ${info.nodata}`}), so there is nothing to count: check that you picked the right scene, and its nodata value with gdalinfo.`, { name: info.name });
  if (info.nodata !== null && mask.maskWidth * mask.maskHeight > 1) {
    if (!mask.validMask.some((v) => v !== 0)) throw none();
    return;
  }
  if (info.nodata !== null || !info.dtype.startsWith('float')) return;
  const level = pickOverviewLevel(info, 256);
  const sz = level === 0 ? info : info.overviews[level - 1];
  if (Math.max(sz.widthPx, sz.heightPx) > MAX_CHECK_SIDE_PX) return;
  const win = await src.readWindow({ minXPx: 0, minYPx: 0, maxXPx: sz.widthPx, maxYPx: sz.heightPx }, { overviewLevel: level });
  for (const b of win.bands) for (let i = 0; i < b.length; i++) if (!Number.isNaN(b[i])) return;
  throw none();
}

/**
 * Throw when the page cannot tell the red, green and blue bands (the CLI takes --bands; the page has no band
 * chooser, so its sentence says how to write an RGB copy instead).
 */
export function assertBandsKnown(info: SceneSource['info']): void {
  try { selectBands(info); } catch (err) {
    if (!(err instanceof SeamtallyError) || err.kind !== 'unsupported-raster') throw err;
    throw new SeamtallyError(err.kind, `"${info.name}" has ${info.bandCount} bands and no band names, so seamtally cannot tell which are red, green and blue: write an RGB copy first, for example gdal_translate -b 3 -b 2 -b 1 in.tif rgb.tif with your band numbers (the command line's --bands does the same).`, { name: info.name });
  }
}
