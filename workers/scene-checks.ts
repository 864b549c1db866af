// Checks made when a scene is opened in the page, so an unusable scene is refused with its sentence at once
// instead of failing only when a run starts: bands it cannot assign to RGB (a scene with no valid pixel at all is
// refused by the core's assertSomeValidPixels, valid-mask.ts, which the CLI uses too).
import { SeamtallyError } from '../web/core/errors.ts';
import type { SceneSource } from '../web/core/scene-source.ts';
import { selectBands } from '../web/core/radiometry.ts';

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
