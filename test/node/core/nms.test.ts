// NMS checked against the ONNX NonMaxSuppression operator: the spec's reference cases and onnxruntime-node's own op.
import { describe, it, expect, beforeAll } from 'vitest';
import * as ort from 'onnxruntime-node';
import { greedyNms, softNms, type NmsBoxColumns } from '../../../web/core/nms.ts';
import { nmsModelBytes } from './onnx-nms-model.ts';
import { rotatedIoU } from '../../../web/core/oriented-box.ts';
import { mulberry32 } from '../../helpers/mulberry32.ts';

/** ONNX corner boxes [y1, x1, y2, x2] (center_point_box = 0, either diagonal) → NMS columns, one class. */
function fromOnnxCorners(boxes: number[][], scores: number[], classIdx?: number[]): NmsBoxColumns {
  const n = boxes.length;
  const cols = {
    count: n, cxM: new Float64Array(n), cyM: new Float64Array(n), lengthM: new Float64Array(n), widthM: new Float64Array(n),
    angleRad: new Float64Array(n), score: Float64Array.from(scores), classIdx: Uint8Array.from(classIdx ?? boxes.map(() => 0)),
  };
  boxes.forEach(([y1, x1, y2, x2], i) => {
    cols.cxM[i] = (x1 + x2) / 2; cols.cyM[i] = (y1 + y2) / 2;
    cols.lengthM[i] = Math.abs(x2 - x1); cols.widthM[i] = Math.abs(y2 - y1);
  });
  return cols;
}

// Reference cases from the ONNX operator tests (onnx/backend/test/case/node/nonmaxsuppression.py), as listed in
// the ONNX Operators documentation for NonMaxSuppression.
const SIX_BOXES = [[0, 0, 1, 1], [0, 0.1, 1, 1.1], [0, -0.1, 1, 0.9], [0, 10, 1, 11], [0, 10.1, 1, 11.1], [0, 100, 1, 101]];
const SIX_SCORES = [0.9, 0.75, 0.6, 0.95, 0.5, 0.3];

describe('greedyNms vs the ONNX NonMaxSuppression reference cases', () => {
  it('suppress_by_IOU: selects 3, 0, 5 at IoU 0.5', () => {
    expect(Array.from(greedyNms(fromOnnxCorners(SIX_BOXES, SIX_SCORES), { iouThreshold: 0.5 }))).toEqual([3, 0, 5]);
  });
  it('suppress_by_IOU_and_scores: score threshold 0.4 selects 3, 0', () => {
    const keep = greedyNms(fromOnnxCorners(SIX_BOXES, SIX_SCORES), { iouThreshold: 0.5, scoreThreshold: 0.4 });
    expect(Array.from(keep)).toEqual([3, 0]);
  });
  it('flipped_coordinates: corners given in either diagonal order select 3, 0, 5', () => {
    const flipped = [[1, 1, 0, 0], [0, 0.1, 1, 1.1], [0, 0.9, 1, -0.1], [0, 10, 1, 11], [1, 10.1, 0, 11.1], [1, 101, 0, 100]];
    expect(Array.from(greedyNms(fromOnnxCorners(flipped, SIX_SCORES), { iouThreshold: 0.5 }))).toEqual([3, 0, 5]);
  });
  it('center_point_box format: the same boxes as centres select 3, 0, 5', () => {
    const centres = [[0.5, 0.5], [0.5, 0.6], [0.5, 0.4], [0.5, 10.5], [0.5, 10.6], [0.5, 100.5]];
    const cols = fromOnnxCorners(centres.map(([x, y]) => [y - 0.5, x - 0.5, y + 0.5, x + 0.5]), SIX_SCORES);
    expect(Array.from(greedyNms(cols, { iouThreshold: 0.5 }))).toEqual([3, 0, 5]);
  });
  it('identical_boxes: ten identical boxes select one (index 0)', () => {
    const boxes = Array.from({ length: 10 }, () => [0, 0, 1, 1]);
    expect(Array.from(greedyNms(fromOnnxCorners(boxes, boxes.map(() => 0.9)), { iouThreshold: 0.5 }))).toEqual([0]);
  });
  it('two_classes: each class is suppressed on its own (class-aware)', () => {
    const boxes = [...SIX_BOXES, ...SIX_BOXES];
    const cols = fromOnnxCorners(boxes, [...SIX_SCORES, ...SIX_SCORES], [0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 1, 1]);
    const keep = Array.from(greedyNms(cols, { iouThreshold: 0.5 }));
    // Equal scores across classes: smaller index first, so class 0's box wins each tie.
    expect(keep).toEqual([3, 9, 0, 6, 5, 11]);
    expect(Array.from(greedyNms(cols, { iouThreshold: 0.5, classAgnostic: true }))).toEqual([3, 0, 5]);
  });
});


describe('greedyNms vs onnxruntime-node NonMaxSuppression on random box sets', () => {
  let session: ort.InferenceSession;
  beforeAll(async () => { session = await ort.InferenceSession.create(nmsModelBytes()); });

  async function ortSelect(boxes: Float32Array, scores: Float32Array, iou: number, scoreThr: number): Promise<number[]> {
    const n = scores.length;
    const out = await session.run({
      boxes: new ort.Tensor('float32', boxes, [1, n, 4]),
      scores: new ort.Tensor('float32', scores, [1, 1, n]),
      max_output_boxes_per_class: new ort.Tensor('int64', BigInt64Array.from([BigInt(n)]), [1]),
      iou_threshold: new ort.Tensor('float32', Float32Array.from([iou]), [1]),
      score_threshold: new ort.Tensor('float32', Float32Array.from([scoreThr]), [1]),
    });
    const sel = out.selected_indices.data as BigInt64Array;
    const res: number[] = [];
    for (let k = 0; k < sel.length; k += 3) res.push(Number(sel[k + 2]));
    return res;
  }

  it('runs the reference six-box case through onnxruntime (harness check)', async () => {
    const got = await ortSelect(Float32Array.from(SIX_BOXES.flat()), Float32Array.from(SIX_SCORES), 0.5, 0);
    expect(got).toEqual([3, 0, 5]);
  });

  it('selects the same indices for 12 random sets of 300 boxes (fixed seed)', async () => {
    const rnd = mulberry32(20240611);
    let compared = 0;
    for (let trial = 0; trial < 12; trial++) {
      const n = 300;
      const boxes = new Float32Array(4 * n);
      const span = 10 + trial * 5;
      for (let i = 0; i < n; i++) {
        const x = rnd() * span, y = rnd() * span, w = 0.3 + rnd() * 4, h = 0.3 + rnd() * 4;
        // Random diagonal order, as the operator allows.
        const flip = rnd() < 0.3;
        boxes.set(flip ? [y + h, x + w, y, x] : [y, x, y + h, x + w], 4 * i);
      }
      // Distinct scores (a shuffled ladder) so the greedy order has no ties; float32 so both sides see the same values.
      const ladder = Array.from({ length: n }, (_, i) => Math.fround(0.05 + (0.9 * i) / n));
      for (let i = n - 1; i > 0; i--) { const j = Math.floor(rnd() * (i + 1)); [ladder[i], ladder[j]] = [ladder[j], ladder[i]]; }
      const scores = Float32Array.from(ladder);
      const iou = [0.3, 0.5, 0.7][trial % 3];
      const scoreThr = trial % 4 === 0 ? 0.4 : 0;
      const rows: number[][] = [];
      for (let i = 0; i < n; i++) rows.push(Array.from(boxes.subarray(4 * i, 4 * i + 4)));
      const mine = Array.from(greedyNms(fromOnnxCorners(rows, Array.from(scores)), { iouThreshold: iou, scoreThreshold: scoreThr }));
      const theirs = await ortSelect(boxes, scores, iou, scoreThr);
      expect(mine).toEqual(theirs);
      compared += theirs.length;
    }
    expect(compared).toBeGreaterThan(500);
  });
});

describe('softNms (Bodla et al. 2017)', () => {
  const cols = fromOnnxCorners(SIX_BOXES, SIX_SCORES);
  it('linear: decays overlapping scores by (1 − IoU) above N_t, keeps isolated ones', () => {
    const r = softNms(cols, { method: 'linear', iouThreshold: 0.5, scoreThreshold: 0.001 });
    expect(Array.from(r.keep).slice(0, 3)).toEqual([3, 0, 5]);
    // Box 1 vs box 0: IoU = 0.9 / 1.1 (hand computation); decayed 0.75 × (1 − 0.8182) = 0.13636.
    const k1 = Array.from(r.keep).indexOf(1);
    expect(r.score[k1]).toBeCloseTo(0.75 * (1 - 0.9 / 1.1), 5);
    expect(r.keep.length).toBe(6);
  });
  it('gaussian: s ← s·exp(−IoU²/σ); with a high threshold the decayed boxes drop out', () => {
    const r = softNms(cols, { method: 'gaussian', sigma: 0.5, scoreThreshold: 0.3 });
    const i4 = Array.from(r.keep).indexOf(4);
    expect(i4).toBe(-1); // 0.5·exp(−(0.9/1.1)²/0.5) = 0.131 < 0.3
    expect(Array.from(r.keep)).toEqual([3, 0, 5]);
  });
  it('with linear decay at N_t and score threshold as hard NMS it equals greedy NMS when decayed boxes fall out', () => {
    const r = softNms(cols, { method: 'linear', iouThreshold: 0.5, scoreThreshold: 0.2 });
    expect(Array.from(r.keep)).toEqual([3, 0, 5]);
  });
});

describe('candidate index: grid and R-tree give the same result as brute force', () => {
  function bruteGreedy(c: NmsBoxColumns, thr: number): number[] {
    const order = Array.from({ length: c.count }, (_, i) => i).sort((a, b) => c.score[b] - c.score[a] || a - b);
    const dead = new Uint8Array(c.count);
    const keep: number[] = [];
    for (const i of order) {
      if (dead[i]) continue;
      keep.push(i);
      for (const j of order) {
        if (j === i || dead[j] || c.classIdx[j] !== c.classIdx[i]) continue;
        const iou = rotatedIoU(
          { cxM: c.cxM[i], cyM: c.cyM[i], lengthM: c.lengthM[i], widthM: c.widthM[i], angleRad: c.angleRad[i] },
          { cxM: c.cxM[j], cyM: c.cyM[j], lengthM: c.lengthM[j], widthM: c.widthM[j], angleRad: c.angleRad[j] });
        if (iou > thr && keep.indexOf(j) < 0) dead[j] = 1;
      }
    }
    return keep;
  }
  it('mixed sizes (cars and 20–60 m arrays), rotated, two classes', () => {
    const rnd = mulberry32(99);
    const n = 600;
    const c = {
      count: n, cxM: new Float64Array(n), cyM: new Float64Array(n), lengthM: new Float32Array(n), widthM: new Float32Array(n),
      angleRad: new Float32Array(n), score: new Float32Array(n), classIdx: new Uint8Array(n),
    };
    for (let i = 0; i < n; i++) {
      const big = rnd() < 0.1;
      c.cxM[i] = 500000 + rnd() * 150; c.cyM[i] = 5000000 + rnd() * 150; // UTM-sized coordinates
      c.lengthM[i] = big ? 20 + rnd() * 40 : 3.5 + rnd() * 2; c.widthM[i] = big ? 10 + rnd() * 10 : 1.6 + rnd() * 0.4;
      c.angleRad[i] = rnd() * Math.PI; c.score[i] = rnd(); c.classIdx[i] = big ? 1 : rnd() < 0.9 ? 0 : 1;
    }
    for (const thr of [0.1, 0.3, 0.5]) {
      const brute = bruteGreedy(c, thr);
      expect(Array.from(greedyNms(c, { iouThreshold: thr }))).toEqual(brute);
      expect(Array.from(greedyNms(c, { iouThreshold: thr, forceTree: true }))).toEqual(brute);
    }
    const a = softNms(c, { method: 'gaussian' }), b = softNms(c, { method: 'gaussian', forceTree: true });
    expect(Array.from(a.keep)).toEqual(Array.from(b.keep));
  });
});

describe('greedyNms scale', () => {
  it('handles 200 000 rotated boxes in near-linear time (no assertion on time; checks the result)', () => {
    const rnd = mulberry32(7);
    const n = 200_000;
    const side = Math.sqrt(n) * 10;
    const c = {
      count: n, cxM: new Float64Array(n), cyM: new Float64Array(n), lengthM: new Float32Array(n), widthM: new Float32Array(n),
      angleRad: new Float32Array(n), score: new Float32Array(n), classIdx: new Uint8Array(n),
    };
    for (let i = 0; i < n; i += 2) {
      // Pairs: each object seen twice with a small shift (a duplicate across a seam).
      const x = rnd() * side, y = rnd() * side, a = rnd() * Math.PI;
      for (let d = 0; d < 2; d++) {
        c.cxM[i + d] = x + d * 0.1; c.cyM[i + d] = y; c.lengthM[i + d] = 4.4; c.widthM[i + d] = 1.8;
        c.angleRad[i + d] = a; c.score[i + d] = 0.5 + rnd() * 0.5; c.classIdx[i + d] = 0;
      }
    }
    const t0 = performance.now();
    const keep = greedyNms(c, { iouThreshold: 0.5 });
    const ms = performance.now() - t0;
    console.log(`greedyNms: ${n} boxes in ${ms.toFixed(0)} ms, kept ${keep.length}`);
    // Every pair collapses to one unless two random objects happen to overlap (rare at this density).
    expect(keep.length).toBeGreaterThan(0.49 * n);
    expect(keep.length).toBeLessThanOrEqual(n / 2);
  });
});
