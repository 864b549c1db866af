// The tally: per date and AOI × class, counts under the rule (core counts.ts) at the slider's score, with area,
// coverage (measured in the tally worker), GSD, the resolution caveat per class and the 95 % Garwood interval.
import type { AppState, AoiRecord, SceneEntry } from './state.ts';
import { scenesByDate } from './state.ts';
import { reviewedTable } from './date-table.ts';
import { countPerAoi, type CountAoi, type CountRow } from '../core/counts.ts';
import { reprojectAoi, type AoiInCrs } from '../core/aoi.ts';
import type { CoverageService } from './coverage-service.ts';
import { multiPolygonAreaM2 } from '../core/geodesic-area.ts';
import { parseEpsgName } from '../core/crs.ts';
import { garwoodInterval, type Interval } from '../core/poisson-stats.ts';
import type { ResolutionCaveat } from '../core/caveats.ts';
import { dateNotes, type DateNotes } from '../core/date-notes.ts';

export interface TallyRow extends CountRow { interval: Interval; caveat: ResolutionCaveat | null }

export interface DateTally extends DateNotes {
  dateIso: string;
  gsdM: number;
  sceneNames: string[];
  rows: TallyRow[];
}

/** AOIs reprojected into a frame and their geodesic areas, kept per AOI record (records are replaced on edit). */
const frameCache = new WeakMap<AoiRecord, Map<number, { inFrame: AoiInCrs; areaM2: number }>>();

function countAoi(aoi: AoiRecord, frameEpsg: number, scenes: SceneEntry[], coverage: CoverageService): CountAoi {
  let m = frameCache.get(aoi);
  if (!m) { m = new Map(); frameCache.set(aoi, m); }
  let c = m.get(frameEpsg);
  if (!c) { c = { inFrame: reprojectAoi(aoi, frameEpsg), areaM2: multiPolygonAreaM2(aoi.polygonsLonLat) }; m.set(frameEpsg, c); }
  return { aoi: c.inFrame, areaM2: c.areaM2, coverage: coverage.get(aoi, c.inFrame, scenes) ?? NaN };
}

/** The whole tally for the current results, threshold, review and areas. */
export function computeTally(state: AppState, coverage: CoverageService): DateTally[] {
  const model = state.model;
  if (!model) return [];
  const byDate = new Map(scenesByDate(state).map((g) => [g.dateIso, g.scenes]));
  return state.results.map((d) => {
    const scenes = byDate.get(d.dateIso) ?? [];
    const gsdM = Math.max(...scenes.map((s) => s.info.georef.gsdM));
    const frameEpsg = parseEpsgName(d.table.frameCrs);
    const rt = reviewedTable(state, d);
    const aois = state.aois.map((a) => countAoi(a, frameEpsg, scenes, coverage));
    const counts = countPerAoi({ detections: rt.table, classes: model.sidecar.classes, review: rt.review, aois, date: d.dateIso, gsdM },
      { minScore: state.minScore });
    const notes = dateNotes(model.sidecar, gsdM, d.dateIso, scenes.map((s) => s.info.georef));
    const rows = counts.map((r) => ({ ...r, interval: garwoodInterval(r.count), caveat: notes.caveats.find((c) => c.className === r.className) ?? null }));
    return { dateIso: d.dateIso, gsdM, sceneNames: scenes.map((s) => s.name), rows, ...notes };
  });
}
