// L2 logistic regression against scikit-learn (LogisticRegression, penalty l2, intercept, solver newton-cg at tol
// 1e-10; Debian python3-sklearn): reference fits on generated data in test/fixtures/logistic/reference.json, made by
// make-reference.py beside it, and re-made and compared here when /usr/bin/python3 has scikit-learn. Coefficients
// and intercept agree to 1e-6. Plus the cross-validation helpers on their own rules.
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { chooseC, fitLogistic, predictLogistic, stratifiedFolds } from '../../../web/core/logistic.ts';
import { mulberry32 } from '../../helpers/mulberry32.ts';

interface Ref { designs: Array<{ n: number; d: number; C: number; X: number[][]; y: number[]; coef: number[]; intercept: number }> }

function check(ref: Ref) {
  for (const t of ref.designs) {
    const X = new Float64Array(t.X.flat());
    const m = fitLogistic(X, t.y, t.d, t.C);
    const scale = Math.max(1, ...t.coef.map(Math.abs), Math.abs(t.intercept));
    for (let j = 0; j < t.d; j++) expect(Math.abs(m.coef[j] - t.coef[j]) / scale, `n ${t.n} d ${t.d} C ${t.C} coef ${j}`).toBeLessThan(1e-6);
    expect(Math.abs(m.intercept - t.intercept) / scale).toBeLessThan(1e-6);
  }
}

describe('fitLogistic equals scikit-learn LogisticRegression (L2, intercept)', () => {
  it('committed reference fits', () => check(JSON.parse(readFileSync('test/fixtures/logistic/reference.json', 'utf8'))));
  let hasSk = false;
  try { execFileSync('/usr/bin/python3', ['-c', 'import sklearn'], { stdio: 'ignore' }); hasSk = true; } catch { /* no scikit-learn here */ }
  it.skipIf(!hasSk)('freshly fitted by scikit-learn when installed', () => {
    check(JSON.parse(execFileSync('/usr/bin/python3', ['test/fixtures/logistic/make-reference.py'], { maxBuffer: 64 << 20 }).toString()));
  });
});

describe('cross-validation helpers', () => {
  it('stratified folds deal each class evenly', () => {
    const y = Array.from({ length: 53 }, (_, i) => (i % 3 === 0 ? 1 : 0));
    const fold = stratifiedFolds(y, 5, mulberry32(3));
    for (let f = 0; f < 5; f++) {
      const pos = y.filter((v, i) => v && fold[i] === f).length, neg = y.filter((v, i) => !v && fold[i] === f).length;
      expect(pos).toBeGreaterThanOrEqual(3); expect(pos).toBeLessThanOrEqual(4);
      expect(neg).toBeGreaterThanOrEqual(7); expect(neg).toBeLessThanOrEqual(8);
    }
  });
  it('on pure noise the strongest regularisation wins; on a clean signal a weaker one', () => {
    const rnd = mulberry32(9);
    const n = 80, d = 4;
    const X = new Float64Array(n * d).map(() => rnd() * 2 - 1);
    const noise = Array.from({ length: n }, () => (rnd() < 0.5 ? 1 : 0));
    const signal = Array.from({ length: n }, (_, i) => (X[i * d] + 0.3 * X[i * d + 1] > 0 ? 1 : 0));
    const grid = [0.01, 0.1, 1, 10, 100];
    const fold = stratifiedFolds(noise, 5, mulberry32(1));
    expect(chooseC(X, noise, d, grid, fold, 5).C).toBeLessThanOrEqual(0.1);
    expect(chooseC(X, signal, d, grid, stratifiedFolds(signal, 5, mulberry32(1)), 5).C).toBeGreaterThanOrEqual(10);
    const m = fitLogistic(X, signal, d, 100);
    expect(predictLogistic(m, [1, 0, 0, 0])).toBeGreaterThan(0.9);
  });
});

describe('offsets and intercept modes', () => {
  it('with an offset and no intercept, the fit corrects the offset only where the features say so', () => {
    const rnd = mulberry32(4);
    const n = 200, d = 2;
    const X = new Float64Array(n * d).map(() => rnd() * 2 - 1);
    const offset = Array.from({ length: n }, () => 2 * rnd() - 1);
    // labels follow the offset plus 3 × the first feature; the second is noise; no intercept in the truth
    const y = offset.map((o, i) => (rnd() < 1 / (1 + Math.exp(-(o + 3 * X[i * d]))) ? 1 : 0));
    const m = fitLogistic(X, y, d, 100, { offset, intercept: 'none' });
    expect(m.intercept).toBe(0);
    expect(m.coef[0]).toBeGreaterThan(1.5);
    expect(Math.abs(m.coef[1])).toBeLessThan(0.8);
    // a penalised intercept is pulled towards 0 compared with a free one on labels shifted by a constant
    const shifted = offset.map((o, i) => (rnd() < 1 / (1 + Math.exp(-(o - 1.5 + 3 * X[i * d]))) ? 1 : 0));
    const free = fitLogistic(X, shifted, d, 0.05, { offset, intercept: 'free' });
    const pen = fitLogistic(X, shifted, d, 0.05, { offset, intercept: 'penalized' });
    expect(free.intercept).toBeLessThan(pen.intercept);
    expect(pen.intercept).toBeLessThanOrEqual(0);
  });
});
