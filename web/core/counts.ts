// Per-AOI, per-class counts under the counting rule, with review states, area, density and coverage.
import { parseEpsgName } from './crs.ts';
import { M2_PER_HA } from './geodesic-area.ts';
import { COUNTING_RULE, prepareMultiPolygon } from './point-in-polygon.ts';
import type { AoiInCrs } from './aoi.ts';
import type { DetectionTable, ReviewState } from './types.ts';
import { DEFAULT_MIN_SCORE } from './model-contract.ts';
import type { StratifiedEstimate } from './stratified-estimate.ts';

/** One AOI as the counter needs it: rings in the detections' metric frame, plus figures measured elsewhere. */
export interface CountAoi {
  aoi: AoiInCrs;
  /** Geodesic area of the AOI (geodesic-area.ts), m². */
  areaM2: number;
  /** Imaged fraction of the AOI for this date (coverage.ts), 0..1. */
  coverage: number;
}

export interface CountsInput {
  detections: DetectionTable;
  /** Class names indexed by `classIdx`. */
  classes: readonly string[];
  /** Review state per table row (missing rows / no array = 'unreviewed'). */
  review?: readonly ReviewState[];
  aois: readonly CountAoi[];
  /** Acquisition date of the scenes these detections come from (YYYY-MM-DD). */
  date: string;
  /** GSD reported for this date's scenes, metres. */
  gsdM: number;
}

export interface CountsOptions {
  /** Minimum detector score for 'unreviewed' / 'accepted' detections (default 0.5). */
  minScore?: number;
}

export interface CountRow {
  aoiId: string;
  aoiName: string;
  date: string;
  className: string;
  /** Objects counted under the rule: 'added' always, 'rejected' never, others when score ≥ minScore. */
  count: number;
  /** What the detector alone says: detections (not 'added') with score ≥ minScore, review ignored. */
  detectedCount: number;
  /** How many of the AOI's detections of this class a person has reviewed (accepted, rejected or added). */
  reviewedCount: number;
  areaM2: number;
  areaHa: number;
  /** Imaged area (area × coverage), ha: the exposure for comparing dates. */
  imagedAreaHa: number;
  densityPerHa: number;
  coverage: number;
  gsdM: number;
  minScore: number;
  countingRule: string;
  /** Estimated true count from a checked sample of cells, when one was checked (stratified-estimate.ts). */
  estimate?: StratifiedEstimate;
}

/** True when one detection counts under the rule. */
export function countsUnderRule(score: number, review: ReviewState, minScore: number): boolean {
  if (review === 'rejected') return false;
  if (review === 'added') return true;
  return score >= minScore;
}

/** Rows for every AOI × class (classes in `classes` order, AOIs in input order). */
export function countPerAoi(input: CountsInput, options: CountsOptions = {}): CountRow[] {
  const minScore = options.minScore ?? DEFAULT_MIN_SCORE;
  const t = input.detections;
  const frameEpsg = parseEpsgName(t.frameCrs);
  const nClasses = input.classes.length;
  const rows: CountRow[] = [];
  for (const a of input.aois) {
    if (a.aoi.epsg !== frameEpsg) {
      throw new Error(`countPerAoi: AOI "${a.aoi.name}" is in EPSG:${a.aoi.epsg} but detections are in ${t.frameCrs}; reproject it first`);
    }
    const pip = prepareMultiPolygon(a.aoi.polygons);
    const count = new Array<number>(nClasses).fill(0);
    const detected = new Array<number>(nClasses).fill(0);
    const reviewed = new Array<number>(nClasses).fill(0);
    for (let i = 0; i < t.count; i++) {
      if (!pip.contains(t.cxM[i], t.cyM[i])) continue;
      const c = t.classIdx[i];
      if (c >= nClasses) throw new Error(`countPerAoi: detection ${i} has class index ${c} but only ${nClasses} classes are named`);
      const state = input.review?.[i] ?? 'unreviewed';
      if (countsUnderRule(t.score[i], state, minScore)) count[c]++;
      if (state !== 'added' && t.score[i] >= minScore) detected[c]++;
      if (state !== 'unreviewed') reviewed[c]++;
    }
    const areaHa = a.areaM2 / M2_PER_HA;
    for (let c = 0; c < nClasses; c++) {
      rows.push({
        aoiId: a.aoi.id,
        aoiName: a.aoi.name,
        date: input.date,
        className: input.classes[c],
        count: count[c],
        detectedCount: detected[c],
        reviewedCount: reviewed[c],
        areaM2: a.areaM2,
        areaHa,
        imagedAreaHa: areaHa * a.coverage,
        densityPerHa: areaHa > 0 ? count[c] / areaHa : 0,
        coverage: a.coverage,
        gsdM: input.gsdM,
        minScore,
        countingRule: COUNTING_RULE,
      });
    }
  }
  return rows;
}
