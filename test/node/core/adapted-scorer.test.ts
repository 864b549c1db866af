// The review-adapted scorer on generated detections (self-consistency; the regression itself is checked against
// scikit-learn in logistic.test.ts): a model feature that tells roofs from cars lets the adapted scores beat the
// detector's at the threshold in cross-validation; too few reviews leave a class as it was; a scorer for another
// detector is refused with a sentence; the review order starts at the threshold and spreads over the scene.
import { describe, expect, it } from 'vitest';
import { applyScorer, parseScorer, trainScorer, uncertaintyOrder, MIN_REVIEWS_PER_SIDE } from '../../../web/core/adapted-scorer.ts';
import { createDetectionTable, type ReviewState } from '../../../web/core/types.ts';
import { mulberry32 } from '../../helpers/mulberry32.ts';

/** n detections of class 0: real ones (half) score like false ones, but feature 0 separates them. */
function scene(n: number, seed: number) {
  const rnd = mulberry32(seed);
  const F = 4;
  const t = createDetectionTable('EPSG:32632', n);
  t.features = new Float32Array(n * F); t.featureDim = F;
  const real: boolean[] = [];
  for (let i = 0; i < n; i++) {
    const isReal = rnd() < 0.5;
    real.push(isReal);
    t.cxM[i] = 1000 * rnd(); t.cyM[i] = 1000 * rnd();
    t.score[i] = 0.3 + 0.4 * rnd();
    t.lengthM[i] = 4.5 + rnd(); t.widthM[i] = 1.8 + 0.2 * rnd();
    t.features[i * F] = (isReal ? 1 : -1) + 0.6 * (rnd() - 0.5);
    for (let f = 1; f < F; f++) t.features[i * F + f] = rnd();
  }
  t.count = n;
  return { t, real };
}

describe('trainScorer / applyScorer', () => {
  const { t, real } = scene(400, 5);
  const review: ReviewState[] = real.map((r, i) => (i < 60 ? (r ? 'accepted' : 'rejected') : 'unreviewed'));
  const s = trainScorer({ table: t, review, classes: ['vehicle', 'solar_panel'], model: 'det 7', threshold: 0.5 });
  it('adapts the reviewed class, leaves the class without reviews as it was', () => {
    expect(s.perClass.vehicle).not.toBeNull();
    expect(s.perClass.solar_panel).toBeNull();
    expect(s.modelFeatureDim).toBe(4);
  });
  it('cross-validated on the reviews, the adapted scores are better at the threshold', () => {
    const g = s.gain.vehicle;
    const f1 = (x: { precision: number | null; recall: number | null }) => (x.precision && x.recall ? (2 * x.precision * x.recall) / (x.precision + x.recall) : 0);
    expect(f1(g.after)).toBeGreaterThan(f1(g.before) + 0.2);
  });
  it('on the unreviewed rest, the adapted scores separate real from false', () => {
    const a = applyScorer(parseScorer(JSON.stringify(s)), t, ['vehicle', 'solar_panel'], 'det 7');
    let right = 0;
    for (let i = 60; i < 400; i++) if ((a[i] >= 0.5) === real[i]) right++;
    expect(right / 340).toBeGreaterThan(0.95);
  });
  it('below the minimum of reviews nothing is adapted', () => {
    const few: ReviewState[] = real.map((r, i) => (i < 2 * MIN_REVIEWS_PER_SIDE - 6 ? (r ? 'accepted' : 'rejected') : 'unreviewed'));
    expect(trainScorer({ table: t, review: few, classes: ['vehicle'], model: 'det 7', threshold: 0.5 }).perClass.vehicle).toBeNull();
  });
  it('a scorer for another detector is refused with a sentence', () => {
    expect(() => applyScorer(s, t, ['vehicle', 'solar_panel'], 'other 1')).toThrow(/adapted for the detector "det 7"/);
    expect(() => parseScorer('{"format":"x"}')).toThrow(/seamtally-scorer\/1/);
  });
});

describe('uncertaintyOrder', () => {
  it('starts nearest the threshold and takes one per cell per round', () => {
    const t = createDetectionTable('EPSG:32632', 4);
    [[10, 10, 0.49], [12, 12, 0.5], [500, 500, 0.7], [20, 20, 0.9]].forEach(([x, y, s], i) => { t.cxM[i] = x; t.cyM[i] = y; t.score[i] = s; });
    t.count = 4;
    expect(uncertaintyOrder(t, t.score, 0.5, [0, 1, 2, 3])).toEqual([1, 2, 0, 3]);
  });
});
