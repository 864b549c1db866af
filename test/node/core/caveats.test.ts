// Resolution caveats: Johnson-criteria pixel limits and the model's measured recall-vs-GSD curve.
import { describe, it, expect } from 'vitest';
import { resolutionCaveat, upsamplingNote, interpolateCurve } from '../../../web/core/caveats.ts';

const quality = { gsdM: [0.15, 0.3, 0.45, 0.6, 0.8], recall: { vehicle: [0.97, 0.95, 0.88, 0.7, 0.4] } };

describe('resolutionCaveat', () => {
  it('a 1.8 m-wide car falls below the Johnson detection line (2 px) just past 0.9 m GSD (Johnson 1958)', () => {
    expect(resolutionCaveat({ className: 'vehicle', gsdM: 0.9, criticalDimM: 1.8 }).level).toBe('use-with-care');
    const c = resolutionCaveat({ className: 'vehicle', gsdM: 0.95, criticalDimM: 1.8 });
    expect(c.level).toBe('not-reliable');
    expect(c.pxAcross).toBeCloseTo(1.8 / 0.95, 12);
    expect(c.reason).toMatch(/fewer than the 2 px/);
  });
  it('uses the measured recall: interpolated, ≥ 0.85 reliable, ≥ 0.6 care, below not-reliable', () => {
    const at03 = resolutionCaveat({ className: 'vehicle', gsdM: 0.3, criticalDimM: 1.8, quality });
    expect(at03.recallAtGsd).toBeCloseTo(0.95, 12);
    expect(at03.level).toBe('reliable');
    const at05 = resolutionCaveat({ className: 'vehicle', gsdM: 0.5, criticalDimM: 1.8, quality });
    expect(at05.recallAtGsd).toBeCloseTo(0.88 + (0.05 / 0.15) * (0.7 - 0.88), 12);
    expect(at05.level).toBe('use-with-care');
    expect(at05.reason).toMatch(/counts are likely low/);
    const at08 = resolutionCaveat({ className: 'vehicle', gsdM: 0.8, criticalDimM: 1.8, quality });
    expect(at08.level).toBe('not-reliable');
  });
  it('with precision measured too, the caveat says the direction of the error: detected / true = recall / precision', () => {
    // recall 0.9 and precision 0.75 → 1.2 detections per true object: over-counting by 20 %, never "likely low"
    const q = { gsdM: [0.15, 0.3], recall: { vehicle: [0.9, 0.9] }, precision: { vehicle: [0.75, 0.75] } };
    const over = resolutionCaveat({ className: 'vehicle', gsdM: 0.3, criticalDimM: 1.8, quality: q });
    expect(over.expectedCountRatio).toBeCloseTo(1.2, 12);
    expect(over.level).toBe('use-with-care'); // the lower of recall and precision decides the level
    expect(over.reason).toMatch(/over-count here by about 20 %/);
    expect(over.reason).not.toMatch(/likely low/);
    const under = resolutionCaveat({ className: 'vehicle', gsdM: 0.3, criticalDimM: 1.8, quality: { ...q, precision: { vehicle: [0.95, 0.95] }, recall: { vehicle: [0.76, 0.76] } } });
    expect(under.reason).toMatch(/miss about 20 %/);
    const even = resolutionCaveat({ className: 'vehicle', gsdM: 0.3, criticalDimM: 1.8, quality: { ...q, precision: { vehicle: [0.9, 0.9] } } });
    expect(even.level).toBe('reliable');
    expect(even.reason).toMatch(/about right/);
  });
  it('without a measured recall the level is at most use-with-care, with the Johnson recognition line in the reason', () => {
    const fine = resolutionCaveat({ className: 'solar_panel', gsdM: 0.1, criticalDimM: 1.0, quality });
    expect(fine.recallAtGsd).toBeNull();
    expect(fine.level).toBe('use-with-care');
    expect(fine.reason).toMatch(/recognise/);
    const mid = resolutionCaveat({ className: 'vehicle', gsdM: 0.85, criticalDimM: 1.8, quality });
    expect(mid.recallAtGsd).toBeNull(); // coarser than the coarsest measured GSD: not extrapolated
    expect(mid.reason).toMatch(/not measured at a GSD this coarse/);
  });
  it('interpolateCurve clamps finer GSDs to the first value and refuses to extrapolate coarser ones', () => {
    expect(interpolateCurve([0.15, 0.3], [0.9, 0.8], 0.1)).toBe(0.9);
    expect(interpolateCurve([0.15, 0.3], [0.9, 0.8], 0.225)).toBeCloseTo(0.85, 12);
    expect(interpolateCurve([0.15, 0.3], [0.9, 0.8], 0.31)).toBeNull();
  });
});

describe('upsamplingNote', () => {
  it('says upsampling adds no information when the scene is coarser than the model', () => {
    expect(upsamplingNote(0.5, 0.3)).toMatch(/Upsampling adds no information/);
    expect(upsamplingNote(0.3, 0.3)).toBeNull();
    expect(upsamplingNote(0.15, 0.3)).toBeNull();
  });
});
