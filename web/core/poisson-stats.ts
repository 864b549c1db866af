// Exact statistics for counts: Garwood Poisson interval and the conditional binomial test comparing two Poisson rates.

/** ln Γ(x) for x > 0 (Lanczos approximation, g = 7, n = 9; relative error ~1e-15). */
export function logGamma(x: number): number {
  const c = [0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
    12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7];
  if (x < 0.5) return Math.log(Math.PI / Math.abs(Math.sin(Math.PI * x))) - logGamma(1 - x);
  x -= 1;
  let a = c[0];
  const t = x + 7.5;
  for (let i = 1; i < 9; i++) a += c[i] / (x + i);
  return 0.5 * Math.log(2 * Math.PI) + (x + 0.5) * Math.log(t) - t + Math.log(a);
}

/** Regularized lower incomplete gamma P(a, x) (series for x < a + 1, Lentz continued fraction otherwise). */
export function gammaP(a: number, x: number): number {
  if (!(a > 0) || x < 0) throw new RangeError(`gammaP needs a > 0 and x ≥ 0, got a=${a}, x=${x}.`);
  if (x === 0) return 0;
  const lnPre = a * Math.log(x) - x - logGamma(a);
  if (x < a + 1) {
    let sum = 1 / a, term = sum;
    for (let n = 1; n < 10000; n++) {
      term *= x / (a + n); sum += term;
      if (Math.abs(term) < Math.abs(sum) * 1e-16) break;
    }
    return Math.min(1, sum * Math.exp(lnPre));
  }
  const tiny = 1e-300;
  let b = x + 1 - a, c = 1 / tiny, d = 1 / b, h = d;
  for (let n = 1; n < 10000; n++) {
    const an = -n * (n - a);
    b += 2;
    d = an * d + b; if (Math.abs(d) < tiny) d = tiny;
    c = b + an / c; if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const del = d * c; h *= del;
    if (Math.abs(del - 1) < 1e-16) break;
  }
  return Math.max(0, 1 - Math.exp(lnPre) * h);
}

/** Quantile of the Gamma(shape a, scale 1) distribution: x with P(a, x) = p (bisection to full precision). */
export function gammaQuantile(p: number, a: number): number {
  if (!(p > 0 && p < 1)) throw new RangeError(`gammaQuantile needs 0 < p < 1, got ${p}.`);
  let lo = 0, hi = Math.max(1, a);
  while (gammaP(a, hi) < p) hi *= 2;
  for (let i = 0; i < 200 && hi - lo > 1e-14 * Math.max(1, hi); i++) {
    const mid = (lo + hi) / 2;
    if (gammaP(a, mid) < p) lo = mid; else hi = mid;
  }
  return (lo + hi) / 2;
}

/** Regularized incomplete beta I_x(a, b) (continued fraction, Numerical Recipes §6.4 form). */
export function betaI(x: number, a: number, b: number): number {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  const lnFront = logGamma(a + b) - logGamma(a) - logGamma(b) + a * Math.log(x) + b * Math.log(1 - x);
  const cf = (xx: number, aa: number, bb: number): number => {
    const tiny = 1e-300;
    let c = 1, d = 1 - ((aa + bb) * xx) / (aa + 1);
    if (Math.abs(d) < tiny) d = tiny;
    d = 1 / d;
    let h = d;
    for (let m = 1; m < 10000; m++) {
      const m2 = 2 * m;
      let an = (m * (bb - m) * xx) / ((aa + m2 - 1) * (aa + m2));
      d = 1 + an * d; if (Math.abs(d) < tiny) d = tiny;
      c = 1 + an / c; if (Math.abs(c) < tiny) c = tiny;
      d = 1 / d; h *= d * c;
      an = (-(aa + m) * (aa + bb + m) * xx) / ((aa + m2) * (aa + m2 + 1));
      d = 1 + an * d; if (Math.abs(d) < tiny) d = tiny;
      c = 1 + an / c; if (Math.abs(c) < tiny) c = tiny;
      d = 1 / d;
      const del = d * c; h *= del;
      if (Math.abs(del - 1) < 1e-16) break;
    }
    return h;
  };
  if (x < (a + 1) / (a + b + 2)) return (Math.exp(lnFront) * cf(x, a, b)) / a;
  return 1 - (Math.exp(lnFront) * cf(1 - x, b, a)) / b;
}

/** Quantile of Beta(a, b): x with I_x(a, b) = p (bisection). */
export function betaQuantile(p: number, a: number, b: number): number {
  let lo = 0, hi = 1;
  for (let i = 0; i < 200 && hi - lo > 1e-15; i++) {
    const mid = (lo + hi) / 2;
    if (betaI(mid, a, b) < p) lo = mid; else hi = mid;
  }
  return (lo + hi) / 2;
}

export interface Interval { lower: number; upper: number }

/**
 * Garwood (1936) exact confidence interval for a Poisson mean given an observed count k:
 * lower = χ²(α/2; 2k)/2 = Gamma⁻¹(α/2; k), upper = χ²(1 − α/2; 2k + 2)/2 = Gamma⁻¹(1 − α/2; k + 1); lower = 0 for k = 0.
 * Divide by the exposure (e.g. imaged area in ha) for a rate interval.
 */
export function garwoodInterval(count: number, opts: { confidence?: number } = {}): Interval {
  if (!Number.isInteger(count) || count < 0) throw new RangeError(`A Poisson count must be a whole number ≥ 0, got ${count}.`);
  const alpha = 1 - (opts.confidence ?? 0.95);
  return {
    lower: count === 0 ? 0 : gammaQuantile(alpha / 2, count),
    upper: gammaQuantile(1 - alpha / 2, count + 1),
  };
}

function logBinomPmf(k: number, n: number, p: number): number {
  if (p === 0) return k === 0 ? 0 : -Infinity;
  if (p === 1) return k === n ? 0 : -Infinity;
  return logGamma(n + 1) - logGamma(k + 1) - logGamma(n - k + 1) + k * Math.log(p) + (n - k) * Math.log1p(-p);
}

/**
 * Exact two-sided binomial test p-value for x successes in n trials with success probability p, summing the
 * probabilities of all outcomes no more likely than the observed one (relative tolerance 1e-7, as R's binom.test).
 */
export function binomialTestTwoSided(x: number, n: number, p: number): number {
  if (n === 0) return 1;
  const dObs = logBinomPmf(x, n, p);
  const lim = dObs + Math.log1p(1e-7);
  let sum = 0;
  for (let k = 0; k <= n; k++) {
    const d = logBinomPmf(k, n, p);
    if (d <= lim) sum += Math.exp(d);
  }
  return Math.min(1, sum);
}

export interface PoissonComparison {
  /** (count1 / exposure1) / (count2 / exposure2); NaN when both counts are 0, Infinity when only count2 is 0. */
  rateRatio: number;
  /** Exact (Clopper–Pearson-based) confidence interval for the rate ratio. */
  rateRatioInterval: Interval;
  /** Two-sided p-value of H0: equal rates. */
  pValue: number;
  /** count1 expected under H0 given the total: (count1 + count2) · exposure1 / (exposure1 + exposure2). */
  expectedCount1: number;
}

/**
 * Compare two Poisson counts with exposures (e.g. imaged AOI area in ha on each date): the conditional test of
 * Przyborowski & Wilenski (1940). Given n = c1 + c2, c1 ~ Binomial(n, e1 / (e1 + e2)) under equal rates; the
 * p-value is the two-sided exact binomial test, and the rate-ratio interval maps the Clopper–Pearson interval of
 * the binomial proportion, as R's poisson.test does.
 */
export function comparePoissonCounts(
  count1: number, exposure1: number, count2: number, exposure2: number, opts: { confidence?: number } = {},
): PoissonComparison {
  for (const [name, c] of [['count1', count1], ['count2', count2]] as const) {
    if (!Number.isInteger(c) || c < 0) throw new RangeError(`${name} must be a whole number ≥ 0, got ${c}.`);
  }
  if (!(exposure1 > 0) || !(exposure2 > 0)) throw new RangeError(`Exposures must be > 0, got ${exposure1} and ${exposure2}.`);
  const alpha = 1 - (opts.confidence ?? 0.95);
  const n = count1 + count2;
  const p0 = exposure1 / (exposure1 + exposure2);
  const toRatio = (p: number) => (p / (1 - p)) * (exposure2 / exposure1);
  const pL = count1 === 0 ? 0 : betaQuantile(alpha / 2, count1, n - count1 + 1);
  const pU = count1 === n ? 1 : betaQuantile(1 - alpha / 2, count1 + 1, n - count1);
  return {
    rateRatio: n === 0 ? NaN : count2 === 0 ? Infinity : (count1 / exposure1) / (count2 / exposure2),
    rateRatioInterval: n === 0 ? { lower: 0, upper: Infinity } : { lower: toRatio(pL), upper: pU === 1 ? Infinity : toRatio(pU) },
    pValue: binomialTestTwoSided(count1, n, p0),
    expectedCount1: n * p0,
  };
}

/** A p-value as the app, exports and the report print it: "< 0.001" below 0.001, else three decimals. */
export function formatPValue(p: number): string {
  if (!Number.isFinite(p)) return '–';
  return p < 0.001 ? '< 0.001' : p.toFixed(3);
}
