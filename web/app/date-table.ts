// One date's detections as counted and exported: merged detector rows plus boxes the analyst added, with review states.
import type { AppState, DateDetections, AddedBox } from './state.ts';
import { reviewKey } from './state.ts';
import { createDetectionTable, type DetectionTable, type ReviewState } from '../core/types.ts';
import { concatDetectionTables } from '../core/seam-merge.ts';
import { createTransform, parseEpsgName } from '../core/crs.ts';
import { detectionKey } from './detection-keys.ts';
import { boxFromCorners } from '../core/box-mapping.ts';

export interface ReviewedTable {
  dateIso: string;
  table: DetectionTable;
  review: ReviewState[];
  /** Rows ≥ detector rows are added boxes; their AddedBox ids. */
  detectorRows: number;
  addedIds: string[];
}

/** Added boxes of one date converted into the date's metric frame (sceneIdx 0, score 1). */
function addedTable(frameCrs: string, boxes: AddedBox[]): DetectionTable {
  const t = createDetectionTable(frameCrs, boxes.length);
  const fwd = createTransform(4326, parseEpsgName(frameCrs));
  boxes.forEach((b, i) => {
    const c = fwd(b.centreLonLat);
    const box = boxFromCorners(b.ringLonLat.slice(0, 4).map((q) => fwd(q)));
    t.cxM[i] = c[0]; t.cyM[i] = c[1];
    t.lengthM[i] = box.lengthM; t.widthM[i] = box.widthM; t.angleRad[i] = box.angleRad;
    t.score[i] = 1; t.classIdx[i] = b.classIdx; t.sceneIdx[i] = 0;
  });
  t.count = boxes.length;
  return t;
}

const memo = new WeakMap<DateDetections, { version: number; rt: ReviewedTable }>();

/** The counted table of `d` under the state's review decisions and added boxes (memoised per review version). */
export function reviewedTable(state: AppState, d: DateDetections): ReviewedTable {
  const hit = memo.get(d);
  if (hit && hit.version === state.reviewVersion) return hit.rt;
  const rt = buildReviewedTable(state, d);
  memo.set(d, { version: state.reviewVersion, rt });
  return rt;
}

function buildReviewedTable(state: AppState, d: DateDetections): ReviewedTable {
  const added = state.added.filter((a) => a.dateIso === d.dateIso);
  const base = d.table;
  const table = added.length ? concatDetectionTables([base, addedTable(base.frameCrs, added)]) : base;
  const review: ReviewState[] = new Array<ReviewState>(table.count).fill('unreviewed');
  if (state.review.size > 0) {
    for (let i = 0; i < base.count; i++) review[i] = state.review.get(reviewKey(d.dateIso, detectionKey(base, i))) ?? 'unreviewed';
  }
  for (let i = base.count; i < table.count; i++) review[i] = 'added';
  return { dateIso: d.dateIso, table, review, detectorRows: base.count, addedIds: added.map((a) => a.id) };
}
