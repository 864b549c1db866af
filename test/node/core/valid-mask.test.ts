// The valid-pixel rule of coverage: a pixel is nodata only when every band equals the nodata value (as gdalwarp
// treats multi-band nodata by default, from memory), so nodata in one band of several is still imaged; and the mask
// is read as "non-zero = valid" so a mask written as 0/255 (GDAL's mask band convention) works.
import { describe, expect, it } from 'vitest';
import { readValidMask } from '../../../web/core/valid-mask.ts';
import { aoiCoverage, frameToScenePxMapping } from '../../../web/core/coverage.ts';
import type { SceneInfo, SceneSource, RasterWindow } from '../../../web/core/scene-source.ts';
import type { GeoTransform, MapXY } from '../../../web/core/types.ts';

/** A 4 × 1 px, 3-band uint8 scene with nodata 0: pixel 0 all nodata; 1: only band 0 nodata; 2: only band 2; 3: none. */
function stubScene(): SceneSource {
  const bands = [Uint8Array.from([0, 0, 9, 9]), Uint8Array.from([0, 9, 9, 9]), Uint8Array.from([0, 9, 0, 9])];
  const info = { name: 's', widthPx: 4, heightPx: 1, bandCount: 3, dtype: 'uint8', bitsPerSample: 8, significantBits: 8, nodata: 0,
    tileWidthPx: 4, tileHeightPx: 1, overviews: [], bandNames: ['', '', ''], photometric: 2, acquisitionDate: null } as unknown as SceneInfo;
  return {
    info,
    readWindow: async (windowPx) => ({ windowPx, level: 0, widthPx: 4, heightPx: 1, bandCount: 3, bitsPerSample: 8, dtype: 'uint8', bands }) as unknown as RasterWindow,
    close: async () => {},
  };
}

describe('readValidMask', () => {
  it('nodata in one band of several is valid; nodata in every band is not', async () => {
    const m = await readValidMask(stubScene());
    expect([m.maskWidth, m.maskHeight]).toEqual([4, 1]);
    expect(Array.from(m.validMask)).toEqual([0, 1, 1, 1]);
  });
});

describe('coverage reads masks as non-zero = valid', () => {
  it('a 0/255 mask (GDAL mask-band values) counts 255 as imaged', () => {
    const gt: GeoTransform = [440000, 1, 0, 5800000, 0, -1];
    const validMask = Uint8Array.from([0, 255]); // left half nodata, right half valid
    const mask = { frameToScenePx: frameToScenePxMapping(gt, 32633, 32633), sceneWidthPx: 100, sceneHeightPx: 100, validMask, maskWidth: 2, maskHeight: 1 };
    const ring: MapXY[] = [[440000, 5799900], [440100, 5799900], [440100, 5800000], [440000, 5800000], [440000, 5799900]];
    expect(aoiCoverage([[ring]], [mask], { stepM: 1 }).fraction).toBeCloseTo(0.5, 2);
  });
});
