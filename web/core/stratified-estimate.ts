// The estimated true count of an AOI from a checked stratified sample of cells: the stratified difference
// estimator (Särndal, Swensson & Wretman 1992, §6.3 and §3.7; stratified sampling: Cochran 1977, ch. 5).
//
//   T̂ = Σ_all cells detected + Σ_h N_h · d̄_h,        d = true − detected in a checked cell
//   V̂(T̂) = Σ_h N_h² (1 − n_h / N_h) s²_h / n_h       (finite-population correction; s²_h the sample variance of d)
//   95 % interval: T̂ ± t_{0.975, n − H} · SE          (degrees of freedom n − H, as R survey's degf())
//
// This is the total of d under a stratified simple random design plus a known constant, which is exactly what
// R's survey::svytotal computes for d (the test compares with it). Precision and recall of the detector on the AOI
// are combined-ratio estimates from the same sample.
import { betaQuantile } from './poisson-stats.ts';

/** One checked cell: what the detector counted in it and what a person found to be there. */
export interface CheckedCell {
  stratum: number;
  detected: number;
  /** True objects in the cell (accepted detections + objects added by hand). */
  truth: number;
  /** Detections the person accepted (true positives); detected − truePositives were rejected. */
  truePositives: number;
}

export interface StratumPopulation {
  /** Number of cells of the stratum in the AOI (N_h). */
  cells: number;
  /** Sum of the detector's counts over all of them. */
  detected: number;
}

export interface StratifiedEstimate {
  /** Estimated true count T̂. */
  count: number;
  /** Standard error of T̂. */
  se: number;
  /** 95 % interval (t with n − H degrees of freedom), lower bound clipped at 0. */
  ci95: [number, number];
  /** Degrees of freedom used for the interval. */
  df: number;
  cellsChecked: number;
  /** Detector count over the AOI (Σ detected). */
  detected: number;
  /** Estimated share of detections that are real (combined ratio), or null without checked detections. */
  precision: number | null;
  /** Estimated share of real objects the detector found, or null without checked objects. */
  recall: number | null;
  method: string;
}

export const ESTIMATE_METHOD = 'stratified difference estimator (Särndal, Swensson & Wretman 1992; Cochran 1977), SE with finite-population correction, 95 % t interval on n − H degrees of freedom';

/** Two-sided Student t quantile t_{1 − α/2, df}: ν / (ν + T²) ~ Beta(ν/2, 1/2) (Abramowitz & Stegun 26.7.1). */
export function tQuantile(alpha: number, df: number): number {
  if (!(df > 0)) return NaN;
  const x = betaQuantile(alpha, df / 2, 0.5);
  return Math.sqrt((df * (1 - x)) / x);
}

/**
 * The estimate from stratum populations (indexed by stratum number) and the checked cells. Every stratum with
 * cells needs at least 2 checked cells for a variance; otherwise the result says why (throws an Error with a sentence).
 */
export function stratifiedEstimate(strata: readonly StratumPopulation[], checked: readonly CheckedCell[]): StratifiedEstimate {
  let count = 0;
  let variance = 0;
  let n = 0;
  let H = 0;
  let detectedAll = 0;
  // weighted sums for the ratio estimates of precision and recall
  let wTp = 0;
  let wDet = 0;
  let wTruth = 0;
  for (let h = 0; h < strata.length; h++) {
    const N = strata[h].cells;
    detectedAll += strata[h].detected;
    count += strata[h].detected;
    if (N === 0) continue;
    const cells = checked.filter((c) => c.stratum === h);
    const nh = cells.length;
    if (nh < 2) throw new Error(`Stratum ${h} has ${nh} checked cell${nh === 1 ? '' : 's'}; check at least 2 cells in every stratum for an estimate with an interval.`);
    const d = cells.map((c) => c.truth - c.detected);
    const mean = d.reduce((a, b) => a + b, 0) / nh;
    const s2 = d.reduce((a, b) => a + (b - mean) ** 2, 0) / (nh - 1);
    count += N * mean;
    variance += N * N * (1 - nh / N) * (s2 / nh);
    n += nh;
    H += 1;
    const w = N / nh;
    for (const c of cells) { wTp += w * c.truePositives; wDet += w * c.detected; wTruth += w * c.truth; }
  }
  const se = Math.sqrt(variance);
  const df = n - H;
  const half = df > 0 ? tQuantile(0.05, df) * se : NaN;
  return {
    count, se, ci95: [Math.max(0, count - half), count + half], df, cellsChecked: n, detected: detectedAll,
    precision: wDet > 0 ? wTp / wDet : null,
    recall: wTruth > 0 ? wTp / wTruth : null,
    method: ESTIMATE_METHOD,
  };
}
