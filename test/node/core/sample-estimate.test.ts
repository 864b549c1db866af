// Estimates from a design and review decisions: the cell tallies follow the counting rule (half-open cells, the AOI
// rule, review states), the per-class estimate is the stratified difference estimator of stratified-estimate.ts
// (itself checked against R survey there) on those tallies, the tally rows carry it, and the change between two
// dates' estimates uses the Welch–Satterthwaite degrees of freedom (t quantiles from printed tables).
import { describe, expect, it } from 'vitest';
import { designSample, type SampleDesign } from '../../../web/core/check-sample.ts';
import { cellTalliesFromReview, estimateChange, estimatesForDesign, sampleProgress } from '../../../web/core/sample-estimate.ts';
import { stratifiedEstimate } from '../../../web/core/stratified-estimate.ts';
import { tallyDate } from '../../../web/core/tally.ts';
import { createDetectionTable, type ReviewState } from '../../../web/core/types.ts';
import { mulberry32 } from '../../helpers/mulberry32.ts';

// a 100 × 60 m AOI in a UTM frame, cells of 20 m from the origin (0, 0)
const square = [[[[0, 0], [100, 0], [100, 60], [0, 60], [0, 0]]]] as [number, number][][][];
const grid: Pick<SampleDesign, 'cellSizeM' | 'originXM' | 'originYM'> = { cellSizeM: 20, originXM: 0, originYM: 0 };

function table(rows: Array<[number, number, number, number]>) { // x, y, score, class
  const t = createDetectionTable('EPSG:32632', rows.length);
  rows.forEach(([x, y, s, k], i) => { t.cxM[i] = x; t.cyM[i] = y; t.score[i] = s; t.classIdx[i] = k; t.lengthM[i] = 4; t.widthM[i] = 2; });
  t.count = rows.length;
  return t;
}

describe('cellTalliesFromReview', () => {
  const design = { ...grid, cells: [{ id: '0,0', x0M: 0, y0M: 0, x1M: 20, y1M: 20, areaM2: 400, detected: [0, 0], stratum: 0 }, { id: '1,0', x0M: 20, y0M: 0, x1M: 40, y1M: 20, areaM2: 400, detected: [0, 0], stratum: 0 }] };
  // case: [x, y, score, review] → cell that gains [detected, truth, truePositive] (class 0)
  const cases: Array<[string, number, number, number, ReviewState, string | null, [number, number, number]]> = [
    ['unreviewed above the threshold: detected only', 5, 5, 0.9, 'unreviewed', '0,0', [1, 0, 0]],
    ['accepted above: detected, true, true positive', 5, 5, 0.9, 'accepted', '0,0', [1, 1, 1]],
    ['accepted below: true only (a real object the detector scored low)', 5, 5, 0.2, 'accepted', '0,0', [0, 1, 0]],
    ['rejected above: detected, not true', 5, 5, 0.9, 'rejected', '0,0', [1, 0, 0]],
    ['added: true only', 5, 5, 1, 'added', '0,0', [0, 1, 0]],
    ['on the shared edge x = 20: the right cell (half-open)', 20, 5, 0.9, 'accepted', '1,0', [1, 1, 1]],
    ['on y = 20: the cell above, not in this design', 5, 20, 0.9, 'accepted', null, [0, 0, 0]],
    ['outside the AOI: nowhere', -1, 5, 0.9, 'accepted', null, [0, 0, 0]],
  ];
  for (const [name, x, y, score, review, cell, want] of cases) {
    it(name, () => {
      const tallies = cellTalliesFromReview(design, square, table([[x, y, score, 0]]), [review], new Set(['0,0', '1,0']), 2, 0.5);
      for (const id of ['0,0', '1,0']) {
        const t = tallies.get(id)!;
        const got = [t.detected[0], t.truth![0], t.truePositives![0]];
        expect(got, id).toEqual(id === cell ? want : [0, 0, 0]);
        expect(t.detected[1]).toBe(0);
      }
    });
  }
  it('unchecked cells carry detector counts only', () => {
    const tallies = cellTalliesFromReview(design, square, table([[5, 5, 0.9, 0]]), ['accepted'], new Set(), 2, 0.5);
    expect(tallies.get('0,0')).toEqual({ detected: [1, 0] });
  });
});

describe('estimatesForDesign', () => {
  // a generated scene: 400 × 300 m, cars clustered in a lot, a detector that misses 20 % and invents 10 %
  const rnd = mulberry32(7);
  const aoi = [[[[0, 0], [400, 0], [400, 300], [0, 300], [0, 0]]]] as [number, number][][][];
  const rows: Array<[number, number, number, number]> = [];
  const review: ReviewState[] = [];
  for (let i = 0; i < 600; i++) {
    const x = rnd() < 0.7 ? 50 + 150 * rnd() : 400 * rnd(), y = rnd() < 0.7 ? 40 + 100 * rnd() : 300 * rnd();
    const found = rnd() > 0.2;
    rows.push([x, y, found ? 0.6 + 0.4 * rnd() : 0.2 * rnd(), 0]);
    review.push('unreviewed');
  }
  for (let i = 0; i < 60; i++) { rows.push([400 * rnd(), 300 * rnd(), 0.5 + 0.5 * rnd(), 0]); review.push('unreviewed'); }
  const t = table(rows);
  const truthRow = (i: number) => i < 600;
  const points = rows.map(([x, y], i) => ({ x, y, i })).filter(({ i }) => t.score[i] >= 0.5).map(({ x, y }) => ({ xM: x, yM: y, classIdx: 0 }));
  const design = designSample(aoi, points, { seed: 11, classCount: 1 });
  // a perfect checker: in sampled cells accept true detections, reject false ones, add the missed (as accepted rows)
  const checked = new Set(design.sample);
  const checkedReview = review.map((_, i) => (truthRow(i) ? 'accepted' : 'rejected') as ReviewState);

  it('is stratifiedEstimate on the per-stratum detector sums and the checked cells', () => {
    const tallies = cellTalliesFromReview(design, aoi, t, checkedReview, checked, 1, 0.5);
    const [e] = estimatesForDesign(design, tallies, 1);
    const strata = design.strata.map((_, h) => {
      const cs = design.cells.filter((c) => c.stratum === h);
      return { cells: cs.length, detected: cs.reduce((a, c) => a + tallies.get(c.id)!.detected[0], 0) };
    });
    const cells = design.cells.filter((c) => checked.has(c.id)).map((c) => {
      const x = tallies.get(c.id)!;
      return { stratum: c.stratum, detected: x.detected[0], truth: x.truth![0], truePositives: x.truePositives![0] };
    });
    expect(e).toEqual(stratifiedEstimate(strata, cells));
    // the detector count of the design is the sum of the cells' (same threshold)
    expect(e!.detected).toBe(points.length);
    // a perfect check of every cell gives the truth with no error
    const all = new Set(design.cells.map((c) => c.id));
    const full = estimatesForDesign({ ...design, sample: [...all] }, cellTalliesFromReview(design, aoi, t, checkedReview, all, 1, 0.5), 1)[0]!;
    expect(full.count).toBeCloseTo(600, 9);
    expect(full.se).toBeCloseTo(0, 9);
    // every invented detection scored ≥ 0.5 lies in the AOI: precision and recall are known exactly
    expect(full.precision).toBeCloseTo((points.length - 60) / points.length, 12);
    expect(full.recall).toBeCloseTo((points.length - 60) / 600, 12);
  });
  it('is null until every stratum has 2 checked cells; progress says how far', () => {
    const one = new Set([design.sample[0]]);
    expect(sampleProgress(design, one)).toMatchObject({ cellsChecked: 1, cellsInSample: design.sample.length, ready: false, seed: 11 });
    expect(estimatesForDesign(design, cellTalliesFromReview(design, aoi, t, checkedReview, one, 1, 0.5), 1)).toEqual([null]);
    // cells outside the drawn sample do not count as checked
    const outside = design.cells.map((c) => c.id).filter((id) => !design.sample.includes(id));
    expect(sampleProgress(design, new Set(outside)).cellsChecked).toBe(0);
  });
  it('the tally rows carry the estimate and the progress', () => {
    const scenes = [{ name: 's', georef: { epsg: 32632, geoTransform: [0, 0.3, 0, 300, 0, -0.3] as [number, number, number, number, number, number], widthPx: 1334, heightPx: 1000, gsdM: 0.3 } }];
    const sidecar = { classes: ['vehicle'], objects: { vehicle: { lengthM: 4.5, widthM: 1.8 } }, inputGsdM: 0.3 } as never;
    const aois = [{ aoi: { id: 'a', name: 'Lot', epsg: 32632, polygons: aoi }, areaM2: 120000, coverage: 1 }];
    const d = tallyDate({ detections: t, review: checkedReview, aois, dateIso: '2026-06-01', scenes, sidecar, samples: [{ aoiId: 'a', design, checked: [...checked] }] }, 0.5);
    const tallies = cellTalliesFromReview(design, aoi, t, checkedReview, checked, 1, 0.5);
    expect(d.rows[0].estimate).toEqual(estimatesForDesign(design, tallies, 1)[0]);
    expect(d.rows[0].sample).toMatchObject({ cellsChecked: design.sample.length, ready: true });
    const none = tallyDate({ detections: t, review, aois, dateIso: '2026-06-01', scenes, sidecar }, 0.5);
    expect(none.rows[0].estimate).toBeUndefined();
    expect(none.rows[0].sample).toBeNull();
  });
});

describe('estimateChange', () => {
  const est = (count: number, se: number, df: number) => ({ count, se, df, ci95: [0, 0] as [number, number], cellsChecked: df + 3, detected: 0, precision: null, recall: null, method: '' });
  it('equal SEs and df: Welch–Satterthwaite df = 2·df, t(0.975, 20) = 2.086 (printed t tables, e.g. Abramowitz & Stegun table 26.10; value from memory)', () => {
    const c = estimateChange(est(100, 1, 10), est(130, 1, 10));
    expect(c.change).toBe(30);
    expect(c.se).toBeCloseTo(Math.SQRT2, 12);
    expect(c.df).toBeCloseTo(20, 12);
    expect(c.ci95[1] - 30).toBeCloseTo(2.086 * Math.SQRT2, 3);
  });
  it('one date without spread: the other date alone sets df', () => {
    const c = estimateChange(est(100, 0, 4), est(90, 3, 6));
    expect(c.df).toBeCloseTo(6, 12);
    expect(c.ci95[0]).toBeCloseTo(-10 - 2.447 * 3, 3); // t(0.975, 6) = 2.447 (printed t tables; value from memory)
  });
});
