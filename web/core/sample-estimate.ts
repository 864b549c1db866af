// From a sample design (check-sample.ts) and the cells a person has checked, the estimated true count of every class
// in one AOI and date (stratified-estimate.ts). Used by the tally (the page: truths from review decisions) and by
// `seamtally estimate` (truths from a checked cells file), so both get the same numbers from the same cells.
//
// What each cell holds: `detected`, the detector's count at the counting threshold (review ignored, added boxes not
// included), known for every cell; for checked cells `truth`, the real objects (accepted detections of any score and
// objects added by hand), and `truePositives`, accepted detections at or above the threshold. Strata are fixed when
// the sample is drawn; the detected counts are those of the threshold in force, so a changed threshold changes the
// detector count and the correction together and the estimate stays design-unbiased.
import { cellIdAt, type SampleDesign } from './check-sample.ts';
import { prepareMultiPolygon, type MultiPolygonRings } from './point-in-polygon.ts';
import { stratifiedEstimate, tQuantile, type CheckedCell, type StratifiedEstimate } from './stratified-estimate.ts';
import type { DetectionTable, ReviewState } from './types.ts';

/** Per-class figures of one cell; `truth` and `truePositives` only for checked cells. */
export interface CellTally {
  detected: number[];
  truth?: number[];
  /** Null when only true counts are known (a checked cells file without accepted counts). */
  truePositives?: number[] | null;
}

/** Where a sample stands for one AOI and date (shown until there is an estimate, and beside it). */
export interface SampleProgress {
  seed: number;
  cellsInSample: number;
  cellsChecked: number;
  /** Every stratum has the 2 checked cells an interval needs. */
  ready: boolean;
}

/** Detector counts of every design cell and, for the checked ones, truths from review decisions. */
export function cellTalliesFromReview(
  design: Pick<SampleDesign, 'cells' | 'cellSizeM' | 'originXM' | 'originYM'>,
  aoiPolygons: MultiPolygonRings,
  table: DetectionTable,
  review: readonly ReviewState[] | undefined,
  checked: ReadonlySet<string>,
  classCount: number,
  minScore: number,
): Map<string, CellTally> {
  const out = new Map<string, CellTally>();
  for (const c of design.cells) {
    const t: CellTally = { detected: new Array<number>(classCount).fill(0) };
    if (checked.has(c.id)) { t.truth = new Array<number>(classCount).fill(0); t.truePositives = new Array<number>(classCount).fill(0); }
    out.set(c.id, t);
  }
  const aoi = prepareMultiPolygon(aoiPolygons);
  for (let i = 0; i < table.count; i++) {
    const cell = out.get(cellIdAt(design, table.cxM[i], table.cyM[i]));
    if (!cell || !aoi.contains(table.cxM[i], table.cyM[i])) continue;
    const k = table.classIdx[i];
    if (k >= classCount) continue;
    const state = review?.[i] ?? 'unreviewed';
    const above = table.score[i] >= minScore;
    if (state !== 'added' && above) cell.detected[k]++;
    if (cell.truth) {
      if (state === 'added' || state === 'accepted') cell.truth[k]++;
      if (state === 'accepted' && above) cell.truePositives![k]++;
    }
  }
  return out;
}

/** How far the sample is checked. */
export function sampleProgress(design: Pick<SampleDesign, 'cells' | 'strata' | 'sample' | 'seed'>, checked: ReadonlySet<string>): SampleProgress {
  const inSample = design.sample.filter((id) => checked.has(id));
  const stratumOf = new Map(design.cells.map((c) => [c.id, c.stratum]));
  const perStratum = design.strata.map((_, h) => inSample.filter((id) => stratumOf.get(id) === h).length);
  const populated = design.strata.map((_, h) => design.cells.some((c) => c.stratum === h));
  return { seed: design.seed, cellsInSample: design.sample.length, cellsChecked: inSample.length, ready: perStratum.every((n, h) => !populated[h] || n >= 2) };
}

/**
 * The estimate of every class (index = class) from the design and the cells' tallies, or null for all when a
 * stratum has fewer than 2 checked cells. Only cells of the drawn sample count as checked.
 */
export function estimatesForDesign(design: Pick<SampleDesign, 'cells' | 'strata' | 'sample'>, tallies: ReadonlyMap<string, CellTally>, classCount: number): (StratifiedEstimate | null)[] {
  const inSample = new Set(design.sample);
  const checkedCells = design.cells.filter((c) => inSample.has(c.id) && tallies.get(c.id)?.truth);
  return Array.from({ length: classCount }, (_, k) => {
    const strata = design.strata.map((_, h) => {
      const cs = design.cells.filter((c) => c.stratum === h);
      return { cells: cs.length, detected: cs.reduce((a, c) => a + (tallies.get(c.id)?.detected[k] ?? 0), 0) };
    });
    const withTp = checkedCells.every((c) => tallies.get(c.id)!.truePositives);
    const cells: CheckedCell[] = checkedCells.map((c) => {
      const t = tallies.get(c.id)!;
      return { stratum: c.stratum, detected: t.detected[k], truth: t.truth![k], truePositives: t.truePositives ? t.truePositives[k] : Math.min(t.truth![k], t.detected[k]) };
    });
    let est: StratifiedEstimate;
    try { est = stratifiedEstimate(strata, cells); } catch { return null; }
    // without accepted counts, precision and recall cannot be told apart from the counts alone
    if (!withTp) { est.precision = null; est.recall = null; }
    return est;
  });
}

/** The change between two dates' estimates (independent samples). */
export interface EstimateChange {
  change: number;
  se: number;
  /** 95 % interval: t on Welch–Satterthwaite degrees of freedom (Satterthwaite 1946). */
  ci95: [number, number];
  df: number;
}

export function estimateChange(before: StratifiedEstimate, after: StratifiedEstimate): EstimateChange {
  const vb = before.se ** 2, va = after.se ** 2;
  const se = Math.sqrt(vb + va);
  // with no spread in either sample the interval is a point (df is then irrelevant)
  const df = se > 0 ? (vb + va) ** 2 / ((vb > 0 ? vb ** 2 / before.df : 0) + (va > 0 ? va ** 2 / after.df : 0)) : Math.min(before.df, after.df);
  const half = se > 0 ? tQuantile(0.05, df) * se : 0;
  const change = after.count - before.count;
  return { change, se, ci95: [change - half, change + half], df };
}
