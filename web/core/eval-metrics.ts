// Detection quality metrics: PASCAL VOC matching of detections to truth, precision/recall, AP (all-point), count error.
import { rotatedIoUFlat } from './oriented-box.ts';

/**
 * Definitions (PASCAL VOC 2010+ development kit, Everingham et al., "The PASCAL Visual Object Classes (VOC)
 * Challenge", IJCV 88, 2010, and the VOC2012 devkit `VOCevaldet` / `VOCap`):
 * - Detections of one class from all scenes are taken in order of decreasing score. Each is compared with the truth
 *   objects of its own scene and class; the one with the highest IoU is its candidate. IoU ≥ threshold (0.5) and the
 *   candidate not yet taken → true positive (the candidate is taken); already taken → false positive (duplicate);
 *   IoU below threshold → false positive. A candidate marked `difficult` makes the detection neither (ignored).
 * - Recall = TP / P with P the number of non-difficult truth objects; precision = TP / (TP + FP), cumulative.
 * - AP, all-point interpolation: precision is made monotone (p(r) = max precision at recall ≥ r), then
 *   AP = Σ (r[i+1] − r[i]) · p(r[i+1]) over the points where recall changes, with sentinels r = 0 and r = 1.
 * Boxes are oriented rectangles in one metric frame per scene; IoU is the rotated-rectangle IoU.
 */

export interface EvalBox {
  /** Scenes are evaluated separately: detections only match truth with the same sceneIdx. */
  sceneIdx: number;
  classIdx: number;
  cxM: number;
  cyM: number;
  lengthM: number;
  widthM: number;
  angleRad: number;
}
export interface EvalTruth extends EvalBox {
  /** VOC "difficult": e.g. mostly hidden; matching it is neither a hit nor a false alarm, missing it costs nothing. */
  difficult?: boolean;
}
export interface EvalDetection extends EvalBox { score: number }

export interface MatchOptions {
  /** IoU needed for a match. Default 0.5 (VOC). */
  iouThreshold?: number;
}

/** Per-detection outcome, in the order of decreasing score. */
export interface VocMatch {
  /** Indices into the detections array, by decreasing score (ties keep input order). */
  order: Int32Array;
  /** 1 = true positive, 0 = false positive, -1 = ignored (matched a difficult object); aligned with `order`. */
  outcome: Int8Array;
  /** Truth index taken by each detection (aligned with `order`), -1 if none. */
  matchedTruth: Int32Array;
  /** Number of non-difficult truth objects of the class. */
  positives: number;
}

/** VOC matching for one class (other classes in the inputs are skipped). */
export function matchVoc(dets: readonly EvalDetection[], truths: readonly EvalTruth[], classIdx: number, opts: MatchOptions = {}): VocMatch {
  const thr = opts.iouThreshold ?? 0.5;
  const byScene = new Map<number, number[]>();
  let positives = 0;
  truths.forEach((t, i) => {
    if (t.classIdx !== classIdx) return;
    if (!t.difficult) positives++;
    const list = byScene.get(t.sceneIdx);
    if (list) list.push(i); else byScene.set(t.sceneIdx, [i]);
  });
  const idx: number[] = [];
  dets.forEach((d, i) => { if (d.classIdx === classIdx) idx.push(i); });
  idx.sort((a, b) => dets[b].score - dets[a].score || a - b);
  const taken = new Uint8Array(truths.length);
  const outcome = new Int8Array(idx.length);
  const matchedTruth = new Int32Array(idx.length).fill(-1);
  idx.forEach((di, k) => {
    const d = dets[di];
    let best = -1;
    let bestIoU = -Infinity;
    for (const ti of byScene.get(d.sceneIdx) ?? []) {
      const t = truths[ti];
      const iou = rotatedIoUFlat(d.cxM, d.cyM, d.lengthM, d.widthM, d.angleRad, t.cxM, t.cyM, t.lengthM, t.widthM, t.angleRad);
      if (iou > bestIoU) { bestIoU = iou; best = ti; }
    }
    if (best >= 0 && bestIoU >= thr) {
      if (truths[best].difficult) outcome[k] = -1;
      else if (!taken[best]) { taken[best] = 1; outcome[k] = 1; matchedTruth[k] = best; }
      else outcome[k] = 0;
    } else outcome[k] = 0;
  });
  return { order: Int32Array.from(idx), outcome, matchedTruth, positives };
}

export interface PrCurve {
  /** Cumulative recall and precision after each counted (non-ignored) detection, by decreasing score. */
  recall: number[];
  precision: number[];
  /** Score of the detection at each curve point. */
  score: number[];
}

/** Cumulative precision/recall from a match (ignored detections are dropped, as in the VOC devkit). */
export function prCurve(match: VocMatch, dets: readonly EvalDetection[]): PrCurve {
  const recall: number[] = [];
  const precision: number[] = [];
  const score: number[] = [];
  let tp = 0;
  let fp = 0;
  for (let k = 0; k < match.order.length; k++) {
    const o = match.outcome[k];
    if (o < 0) continue;
    if (o === 1) tp++; else fp++;
    recall.push(match.positives > 0 ? tp / match.positives : 0);
    precision.push(tp / (tp + fp));
    score.push(dets[match.order[k]].score);
  }
  return { recall, precision, score };
}

/** PASCAL VOC 2010+ all-point interpolated average precision of a precision/recall curve. */
export function vocAllPointAp(recall: readonly number[], precision: readonly number[]): number {
  if (recall.length !== precision.length) throw new Error(`recall has ${recall.length} points but precision ${precision.length}`);
  const mrec = [0, ...recall, 1];
  const mpre = [0, ...precision, 0];
  for (let i = mpre.length - 2; i >= 0; i--) mpre[i] = Math.max(mpre[i], mpre[i + 1]);
  let ap = 0;
  for (let i = 0; i < mrec.length - 1; i++) {
    if (mrec[i + 1] !== mrec[i]) ap += (mrec[i + 1] - mrec[i]) * mpre[i + 1];
  }
  return ap;
}

export interface ClassQuality {
  /** AP at the match IoU threshold over all scores (VOC all-point). */
  ap: number;
  /** At the operating threshold (score ≥ minScore): */
  precision: number;
  recall: number;
  tp: number;
  fp: number;
  /** Non-difficult truth objects missed at the operating threshold. */
  fn: number;
  positives: number;
}

/** AP over all scores, and precision/recall at score ≥ minScore, for one class. */
export function classQuality(dets: readonly EvalDetection[], truths: readonly EvalTruth[], classIdx: number,
  opts: MatchOptions & { minScore?: number } = {}): ClassQuality {
  const m = matchVoc(dets, truths, classIdx, opts);
  const c = prCurve(m, dets);
  const minScore = opts.minScore ?? 0;
  let tp = 0;
  let fp = 0;
  for (let k = 0; k < m.order.length; k++) {
    if (dets[m.order[k]].score < minScore || m.outcome[k] < 0) continue;
    if (m.outcome[k] === 1) tp++; else fp++;
  }
  return {
    ap: m.positives > 0 ? vocAllPointAp(c.recall, c.precision) : Number.NaN,
    precision: tp + fp > 0 ? tp / (tp + fp) : Number.NaN,
    recall: m.positives > 0 ? tp / m.positives : Number.NaN,
    tp, fp, fn: m.positives - tp, positives: m.positives,
  };
}

/** Signed relative count error (detected − true) / true; 0 when both are 0, ±Infinity when only truth is 0. */
export function relativeCountError(detectedCount: number, trueCount: number): number {
  if (trueCount === 0) return detectedCount === 0 ? 0 : Infinity;
  return (detectedCount - trueCount) / trueCount;
}
