// Garwood intervals and the two-Poisson conditional test against published tables and R's poisson.test.
import { describe, it, expect } from 'vitest';
import {
  garwoodInterval, comparePoissonCounts, binomialTestTwoSided, gammaP, gammaQuantile, betaI, logGamma,
} from '../../../web/core/poisson-stats.ts';

describe('special functions', () => {
  it('logGamma matches factorials and Γ(1/2) = √π', () => {
    expect(logGamma(11)).toBeCloseTo(Math.log(3628800), 10);
    expect(logGamma(0.5)).toBeCloseTo(Math.log(Math.sqrt(Math.PI)), 12);
  });
  it('gammaP(k, x) = 1 − Σ_{i<k} e^{−x} x^i / i! for integer k (Poisson identity)', () => {
    for (const [k, x] of [[1, 0.5], [3, 2], [10, 12.5], [50, 40]]) {
      let term = Math.exp(-x), sum = 0;
      for (let i = 0; i < k; i++) { sum += term; term *= x / (i + 1); }
      expect(gammaP(k, x)).toBeCloseTo(1 - sum, 12);
    }
  });
  it('chi-square quantiles: χ²(0.975; 2) = 7.3778, χ²(0.025; 20) = 9.5908 (standard χ² tables, from memory)', () => {
    expect(2 * gammaQuantile(0.975, 1)).toBeCloseTo(7.3778, 4);
    expect(2 * gammaQuantile(0.025, 10)).toBeCloseTo(9.5908, 4);
  });
  it('betaI agrees with a direct binomial sum: P(X ≥ k) = I_p(k, n − k + 1)', () => {
    const n = 30, p = 0.37;
    for (const k of [1, 5, 11, 29]) {
      let tail = 0;
      for (let i = k; i <= n; i++) tail += Math.exp(logGamma(n + 1) - logGamma(i + 1) - logGamma(n - i + 1) + i * Math.log(p) + (n - i) * Math.log(1 - p));
      expect(betaI(p, k, n - k + 1)).toBeCloseTo(tail, 12);
    }
  });
});

describe('garwoodInterval (95 %)', () => {
  // Exact Poisson confidence limits as tabulated in standard references (e.g. the exact Poisson limits tables in
  // Geigy Scientific Tables; values from memory of those tables), 4 significant figures.
  const TABLE: Array<[number, number, number]> = [
    [0, 0, 3.689], [1, 0.0253, 5.572], [2, 0.2422, 7.225], [5, 1.623, 11.67], [10, 4.795, 18.39], [20, 12.22, 30.89],
  ];
  for (const [k, lo, hi] of TABLE) {
    it(`count ${k} → [${lo}, ${hi}]`, () => {
      const r = garwoodInterval(k);
      expect(r.lower).toBeCloseTo(lo, lo < 1 ? 4 : 2);
      expect(Math.abs(r.upper - hi) / hi).toBeLessThan(5e-4);
    });
  }
  it('count 0 upper limit is −ln(0.025) exactly', () => {
    expect(garwoodInterval(0).upper).toBeCloseTo(-Math.log(0.025), 10);
  });
  it('large counts approach k ± 1.96√k', () => {
    const r = garwoodInterval(10000);
    expect(r.lower).toBeGreaterThan(10000 - 1.96 * 100 - 2);
    expect(r.upper).toBeLessThan(10000 + 1.96 * 100 + 3);
  });
  it('refuses non-integer counts', () => {
    expect(() => garwoodInterval(2.5)).toThrow(RangeError);
  });
});

describe('comparePoissonCounts (Przyborowski & Wilenski 1940 conditional test)', () => {
  it("matches R's poisson.test(c(11, 21), c(800, 3011)) (R documentation example, values from memory)", () => {
    // R: poisson.test(c(11, 6+8+7), c(800, 1083+1050+878)) → p-value = 0.07967, rate ratio 1.971488,
    // 95 % CI 0.8584264 4.2772659, expected count1 6.7174.
    const r = comparePoissonCounts(11, 800, 21, 3011);
    expect(r.pValue).toBeCloseTo(0.07967, 4);
    expect(r.rateRatio).toBeCloseTo(1.971488, 5);
    expect(r.rateRatioInterval.lower).toBeCloseTo(0.8584264, 5);
    expect(r.rateRatioInterval.upper).toBeCloseTo(4.2772659, 5);
    expect(r.expectedCount1).toBeCloseTo(6.7174, 3);
  });
  it('the p-value is the direct two-sided binomial sum over outcomes no likelier than the observed one', () => {
    const n = 40, p = 0.3, x = 19;
    const pmf = (k: number) => Math.exp(logGamma(n + 1) - logGamma(k + 1) - logGamma(n - k + 1) + k * Math.log(p) + (n - k) * Math.log(1 - p));
    let direct = 0;
    for (let k = 0; k <= n; k++) if (pmf(k) <= pmf(x) * (1 + 1e-7)) direct += pmf(k);
    expect(binomialTestTwoSided(x, n, p)).toBeCloseTo(direct, 12);
    const r = comparePoissonCounts(19, 3, 21, 7); // p0 = 3 / 10
    expect(r.pValue).toBeCloseTo(direct, 12);
  });
  it('equal rates give p = 1; a big change gives a tiny p', () => {
    expect(comparePoissonCounts(50, 10, 50, 10).pValue).toBeCloseTo(1, 10);
    expect(comparePoissonCounts(200, 10, 100, 10).pValue).toBeLessThan(1e-7);
  });
  it('zero counts: ratio 0 with lower limit 0, or ratio ∞ with upper limit ∞', () => {
    const a = comparePoissonCounts(0, 5, 7, 5);
    expect(a.rateRatio).toBe(0);
    expect(a.rateRatioInterval.lower).toBe(0);
    const b = comparePoissonCounts(7, 5, 0, 5);
    expect(b.rateRatio).toBe(Infinity);
    expect(b.rateRatioInterval.upper).toBe(Infinity);
    // Two-sided p for 7 vs 0 with p0 = 1/2: 2 · 0.5^7 = 0.015625 (direct binomial sum).
    expect(b.pValue).toBeCloseTo(0.015625, 12);
  });
});

describe('formatPValue', () => {
  it('prints "< 0.001" below 0.001 (as the app does), three decimals otherwise', async () => {
    const { formatPValue } = await import('../../../web/core/poisson-stats.ts');
    expect(formatPValue(0.0004)).toBe('< 0.001');
    expect(formatPValue(0.001)).toBe('0.001');
    expect(formatPValue(0.04567)).toBe('0.046');
    expect(formatPValue(NaN)).toBe('–');
  });
});
