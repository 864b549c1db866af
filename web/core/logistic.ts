// L2-regularised logistic regression, fitted exactly (Newton's method on the full Hessian; a few dozen features at
// most), with the objective of scikit-learn's LogisticRegression(penalty='l2', C, fit_intercept=True):
//
//   minimise  ½‖w‖² + C · Σ_i s_i · log(1 + exp(−y_i (w·x_i + b)))      y_i ∈ {−1, +1}, s_i sample weights
//
// (the intercept b is not penalised), and k-fold cross-validation to choose C. The test compares coefficients with
// scikit-learn on generated data.

/** The intercept: fitted freely (scikit-learn's), penalised like the coefficients, or fixed at 0. */
export type InterceptMode = 'free' | 'penalized' | 'none';

export interface LogisticModel {
  coef: Float64Array;
  intercept: number;
  C: number;
}

/** log(1 + e^z) without overflow. */
function softplus(z: number): number {
  return z > 0 ? z + Math.log1p(Math.exp(-z)) : Math.log1p(Math.exp(z));
}

export function sigmoid(z: number): number {
  return z >= 0 ? 1 / (1 + Math.exp(-z)) : Math.exp(z) / (1 + Math.exp(z));
}

/** Solve A x = b for a symmetric positive definite A (n × n, row-major) by Cholesky; A and b are not changed. */
function solveSpd(A: Float64Array, b: Float64Array, n: number): Float64Array {
  const L = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = A[i * n + j];
      for (let k = 0; k < j; k++) s -= L[i * n + k] * L[j * n + k];
      if (i === j) L[i * n + i] = Math.sqrt(Math.max(s, 1e-300));
      else L[i * n + j] = s / L[j * n + j];
    }
  }
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) { let s = b[i]; for (let k = 0; k < i; k++) s -= L[i * n + k] * y[k]; y[i] = s / L[i * n + i]; }
  const x = new Float64Array(n);
  for (let i = n - 1; i >= 0; i--) { let s = y[i]; for (let k = i + 1; k < n; k++) s -= L[k * n + i] * x[k]; x[i] = s / L[i * n + i]; }
  return x;
}

/**
 * Fit on rows `X` (n × d, row-major) with labels `y` (1 positive, 0 negative). Newton steps with a backtracking line
 * search until the gradient's largest component is below `tol` (default 1e-10).
 */
export function fitLogistic(X: Float64Array, y: ArrayLike<number>, d: number, C: number, opts: { weights?: ArrayLike<number>; offset?: ArrayLike<number>; intercept?: InterceptMode; tol?: number; maxIter?: number } = {}): LogisticModel {
  const n = y.length;
  const p = d + 1; // coefficients, then the intercept
  const w = new Float64Array(p);
  const sw = (i: number) => (opts.weights ? opts.weights[i] : 1);
  // a fixed offset per row (e.g. the detector's own logit): the model learns a correction to it
  const off = (i: number) => (opts.offset ? opts.offset[i] : 0);
  const objective = (v: Float64Array) => {
    let f = opts.intercept === 'penalized' ? 0.5 * v[d] * v[d] : 0;
    for (let j = 0; j < d; j++) f += 0.5 * v[j] * v[j];
    for (let i = 0; i < n; i++) {
      let z = v[d] + off(i);
      for (let j = 0; j < d; j++) z += v[j] * X[i * d + j];
      f += C * sw(i) * softplus(y[i] ? -z : z);
    }
    return f;
  };
  const tol = opts.tol ?? 1e-10;
  let f = objective(w);
  for (let iter = 0; iter < (opts.maxIter ?? 100); iter++) {
    const g = new Float64Array(p);
    const H = new Float64Array(p * p);
    for (let j = 0; j < d; j++) { g[j] = w[j]; H[j * p + j] = 1; }
    if (opts.intercept === 'penalized') { g[d] = w[d]; H[d * p + d] = 1; }
    for (let i = 0; i < n; i++) {
      let z = w[d] + off(i);
      for (let j = 0; j < d; j++) z += w[j] * X[i * d + j];
      const mu = sigmoid(z);
      const r = C * sw(i) * (mu - (y[i] ? 1 : 0));
      const s = C * sw(i) * mu * (1 - mu);
      for (let j = 0; j < p; j++) {
        const xj = j < d ? X[i * d + j] : 1;
        g[j] += r * xj;
        for (let k = 0; k <= j; k++) H[j * p + k] += s * xj * (k < d ? X[i * d + k] : 1);
      }
    }
    for (let j = 0; j < p; j++) for (let k = j + 1; k < p; k++) H[j * p + k] = H[k * p + j];
    // a fixed intercept of 0: no gradient, an identity row and column (its step is 0)
    if (opts.intercept === 'none') { g[d] = 0; for (let j = 0; j < p; j++) { H[d * p + j] = 0; H[j * p + d] = 0; } H[d * p + d] = 1; }
    let gmax = 0;
    for (let j = 0; j < p; j++) gmax = Math.max(gmax, Math.abs(g[j]));
    if (gmax < tol) break;
    // tiny ridge on the intercept's diagonal keeps the solve defined when every label is the same
    H[d * p + d] += 1e-12;
    const step = solveSpd(H, g, p);
    let t = 1;
    let next = new Float64Array(p);
    for (let ls = 0; ls < 40; ls++) {
      for (let j = 0; j < p; j++) next[j] = w[j] - t * step[j];
      const fn = objective(next);
      if (fn <= f - 1e-4 * t * g.reduce((a, gj, j) => a + gj * step[j], 0) || ls === 39) { f = fn; break; }
      t /= 2;
    }
    w.set(next);
    next = new Float64Array(p);
  }
  return { coef: w.slice(0, d), intercept: w[d], C };
}

/** The model's probability for one row. */
export function predictLogistic(m: LogisticModel, x: ArrayLike<number>, offset = 0, zOffset = 0): number {
  let z = m.intercept + zOffset;
  for (let j = 0; j < m.coef.length; j++) z += m.coef[j] * x[offset + j];
  return sigmoid(z);
}

/** Stratified folds (positives and negatives dealt round-robin after a seeded shuffle): fold index per row. */
export function stratifiedFolds(y: ArrayLike<number>, k: number, rnd: () => number): Int32Array {
  const fold = new Int32Array(y.length);
  for (const cls of [0, 1]) {
    const idx: number[] = [];
    for (let i = 0; i < y.length; i++) if ((y[i] ? 1 : 0) === cls) idx.push(i);
    for (let i = idx.length - 1; i > 0; i--) { const j = Math.floor(rnd() * (i + 1)); [idx[i], idx[j]] = [idx[j], idx[i]]; }
    idx.forEach((row, r) => { fold[row] = r % k; });
  }
  return fold;
}

/** Out-of-fold probabilities of a model fitted with `C` on the other folds. */
export function crossValidatedProbabilities(X: Float64Array, y: ArrayLike<number>, d: number, C: number, fold: Int32Array, k: number, zOffset?: ArrayLike<number>, intercept: InterceptMode = 'free'): Float64Array {
  const out = new Float64Array(y.length);
  for (let f = 0; f < k; f++) {
    const train: number[] = [];
    for (let i = 0; i < y.length; i++) if (fold[i] !== f) train.push(i);
    const Xt = new Float64Array(train.length * d);
    const yt = new Uint8Array(train.length);
    const ot = new Float64Array(train.length);
    train.forEach((i, r) => { Xt.set(X.subarray(i * d, i * d + d), r * d); yt[r] = y[i] ? 1 : 0; ot[r] = zOffset ? zOffset[i] : 0; });
    const m = fitLogistic(Xt, yt, d, C, { offset: ot, intercept });
    for (let i = 0; i < y.length; i++) if (fold[i] === f) out[i] = predictLogistic(m, X, i * d, zOffset ? zOffset[i] : 0);
  }
  return out;
}

/** Mean log-loss of probabilities (clipped to [1e-12, 1 − 1e-12]). */
export function logLoss(p: ArrayLike<number>, y: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < y.length; i++) { const q = Math.min(1 - 1e-12, Math.max(1e-12, p[i])); s -= y[i] ? Math.log(q) : Math.log(1 - q); }
  return s / Math.max(1, y.length);
}

/** The C of `grid` with the lowest cross-validated log-loss (ties: the smallest C, the strongest regularisation). */
export function chooseC(X: Float64Array, y: ArrayLike<number>, d: number, grid: readonly number[], fold: Int32Array, k: number, zOffset?: ArrayLike<number>, intercept: InterceptMode = 'free'): { C: number; losses: number[] } {
  const losses = grid.map((C) => logLoss(crossValidatedProbabilities(X, y, d, C, fold, k, zOffset, intercept), y));
  let best = 0;
  for (let i = 1; i < grid.length; i++) if (losses[i] < losses[best] - 1e-12) best = i;
  return { C: grid[best], losses };
}
