// Comparing dates: per AOI and class, two dates' counts, change, % change, the exact conditional test with the
// imaged areas as exposure, why a comparison is weak (GSD, coverage or recall differ), and, where both dates have a
// checked sample, the change of the estimated true counts with its interval (core/sample-estimate.ts).
import type { DateTally, TallyRow } from './tally.ts';
import { comparePoissonCounts, type PoissonComparison } from '../core/poisson-stats.ts';
import type { LowSunEffect } from '../core/model-contract.ts';
import { sunDiffers } from '../core/sun-height.ts';
import { estimateChange, type EstimateChange } from '../core/sample-estimate.ts';

/** Relative GSD difference above which a comparison is flagged (common practice, no source). */
const GSD_RATIO_LIMIT = 1.25;
/** Coverage difference (fraction) above which a comparison is flagged (common practice, no source). */
const COVERAGE_DIFF_LIMIT = 0.1;
/** Recall difference above which a comparison is flagged (common practice, no source). */
const RECALL_DIFF_LIMIT = 0.05;

export interface Comparison {
  aoiName: string;
  className: string;
  before: TallyRow;
  after: TallyRow;
  change: number;
  changePct: number | null;
  test: PoissonComparison | null;
  weakReasons: string[];
  /** The change of the estimated true counts when both dates have a checked sample (else null). */
  estimated: EstimateChange | null;
  /** What the comparison rests on: both dates' estimates, or the detector counts alone. */
  basis: 'estimates' | 'detector counts';
}

/** Compare every AOI × class between the tallies of two dates (lowSun: the model's measured low-sun effect). */
export function compareDates(a: DateTally, b: DateTally, lowSun?: LowSunEffect): Comparison[] {
  const out: Comparison[] = [];
  for (const before of a.rows) {
    const after = b.rows.find((r) => r.aoiId === before.aoiId && r.className === before.className);
    if (!after) continue;
    const change = after.count - before.count;
    const weakReasons: string[] = [];
    const ratio = Math.max(before.gsdM, after.gsdM) / Math.min(before.gsdM, after.gsdM);
    if (ratio > GSD_RATIO_LIMIT) weakReasons.push(`GSD differs (${before.gsdM.toFixed(2)} vs ${after.gsdM.toFixed(2)} m)`);
    if (Math.abs(before.coverage - after.coverage) > COVERAGE_DIFF_LIMIT) {
      weakReasons.push(`imaged share differs (${Math.round(before.coverage * 100)} vs ${Math.round(after.coverage * 100)} %)`);
    }
    const ra = before.caveat?.recallAtGsd ?? null, rb = after.caveat?.recallAtGsd ?? null;
    if (ra !== null && rb !== null && Math.abs(ra - rb) > RECALL_DIFF_LIMIT) {
      weakReasons.push(`model recall differs (${Math.round(ra * 100)} vs ${Math.round(rb * 100)} %)`);
    } else if ((ra === null) !== (rb === null) || before.caveat?.level !== after.caveat?.level) {
      weakReasons.push('resolution caveats differ');
    }
    if (sunDiffers(a.noonSunDeg, b.noonSunDeg, lowSun, before.className)) {
      const bias = lowSun!.countBiasPct[before.className];
      weakReasons.push(`sun height differs (at most ${Math.round(a.noonSunDeg!)}° vs ${Math.round(b.noonSunDeg!)}° at noon): under a sun below ${lowSun!.belowDeg}° the detector's ${before.className} counts ran ${bias > 0 ? '+' : '−'}${Math.abs(bias).toFixed(0)} % apart from a high sun's on test scenes`);
    }
    const test = before.imagedAreaHa > 0 && after.imagedAreaHa > 0
      ? comparePoissonCounts(after.count, after.imagedAreaHa, before.count, before.imagedAreaHa) : null;
    const pending = Number.isNaN(before.coverage) || Number.isNaN(after.coverage);
    if (!test) weakReasons.push(pending ? 'imaged share still being measured' : 'the area was not imaged on one date');
    const estimated = before.estimate && after.estimate ? estimateChange(before.estimate, after.estimate) : null;
    out.push({ aoiName: before.aoiName, className: before.className, before, after, change,
      changePct: before.count > 0 ? (100 * change) / before.count : null, test, weakReasons,
      estimated, basis: estimated ? 'estimates' : 'detector counts' });
  }
  return out;
}
