// The per-scene stretch sample of a scene without overviews (self-consistency; scenes written by GDAL): a mostly-
// nodata 16-bit scene whose only valid pixels lie between the 4 × 4 sample windows is not reported empty (the 16 × 16
// grid finds them); a truly empty one is.
import { mkdtempSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { computeStretch, joinSamples, readStretchSample, selectBands } from '../../../web/core/radiometry.ts';
import { openGeoTiffPath } from '../../../web/io/geotiff-source.ts';
import { writeGeoTiff } from '../../fixtures/gdal-scenes.ts';

const dir = mkdtempSync(join(tmpdir(), 'seamtally-stretch-'));
const W = 3000;

function scene(name: string, validBlockPx: number): string {
  const n = W * W;
  const data = new Uint16Array(n * 3); // nodata 0 everywhere …
  for (let b = 0; b < 3; b++) {
    for (let y = 0; y < validBlockPx; y++) for (let x = 0; x < validBlockPx; x++) data[b * n + y * W + x] = 200 + ((x * 7 + y * 3 + b * 11) % 1800);
  }
  return writeGeoTiff(join(dir, name), { widthPx: W, heightPx: W, bandCount: 3, dtype: 'uint16', data }, {
    epsg: 32632, ulX: 500000, ulY: 5300000, gsdM: 0.3, blockPx: 256, compress: 'DEFLATE', nodata: 0,
  });
}

describe('readStretchSample without overviews', () => {
  it('finds the valid corner of a mostly-nodata scene that the 4 × 4 windows miss', async () => {
    const path = scene('corner.tif', 300); // valid only in [0, 300)²; the 4 × 4 windows start at 343 px
    const src = await openGeoTiffPath(path, { byteLength: statSync(path).size });
    try {
      expect(src.info.overviews.length).toBe(0);
      const wins = await readStretchSample(src);
      expect(wins.length).toBe(256);
      const st = computeStretch(joinSamples(wins), selectBands(src.info), { significantBits: 16 });
      expect(st.low[0]).toBeGreaterThanOrEqual(200);
      expect(st.high[0]).toBeLessThanOrEqual(2000);
    } finally { await src.close(); }
  });
  it('still calls a scene with no valid pixel empty, with the all-nodata error', async () => {
    const path = scene('empty.tif', 0);
    const src = await openGeoTiffPath(path, { byteLength: statSync(path).size });
    try {
      const wins = await readStretchSample(src);
      expect(() => computeStretch(joinSamples(wins), selectBands(src.info), { significantBits: 16 })).toThrow(/no valid pixels/);
    } finally { await src.close(); }
  });
});
