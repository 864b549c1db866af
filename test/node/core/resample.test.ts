// Resampling to the model grid, checked against GDAL's own resampling (gdal_translate -r average / -r bilinear).
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { modelGridSize, planResample, resampleBand, sourceWindowFor } from '../../../web/core/resample.ts';
import { gdalResampleToFloat, writeEnvi } from '../../fixtures/gdal-scenes.ts';

const dir = mkdtempSync(join(tmpdir(), 'seamtally-resample-'));

function randomRaster(w: number, h: number, seed: number): Float32Array {
  const a = new Float32Array(w * h);
  let s = seed >>> 0;
  for (let i = 0; i < a.length; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    a[i] = (s >>> 8) / (1 << 24) * 1000;
  }
  return a;
}

function ours(src: Float32Array, w: number, h: number, outW: number, outH: number, nodata: number | null = null) {
  const scale = { scenePxPerModelPxX: w / outW, scenePxPerModelPxY: h / outH };
  const outBox = { minXPx: 0, minYPx: 0, maxXPx: outW, maxYPx: outH };
  const srcBox = { minXPx: 0, minYPx: 0, maxXPx: w, maxYPx: h };
  const dst = new Float32Array(outW * outH);
  const valid = new Uint8Array(outW * outH);
  resampleBand(src, planResample(outBox, srcBox, scale, w, h), dst, { nodata, validOut: valid });
  return { dst, valid };
}

function maxDiff(a: Float32Array, b: Float32Array, w: number, h: number, border: number): number {
  let m = 0;
  for (let y = border; y < h - border; y++) for (let x = border; x < w - border; x++) m = Math.max(m, Math.abs(a[y * w + x] - b[y * w + x]));
  return m;
}

// Outside reference: GDAL 3.6 gdal_translate -outsize with -r average (area mean, integer and fractional factors)
// and -r bilinear (pixel-centre bilinear when upsampling), Debian gdal-bin. GDAL's docs define both methods:
// https://gdal.org/programs/gdal_translate.html (-r) and https://gdal.org/programs/gdalwarp.html#cmdoption-gdalwarp-r
describe('resampleBand agrees with GDAL', () => {
  const cases = [
    { name: 'average 2x down', w: 40, h: 30, outW: 20, outH: 15, method: 'average' as const, border: 0, tol: 1e-3 },
    { name: 'average 3x down', w: 36, h: 30, outW: 12, outH: 10, method: 'average' as const, border: 0, tol: 1e-3 },
    { name: 'average 2.5x down (fractional weights)', w: 40, h: 30, outW: 16, outH: 12, method: 'average' as const, border: 0, tol: 1e-3 },
    { name: 'bilinear 2x up', w: 20, h: 15, outW: 40, outH: 30, method: 'bilinear' as const, border: 1, tol: 1e-3 },
    { name: 'bilinear 5/3x up (0.5 m -> 0.3 m)', w: 30, h: 24, outW: 50, outH: 40, method: 'bilinear' as const, border: 1, tol: 1e-3 },
  ];
  for (const c of cases) {
    it(c.name, () => {
      const src = randomRaster(c.w, c.h, c.w * 31 + c.outW);
      const bin = writeEnvi(join(dir, `${c.name.replace(/\W+/g, '_')}.tif`), { widthPx: c.w, heightPx: c.h, bandCount: 1, dtype: 'float32', data: src });
      const ref = gdalResampleToFloat(bin, join(dir, `${c.name.replace(/\W+/g, '_')}.out.bin`), c.outW, c.outH, c.method);
      const { dst } = ours(src, c.w, c.h, c.outW, c.outH);
      expect(maxDiff(dst, ref, c.outW, c.outH, c.border)).toBeLessThan(c.tol);
    });
  }
});

describe('resample alignment and nodata (self-consistency)', () => {
  it('same GSD is an exact copy, offset windows included', () => {
    const src = randomRaster(30, 20, 7);
    const scale = { scenePxPerModelPxX: 1, scenePxPerModelPxY: 1 };
    const outBox = { minXPx: 5, minYPx: 3, maxXPx: 17, maxYPx: 11 };
    const srcBox = sourceWindowFor(outBox, scale, 30, 20);
    expect(srcBox.minXPx).toBeLessThanOrEqual(5);
    const sw = srcBox.maxXPx - srcBox.minXPx;
    const sub = new Float32Array(sw * (srcBox.maxYPx - srcBox.minYPx));
    for (let y = srcBox.minYPx; y < srcBox.maxYPx; y++) for (let x = srcBox.minXPx; x < srcBox.maxXPx; x++) sub[(y - srcBox.minYPx) * sw + x - srcBox.minXPx] = src[y * 30 + x];
    const dst = new Float32Array(12 * 8);
    resampleBand(sub, planResample(outBox, srcBox, scale, 30, 20), dst);
    for (let y = 0; y < 8; y++) for (let x = 0; x < 12; x++) expect(dst[y * 12 + x]).toBe(src[(y + 3) * 30 + x + 5]);
  });

  it('area-average leaves nodata out and marks all-nodata pixels invalid', () => {
    const src = new Float32Array([1, 3, 0, 0, 5, 7, 0, 0]);
    const { dst, valid } = ours(src, 4, 2, 2, 1, 0);
    expect(dst[0]).toBe(4);
    expect(valid[0]).toBe(1);
    expect(valid[1]).toBe(0);
  });

  it('model pixels whose centre is past the scene edge are invalid', () => {
    // 5 scene px at f = 2 → ceil(5 / 2) = 3 model px; centre of model px 2 is scene x 5.0 = outside.
    expect(modelGridSize(5, 5, { scenePxPerModelPxX: 2, scenePxPerModelPxY: 2 }).widthPx).toBe(3);
    const scale = { scenePxPerModelPxX: 2, scenePxPerModelPxY: 2 };
    const full = { minXPx: 0, minYPx: 0, maxXPx: 5, maxYPx: 5 };
    const valid = new Uint8Array(9);
    resampleBand(new Float32Array(25).fill(1), planResample({ minXPx: 0, minYPx: 0, maxXPx: 3, maxYPx: 3 }, full, scale, 5, 5), new Float32Array(9), { validOut: valid });
    expect(Array.from(valid)).toEqual([1, 1, 0, 1, 1, 0, 0, 0, 0]);
  });
});
