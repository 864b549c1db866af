// One date's tally, the same for every caller (the page's tally worker view, `seamtally detect`, the exports and the
// report): per AOI × class the count under the rule (counts.ts) with its 95 % Poisson interval (Garwood), the
// resolution caveat of its class, and the date's notes (caveats, upsampling, noon sun, low sun; date-notes.ts).
import { countPerAoi, type CountAoi, type CountRow } from './counts.ts';
import type { ResolutionCaveat } from './caveats.ts';
import { dateNotes, type DateNotes } from './date-notes.ts';
import type { SceneGeoref } from './georef.ts';
import type { ModelSidecar } from './model-contract.ts';
import { garwoodInterval, type Interval } from './poisson-stats.ts';
import type { DetectionTable, ReviewState } from './types.ts';

export interface TallyRow extends CountRow {
  /** 95 % exact Poisson interval of the count (Garwood): counting noise only, not the detector's error. */
  interval: Interval;
  caveat: ResolutionCaveat | null;
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
}

/** The tally of one date at the counting threshold `minScore`. */
export function tallyDate(input: TallyInput, minScore: number): DateTally {
  const gsdM = Math.max(...input.scenes.map((s) => s.georef.gsdM));
  const counts = countPerAoi({ detections: input.detections, classes: input.sidecar.classes, review: input.review, aois: input.aois, date: input.dateIso, gsdM }, { minScore });
  const dateConfirmed = input.dateConfirmed ?? true;
  const notes = dateNotes(input.sidecar, gsdM, input.dateIso, input.scenes.map((s) => s.georef));
  if (!dateConfirmed) { notes.noonSunDeg = null; notes.lowSun = []; }
  const rows = counts.map((r) => ({ ...r, interval: garwoodInterval(r.count), caveat: notes.caveats.find((c) => c.className === r.className) ?? null }));
  return { dateIso: input.dateIso, dateConfirmed, gsdM, sceneNames: input.scenes.map((s) => s.name), rows, ...notes };
}
