// Review decisions: accept / reject / reset a detection, add a missed object as a drawn box, remove an added box.
import type { AppState, AddedBox } from './state.ts';
import { reviewKey } from './state.ts';
import type { ReviewState } from '../core/types.ts';
import { toErrorInfo } from '../core/errors.ts';
import { detectionKey } from './detection-keys.ts';

function fail(state: AppState, err: unknown): void {
  state.events.emit('notice', { level: 'error', text: toErrorInfo(err).message });
}

/** Set the review state of detector row `row` of `dateIso` (rows of added boxes are handled by removeAdded). */
export async function setReview(state: AppState, dateIso: string, row: number, review: ReviewState): Promise<void> {
  const d = state.results.find((r) => r.dateIso === dateIso);
  if (!d || row >= d.table.count) return;
  const key = reviewKey(dateIso, detectionKey(d.table, row));
  if (review === 'unreviewed') state.review.delete(key); else state.review.set(key, review);
  state.reviewVersion++;
  try { await state.store?.putReview({ key, state: review }); } catch (err) { fail(state, err); }
  state.events.emit('review-changed');
}

/** Add a missed object: a drawn box (closed lon/lat ring of 4 corners) of class `classIdx` on `dateIso`. */
export async function addBox(state: AppState, dateIso: string, classIdx: number, ringLonLat: Array<[number, number]>): Promise<void> {
  const corners = ringLonLat.slice(0, 4);
  const centre: [number, number] = [corners.reduce((s, p) => s + p[0], 0) / 4, corners.reduce((s, p) => s + p[1], 0) / 4];
  const box: AddedBox = { id: `add-${Date.now().toString(36)}-${Math.floor(Math.random() * 1e6).toString(36)}`, dateIso, classIdx, ringLonLat: [...corners, corners[0]], centreLonLat: centre };
  state.added = [...state.added, box];
  state.reviewVersion++;
  try { await state.store?.putAdded(box); } catch (err) { fail(state, err); }
  state.events.emit('review-changed');
}

export async function removeAdded(state: AppState, id: string): Promise<void> {
  state.added = state.added.filter((a) => a.id !== id);
  state.reviewVersion++;
  await state.store?.deleteAdded(id);
  state.events.emit('review-changed');
}
