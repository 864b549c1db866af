// One date's tally, the same for every caller (the page's tally worker view, `seamtally detect`, the exports and the
// report): per AOI × class the count under the rule (counts.ts) with its 95 % Poisson interval (Garwood), the
// resolution caveat of its class, the date's notes (caveats, upsampling, noon sun, low sun; date-notes.ts) and, where
// the AOI has a checked sample, the estimated true count (sample-estimate.ts).
import { countPerAoi, type CountAoi, type CountRow } from './counts.ts';
import type { ResolutionCaveat } from './caveats.ts';
import { dateNotes, type DateNotes } from './date-notes.ts';
import type { SceneGeoref } from './georef.ts';
import type { ModelSidecar } from './model-contract.ts';
import { garwoodInterval, type Interval } from './poisson-stats.ts';
import type { DetectionTable, ReviewState } from './types.ts';
import type { SampleDesign } from './check-sample.ts';
import { cellTalliesFromReview, estimatesForDesign, sampleProgress, type SampleProgress } from './sample-estimate.ts';

export interface TallyRow extends CountRow {
  /** 95 % exact Poisson interval of the count (Garwood): counting noise only, not the detector's error. */
  interval: Interval;
  caveat: ResolutionCaveat | null;
  /** The AOI's checked sample on this date, when one was drawn (its estimate, once ready, is `estimate`). */
  sample: SampleProgress | null;
}

/** A checked sample of one AOI on the tallied date: the design and the ids of the cells checked so far. */
export interface TallySample {
  aoiId: string;
  design: SampleDesign;
  checked: readonly string[];
}

export interface DateTally extends DateNotes {
  dateIso: string;
  /** False while the date is an unconfirmed suggestion: noonSunDeg is null and lowSun empty, comparisons skip it. */
  dateConfirmed: boolean;
  /** The coarsest GSD among the date's scenes (the one the notes are for). */
  gsdM: number;
  sceneNames: string[];
  rows: TallyRow[];
}

export interface TallyInput {
  detections: DetectionTable;
  review?: readonly ReviewState[];
  aois: readonly CountAoi[];
  dateIso: string;
  scenes: readonly { name: string; georef: Pick<SceneGeoref, 'epsg' | 'geoTransform' | 'widthPx' | 'heightPx' | 'gsdM'> }[];
  sidecar: Pick<ModelSidecar, 'classes' | 'objects' | 'quality' | 'inputGsdM' | 'lowSun'>;
  /** False while the date is an unconfirmed suggestion: no sun notes for it (default true). */
  dateConfirmed?: boolean;
  /** Checked samples of this date's AOIs: truths come from the review decisions in their checked cells. */
  samples?: readonly TallySample[];
}

/** The tally of one date at the counting threshold `minScore`. */
export function tallyDate(input: TallyInput, minScore: number): DateTally {
  const gsdM = Math.max(...input.scenes.map((s) => s.georef.gsdM));
  const counts = countPerAoi({ detections: input.detections, classes: input.sidecar.classes, review: input.review, aois: input.aois, date: input.dateIso, gsdM }, { minScore });
  const dateConfirmed = input.dateConfirmed ?? true;
  const notes = dateNotes(input.sidecar, gsdM, input.dateIso, input.scenes.map((s) => s.georef));
  if (!dateConfirmed) { notes.noonSunDeg = null; notes.lowSun = []; }
  const nClasses = input.sidecar.classes.length;
  const perAoi = new Map<string, { progress: SampleProgress; estimates: ReturnType<typeof estimatesForDesign> }>();
  for (const s of input.samples ?? []) {
    const aoi = input.aois.find((a) => a.aoi.id === s.aoiId);
    if (!aoi) continue;
    const checked = new Set(s.checked);
    const progress = sampleProgress(s.design, checked);
    const tallies = cellTalliesFromReview(s.design, aoi.aoi.polygons, input.detections, input.review, checked, nClasses, minScore);
    perAoi.set(s.aoiId, { progress, estimates: progress.ready ? estimatesForDesign(s.design, tallies, nClasses) : new Array(nClasses).fill(null) });
  }
  const rows = counts.map((r) => {
    const s = perAoi.get(r.aoiId);
    const estimate = s?.estimates[input.sidecar.classes.indexOf(r.className)] ?? undefined;
    return { ...r, ...(estimate ? { estimate } : {}), interval: garwoodInterval(r.count), caveat: notes.caveats.find((c) => c.className === r.className) ?? null, sample: s?.progress ?? null };
  });
  return { dateIso: input.dateIso, dateConfirmed, gsdM, sceneNames: input.scenes.map((s) => s.name), rows, ...notes };
}
