// The page's tally: per date, the core tally (core/tally.ts, the same function `seamtally detect` uses) of the reviewed
// detections at the slider's threshold, with AOI areas and coverage (measured in the tally worker) filled in here,
// and each AOI's checked sample on the date (its estimate comes from the core tally too).
import type { AppState, AoiRecord, SceneEntry } from './state.ts';
import { isDateConfirmed, liveSample, scenesByDate } from './state.ts';
import { reviewedTable } from './date-table.ts';
import type { CountAoi } from '../core/counts.ts';
import { reprojectAoi, type AoiInCrs } from '../core/aoi.ts';
import type { CoverageService } from './coverage-service.ts';
import { multiPolygonAreaM2 } from '../core/geodesic-area.ts';
import { parseEpsgName } from '../core/crs.ts';
import { tallyDate, type DateTally, type TallyRow } from '../core/tally.ts';

export type { DateTally, TallyRow };
/** AOIs reprojected into a frame and their geodesic areas, kept per AOI record (records are replaced on edit). */
const frameCache = new WeakMap<AoiRecord, Map<number, { inFrame: AoiInCrs; areaM2: number }>>();

function framed(aoi: AoiRecord, frameEpsg: number): { inFrame: AoiInCrs; areaM2: number } {
  let m = frameCache.get(aoi);
  if (!m) { m = new Map(); frameCache.set(aoi, m); }
  let c = m.get(frameEpsg);
  if (!c) { c = { inFrame: reprojectAoi(aoi, frameEpsg), areaM2: multiPolygonAreaM2(aoi.polygonsLonLat) }; m.set(frameEpsg, c); }
  return c;
}

/** An AOI in a metric frame (cached per AOI record and frame; the tally, the samples and the map share it). */
export function aoiInFrameOf(aoi: AoiRecord, frameEpsg: number): AoiInCrs {
  return framed(aoi, frameEpsg).inFrame;
}

function countAoi(aoi: AoiRecord, frameEpsg: number, scenes: SceneEntry[], coverage: CoverageService): CountAoi {
  const c = framed(aoi, frameEpsg);
  return { aoi: c.inFrame, areaM2: c.areaM2, coverage: coverage.get(aoi, c.inFrame, scenes) ?? NaN };
}

/** The whole tally for the current results, threshold, review and areas. */
export function computeTally(state: AppState, coverage: CoverageService): DateTally[] {
  const model = state.model;
  if (!model) return [];
  const byDate = new Map(scenesByDate(state).map((g) => [g.dateIso, g.scenes]));
  return state.results.map((d) => {
    const scenes = byDate.get(d.dateIso) ?? [];
    const frameEpsg = parseEpsgName(d.table.frameCrs);
    const rt = reviewedTable(state, d);
    const aois = state.aois.map((a) => countAoi(a, frameEpsg, scenes, coverage));
    const samples = state.aois.flatMap((a) => {
      const s = liveSample(state, a.id, d.dateIso, d.table.frameCrs);
      return s ? [{ aoiId: a.id, design: s.design, checked: s.checked }] : [];
    });
    return tallyDate({ detections: rt.table, review: rt.review, aois, dateIso: d.dateIso, scenes: scenes.map((s) => ({ name: s.name, georef: s.info.georef })), sidecar: model.sidecar, dateConfirmed: scenes.every(isDateConfirmed), samples }, state.minScore);
  });
}
