// A scorer adapted to this imagery from the analyst's review: per class, an L2 logistic regression (logistic.ts)
// that corrects the detector's own score — logit(adapted) = logit(score) + w·x, no intercept — from each detection's
// box size and the model's feature vector at its peak (when the model has a features output), trained on accepted
// (positive) and rejected (negative) detections, with the regularisation chosen by cross-validation on those
// reviews. Measured on real imagery (bench/adapt-simulation.md) it does not yet help enough to be offered in the page. It re-scores every detection
// of the class; the counting threshold then applies to the adapted scores. The same JSON serves the page and the
// CLI (`seamtally adapt`, `seamtally detect --scorer`).
//
// Honest gain: precision and recall at the threshold, before (the detector's scores) and after (out-of-fold adapted
// scores), measured on the reviews only; objects the analyst added count as real objects both score sets miss
// (a detection below the run's floor cannot be recovered by re-scoring).
import { chooseC, crossValidatedProbabilities, fitLogistic, predictLogistic, stratifiedFolds, type InterceptMode, type LogisticModel } from './logistic.ts';
import { mulberry32 } from './seeded-random.ts';
import type { DetectionTable, ReviewState } from './types.ts';

export const SCORER_FORMAT = 'seamtally-scorer/1';
/** Reviews a class needs before it is adapted (each of accepted and rejected). */
export const MIN_REVIEWS_PER_SIDE = 10;
const C_GRID = [0.01, 0.03, 0.1, 0.3, 1, 3, 10];
/**
 * The correction has no intercept: the reviews the queue asks for lie near the threshold and are mostly false, so a
 * fitted intercept (or a weight on the score itself) learnt from them shifts every score, far from the threshold
 * too, and cost up to 0.35 of F1 on the real validation sets (bench/adapt-simulation.md). Without it the features
 * re-rank detections around the detector's own score.
 */
const INTERCEPT: InterceptMode = 'none';

export interface ClassScorer {
  coef: number[];
  intercept: number;
  C: number;
  /** Standardisation of each feature (learnt from the reviews). */
  mean: number[];
  std: number[];
  positives: number;
  negatives: number;
}

export interface GainAt { precision: number | null; recall: number | null }

export interface ScorerJson {
  format: typeof SCORER_FORMAT;
  /** The detector it belongs to ("name version"); a scorer applies to that detector's detections only. */
  model: string;
  classes: string[];
  /** Features used: log length, log width, then `modelFeatureDim` model features (0: none); the score is the offset. */
  modelFeatureDim: number;
  /** Per class name: the fitted scorer, or null where there were too few reviews (its scores stay the detector's). */
  perClass: Record<string, ClassScorer | null>;
  /** Cross-validated precision and recall on the reviews at `threshold`, per class. */
  gain: Record<string, { threshold: number; before: GainAt; after: GainAt; added: number }>;
  createdIso: string;
}

/** Why a class was not adapted, or null when it was. */
export function notAdaptedReason(positives: number, negatives: number): string | null {
  if (positives >= MIN_REVIEWS_PER_SIDE && negatives >= MIN_REVIEWS_PER_SIDE) return null;
  return `needs ${MIN_REVIEWS_PER_SIDE} accepted and ${MIN_REVIEWS_PER_SIDE} rejected detections (has ${positives} and ${negatives})`;
}

/** Score as a logit, clipped to scores 0.001–0.999 (so a score rounded to 4 decimals in an export gives the same). */
const logit = (p: number) => { const q = Math.max(1e-3, Math.min(1 - 1e-3, p)); return Math.log(q / (1 - q)); };
/**
 * Smallest spread a feature is standardised by: the log box sizes 0.05 (sizes that differ by
 * less than ~5 % are measurement noise, not a signal), the model's features 1e-3.
 */
const minStd = (j: number) => (j < 2 ? 0.05 : 1e-3);

/** The raw feature row of detection i (log length, log width, then F model features), or null when its model features are missing (NaN). */
export function featureRow(t: DetectionTable, i: number, modelFeatureDim: number): number[] | null {
  const row = [Math.log(Math.max(0.05, t.lengthM[i])), Math.log(Math.max(0.05, t.widthM[i]))];
  if (modelFeatureDim > 0) {
    if (!t.features || t.featureDim !== modelFeatureDim) return null;
    for (let f = 0; f < modelFeatureDim; f++) {
      const v = t.features[i * modelFeatureDim + f];
      if (!Number.isFinite(v)) return null;
      row.push(v);
    }
  }
  return row;
}

function precisionRecall(pred: boolean[], truth: boolean[], missedExtra: number): GainAt {
  let tp = 0, fp = 0, pos = missedExtra;
  pred.forEach((p, i) => { if (truth[i]) pos++; if (p && truth[i]) tp++; else if (p) fp++; });
  return { precision: tp + fp > 0 ? tp / (tp + fp) : null, recall: pos > 0 ? tp / pos : null };
}

export interface TrainInput {
  table: DetectionTable;
  review: readonly ReviewState[];
  classes: readonly string[];
  model: string;
  /** Counting threshold the gain is reported at. */
  threshold: number;
  seed?: number;
}

/** Train the scorer from the reviewed rows of one table ('added' rows count only as misses). */
export function trainScorer(input: TrainInput): ScorerJson {
  const t = input.table;
  const F = t.features && t.featureDim ? t.featureDim : 0;
  const perClass: ScorerJson['perClass'] = {};
  const gain: ScorerJson['gain'] = {};
  input.classes.forEach((cls, c) => {
    const rows: number[][] = [];
    const y: number[] = [];
    const scores: number[] = [];
    let added = 0;
    for (let i = 0; i < t.count; i++) {
      if (t.classIdx[i] !== c) continue;
      const r = input.review[i];
      if (r === 'added') { added++; continue; }
      if (r !== 'accepted' && r !== 'rejected') continue;
      const f = featureRow(t, i, F);
      if (!f) continue;
      rows.push(f); y.push(r === 'accepted' ? 1 : 0); scores.push(t.score[i]);
    }
    const pos = y.filter((v) => v).length, neg = y.length - pos;
    const truth = y.map((v) => v === 1);
    const before = precisionRecall(scores.map((s) => s >= input.threshold), truth, added);
    if (notAdaptedReason(pos, neg) !== null) {
      perClass[cls] = null;
      gain[cls] = { threshold: input.threshold, before, after: before, added };
      return;
    }
    const d = rows[0].length;
    const mean = new Array<number>(d).fill(0), std = new Array<number>(d).fill(0);
    for (const r of rows) r.forEach((v, j) => { mean[j] += v / rows.length; });
    for (const r of rows) r.forEach((v, j) => { std[j] += (v - mean[j]) ** 2 / rows.length; });
    for (let j = 0; j < d; j++) std[j] = Math.max(Math.sqrt(std[j]), minStd(j));
    const X = new Float64Array(rows.length * d);
    rows.forEach((r, i) => r.forEach((v, j) => { X[i * d + j] = (v - mean[j]) / std[j]; }));
    const k = Math.min(5, pos, neg);
    const fold = stratifiedFolds(y, k, mulberry32(input.seed ?? 1));
    // a correction to the detector's own logit (the offset): with few or unclear reviews the scores stay the detector's
    const offset = scores.map(logit);
    const mode = INTERCEPT;
    const { C } = chooseC(X, y, d, C_GRID, fold, k, offset, mode);
    const oof = crossValidatedProbabilities(X, y, d, C, fold, k, offset, mode);
    const m: LogisticModel = fitLogistic(X, y, d, C, { offset, intercept: mode });
    perClass[cls] = { coef: Array.from(m.coef), intercept: m.intercept, C, mean, std, positives: pos, negatives: neg };
    gain[cls] = { threshold: input.threshold, before, after: precisionRecall(Array.from(oof, (p) => p >= input.threshold), truth, added), added };
  });
  return { format: SCORER_FORMAT, model: input.model, classes: [...input.classes], modelFeatureDim: F, perClass, gain, createdIso: new Date().toISOString() };
}

/** Parse a scorer file; a sentence when it is not one. */
export function parseScorer(text: string): ScorerJson {
  let v: ScorerJson;
  try { v = JSON.parse(text) as ScorerJson; } catch { throw new Error('The scorer file is not JSON: give the file seamtally adapt or the page\'s "Export scorer" wrote.'); }
  if (v?.format !== SCORER_FORMAT || !Array.isArray(v.classes) || typeof v.perClass !== 'object') {
    throw new Error(`The scorer file is not a ${SCORER_FORMAT} file: give the file seamtally adapt or the page's "Export scorer" wrote.`);
  }
  return v;
}

/**
 * Adapted scores of every row (rows of classes without a scorer, and rows without model features where the scorer
 * uses them, keep the detector's score). Throws a sentence when the scorer belongs to another detector.
 */
export function applyScorer(s: ScorerJson, t: DetectionTable, classes: readonly string[], model: string): Float32Array {
  checkScorerModel(s, model);
  const out = Float32Array.from(t.score.subarray(0, t.count));
  const byIdx = classes.map((c) => {
    const cs = s.perClass[c];
    return cs ? { cs, m: { coef: Float64Array.from(cs.coef), intercept: cs.intercept, C: cs.C } } : null;
  });
  for (let i = 0; i < t.count; i++) {
    const k = byIdx[t.classIdx[i]];
    if (!k) continue;
    const f = featureRow(t, i, s.modelFeatureDim);
    if (!f) continue;
    const x = f.map((v, j) => (v - k.cs.mean[j]) / k.cs.std[j]);
    out[i] = predictLogistic(k.m, x, 0, logit(t.score[i]));
  }
  return out;
}

/** Throw a sentence when the scorer was adapted for another detector than `model` ("name version"). */
export function checkScorerModel(s: Pick<ScorerJson, 'model'>, model: string): void {
  if (s.model !== model) throw new Error(`This scorer was adapted for the detector "${s.model}", not "${model}": adapt one for this detector, or switch detector.`);
}

/**
 * Order for asking reviews: detections the current scorer (or, before one, the detector) is least sure of first —
 * probability nearest the threshold — spread over the scene by taking at most one per `cellM` square per round.
 */
export function uncertaintyOrder(t: DetectionTable, scores: ArrayLike<number>, threshold: number, rows: readonly number[], cellM = 50): number[] {
  const byDoubt = [...rows].sort((a, b) => Math.abs(scores[a] - threshold) - Math.abs(scores[b] - threshold) || a - b);
  const out: number[] = [];
  let rest = byDoubt;
  while (rest.length) {
    const seen = new Set<string>();
    const next: number[] = [];
    for (const i of rest) {
      const key = `${Math.floor(t.cxM[i] / cellM)},${Math.floor(t.cyM[i] / cellM)}`;
      if (seen.has(key)) next.push(i); else { seen.add(key); out.push(i); }
    }
    rest = next;
  }
  return out;
}
