// Radiometry: band roles, per-scene percentile stretch (checked against numpy's percentile), model normalisation.
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { computeStretch, normaliseInPlace, percentiles, selectBands } from '../../../web/core/radiometry.ts';
import type { RasterWindow } from '../../../web/core/scene-source.ts';

function win(bands: Uint16Array[], nodata: number | null, bits = 16): RasterWindow {
  return {
    windowPx: { minXPx: 0, minYPx: 0, maxXPx: bands[0].length, maxYPx: 1 }, level: 1, widthPx: bands[0].length, heightPx: 1,
    bandCount: bands.length, bitsPerSample: bits, dtype: bits === 8 ? 'uint8' : 'uint16', nodata, outsideFilled: false, bands,
  };
}

describe('selectBands', () => {
  const L = (n: number, names: string[] = []) => ({ bandCount: n, bandNames: names.length ? names : Array(n).fill(''), photometric: null });
  it.each([
    [1, [0, 0, 0], true],
    [3, [0, 1, 2], false],
    [4, [0, 1, 2], false],
    // 8-band order Coastal, Blue, Green, Yellow, Red, RedEdge, NIR1, NIR2 (WorldView-2/3 band list, from memory)
    [8, [4, 2, 1], false],
  ])('%i bands by layout', (n, idx, rep) => {
    const s = selectBands(L(n));
    expect(s.indices).toEqual(idx);
    expect(s.replicated).toBe(rep);
  });
  it('band names from metadata win over the layout; explicit choice wins over both', () => {
    expect(selectBands(L(4, ['NIR', 'Blue', 'Green', 'Red'])).indices).toEqual([3, 2, 1]);
    expect(selectBands(L(4, ['NIR', 'Blue', 'Green', 'Red']), [0, 1, 2]).indices).toEqual([0, 1, 2]);
    expect(selectBands(L(8), [6]).indices).toEqual([6, 6, 6]);
  });
  it('unknown layouts and bad choices are typed errors', () => {
    expect(() => selectBands(L(5))).toThrow(/Choose the bands/);
    expect(() => selectBands(L(3), [0, 1, 3])).toThrow(/Band 4 does not exist/);
  });
});

describe('computeStretch', () => {
  it('8-bit scenes are not stretched', () => {
    const s = computeStretch(win([new Uint16Array([3, 4])], null, 8), selectBands({ bandCount: 1, bandNames: [''], photometric: null }));
    expect(s.kind).toBe('identity');
  });

  it('percentiles equal numpy.percentile(method="inverted_cdf") with nodata left out', () => {
    let seed = 11;
    const rnd = () => ((seed = (Math.imul(seed, 1103515245) + 12345) >>> 0) >>> 8) / (1 << 24);
    const bands = [0, 1, 2].map(() => Uint16Array.from({ length: 5000 }, () => (rnd() < 0.1 ? 0 : Math.floor(rnd() ** 2 * 4095) + 1)));
    const [lo, hi] = percentiles(bands, 0, 1, 99);
    // Outside reference: numpy's percentile with the inverted-CDF (nearest-rank) definition (Hyndman & Fan type 1).
    const py = `import sys, json, numpy as np
v = np.array(json.load(sys.stdin)); v = v[v != 0]
print(json.dumps([float(np.percentile(v, 1, method='inverted_cdf')), float(np.percentile(v, 99, method='inverted_cdf'))]))`;
    const ref = JSON.parse(execFileSync('/usr/bin/python3', ['-c', py], { input: JSON.stringify(bands.flatMap((b) => Array.from(b))) }).toString());
    expect([lo, hi]).toEqual(ref);
    const s = computeStretch(win(bands, 0, 16), selectBands({ bandCount: 3, bandNames: ['', '', ''], photometric: null }), { significantBits: 12 });
    expect(s.low).toEqual([lo, lo, lo]);
    expect(s.high).toEqual([hi, hi, hi]);
  });

  it('an all-nodata overview is a typed error', () => {
    expect(() => computeStretch(win([new Uint16Array([0, 0])], 0), selectBands({ bandCount: 1, bandNames: [''], photometric: null }))).toThrow(/no valid pixels/);
  });
});

describe('normaliseInPlace', () => {
  it('maps low→0, high→255 (clamped), then (v·scale − mean)/std; invalid pixels become black', () => {
    const t = new Float32Array([100, 1100, 5000, 100, 600, 1100, 100, 100, 100]);
    normaliseInPlace(t, 3, { low: [100, 100, 100], high: [1100, 1100, 1100], kind: 'percentile' }, { scale: 1 / 255, mean: [0.5, 0, 0], std: [0.25, 1, 2] }, new Uint8Array([1, 1, 0]));
    expect(Array.from(t.subarray(0, 3))).toEqual([-2, 2, -2]);
    expect(t[4]).toBeCloseTo(0.5, 6);
    expect(t[6]).toBe(0);
  });
});
