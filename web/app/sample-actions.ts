// Checked samples on the page: draw one for an AOI and date (core/check-sample.ts on the detector's counts at the
// threshold in force), find the detections of a cell, mark a cell checked or not, discard a sample. Kept in
// IndexedDB with the rest of the work; the tally turns the checked cells into an estimate (core/sample-estimate.ts).
import type { AppState, DateDetections, SampleRecord } from './state.ts';
import { aoiSignature, sampleKey } from './state.ts';
import { reviewedTable } from './date-table.ts';
import { setReview } from './review-actions.ts';
import { designSample, cellIdAt, type CountedPoint } from '../core/check-sample.ts';
import type { AoiInCrs } from '../core/aoi.ts';
import { aoiInFrameOf } from './tally.ts';
import { parseEpsgName } from '../core/crs.ts';
import { prepareMultiPolygon } from '../core/point-in-polygon.ts';
import { toErrorInfo } from '../core/errors.ts';

function fail(state: AppState, err: unknown): void {
  state.events.emit('notice', { level: 'error', text: toErrorInfo(err).message });
}

async function keep(state: AppState, rec: SampleRecord): Promise<void> {
  state.samples = [...state.samples.filter((s) => s.key !== rec.key), rec];
  state.events.emit('samples-changed');
  try { await state.store?.putSample(rec); } catch (err) { fail(state, err); }
}

/** The AOI in the date's metric frame (the tally's cached reprojection). */
export function aoiInFrame(state: AppState, aoiId: string, d: DateDetections): AoiInCrs | null {
  const aoi = state.aois.find((a) => a.id === aoiId);
  return aoi ? aoiInFrameOf(aoi, parseEpsgName(d.table.frameCrs)) : null;
}

/** A random seed, recorded with the sample so that it can be drawn again. */
export function newSeed(): number {
  return crypto.getRandomValues(new Uint32Array(1))[0] % 1_000_000_000;
}

/** Draw (or draw again) the sample of an AOI on a date from the detector's counts at the threshold in force. */
export async function drawSample(state: AppState, aoiId: string, dateIso: string, seed: number): Promise<SampleRecord | null> {
  const d = state.results.find((r) => r.dateIso === dateIso);
  const aoi = state.aois.find((a) => a.id === aoiId);
  const classCount = state.model?.sidecar.classes.length ?? 0;
  if (!d || !aoi || classCount === 0) return null;
  const inFrame = aoiInFrame(state, aoiId, d)!;
  const t = d.table;
  const points: CountedPoint[] = [];
  for (let i = 0; i < t.count; i++) if (t.score[i] >= state.minScore) points.push({ xM: t.cxM[i], yM: t.cyM[i], classIdx: t.classIdx[i] });
  const design = designSample(inFrame.polygons, points, { seed, classCount });
  const rec: SampleRecord = { key: sampleKey(aoiId, dateIso), aoiId, dateIso, frameCrs: t.frameCrs, aoiSignature: aoiSignature(aoi),
    drawnAtScore: state.minScore, design, checked: [], createdMs: Date.now() };
  await keep(state, rec);
  return rec;
}

export async function discardSample(state: AppState, key: string): Promise<void> {
  state.samples = state.samples.filter((s) => s.key !== key);
  state.events.emit('samples-changed');
  try { await state.store?.deleteSample(key); } catch (err) { fail(state, err); }
}

/** Rows of the date's reviewed table whose centre lies in the cell (half-open) and in the AOI: the cell's objects. */
export function rowsInCell(state: AppState, rec: SampleRecord, cellId: string): number[] {
  const d = state.results.find((r) => r.dateIso === rec.dateIso);
  const inFrame = d ? aoiInFrame(state, rec.aoiId, d) : null;
  if (!d || !inFrame) return [];
  const rt = reviewedTable(state, d);
  const aoi = prepareMultiPolygon(inFrame.polygons);
  const rows: number[] = [];
  for (let i = 0; i < rt.table.count; i++) {
    if (cellIdAt(rec.design, rt.table.cxM[i], rt.table.cyM[i]) === cellId && aoi.contains(rt.table.cxM[i], rt.table.cyM[i])) rows.push(i);
  }
  return rows;
}

/**
 * Mark a cell checked: the detections in it at or above the threshold that the analyst has neither accepted nor
 * rejected count as correct (they were looked at), so they are accepted; then the cell joins the checked ones.
 */
export async function markCellChecked(state: AppState, key: string, cellId: string): Promise<void> {
  const rec = state.samples.find((s) => s.key === key);
  if (!rec || rec.checked.includes(cellId)) return;
  const d = state.results.find((r) => r.dateIso === rec.dateIso);
  if (d) {
    const rt = reviewedTable(state, d);
    const pending = rowsInCell(state, rec, cellId).filter((i) => i < rt.detectorRows && rt.review[i] === 'unreviewed' && rt.table.score[i] >= state.minScore);
    for (const i of pending) await setReview(state, rec.dateIso, i, 'accepted');
  }
  await keep(state, { ...rec, checked: [...rec.checked, cellId] });
}

export async function unmarkCellChecked(state: AppState, key: string, cellId: string): Promise<void> {
  const rec = state.samples.find((s) => s.key === key);
  if (!rec || !rec.checked.includes(cellId)) return;
  await keep(state, { ...rec, checked: rec.checked.filter((c) => c !== cellId) });
}
