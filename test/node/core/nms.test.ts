// NMS checked against the ONNX NonMaxSuppression operator: the spec's reference cases and onnxruntime-node's own op.
import { describe, it, expect, beforeAll } from 'vitest';
import * as ort from 'onnxruntime-node';
import { greedyNms, softNms, orderByScore, type NmsBoxColumns } from '../../../web/core/nms.ts';
import { nmsModelBytes } from './onnx-nms-model.ts';
import { rotatedIoU } from '../../../web/core/oriented-box.ts';
import { mulberry32 } from '../../helpers/mulberry32.ts';
import { randomBoxes } from '../../helpers/random-boxes.ts';

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

// ---------------------------------------------------------------------------------------------------------------
// The indexed NMS against straightforward O(n²) versions of the same definitions (no index, a comparator sort).

/** IoU of rows i (the kept box) and j, as the NMS calls it. */
function iouRows(c: NmsBoxColumns, i: number, j: number): number {
  return rotatedIoU(
    { cxM: c.cxM[i], cyM: c.cyM[i], lengthM: c.lengthM[i], widthM: c.widthM[i], angleRad: c.angleRad[i] },
    { cxM: c.cxM[j], cyM: c.cyM[j], lengthM: c.lengthM[j], widthM: c.widthM[j], angleRad: c.angleRad[j] });
}

/** Boxes whose circumscribed circles lie clearly apart cannot intersect (keeps the references fast, not clever). */
function apart(c: NmsBoxColumns, i: number, j: number): boolean {
  const ri = Math.hypot(c.lengthM[i], c.widthM[i]) / 2, rj = Math.hypot(c.lengthM[j], c.widthM[j]) / 2;
  return Math.hypot(c.cxM[i] - c.cxM[j], c.cyM[i] - c.cyM[j]) > (ri + rj) * (1 + 1e-9) + 1e-9;
}

function referenceOrder(c: NmsBoxColumns, scoreThr: number): number[] {
  return Array.from({ length: c.count }, (_, i) => i).filter((i) => c.score[i] > scoreThr).sort((a, b) => c.score[b] - c.score[a] || a - b);
}

function referenceGreedy(c: NmsBoxColumns, thr: number, scoreThr = -Infinity, agnostic = false): number[] {
  const order = referenceOrder(c, scoreThr);
  const dead = new Uint8Array(c.count);
  const keep: number[] = [];
  for (let p = 0; p < order.length; p++) {
    const i = order[p];
    if (dead[i]) continue;
    keep.push(i);
    for (let q = p + 1; q < order.length; q++) {
      const j = order[q];
      if (dead[j] || (!agnostic && c.classIdx[j] !== c.classIdx[i]) || apart(c, i, j)) continue;
      if (iouRows(c, i, j) > thr) dead[j] = 1;
    }
  }
  return keep;
}

function referenceSoft(c: NmsBoxColumns, method: 'gaussian' | 'linear', sigma: number, nt: number, minScore: number): { keep: number[]; score: number[] } {
  const cur = Float64Array.from({ length: c.count }, (_, i) => c.score[i]);
  const done = new Uint8Array(c.count);
  const keep: number[] = [], score: number[] = [];
  for (;;) {
    let i = -1;
    for (let j = 0; j < c.count; j++) if (!done[j] && cur[j] >= minScore && (i < 0 || cur[j] > cur[i])) i = j;
    if (i < 0) return { keep, score };
    done[i] = 1; keep.push(i); score.push(cur[i]);
    for (let j = 0; j < c.count; j++) {
      if (done[j] || cur[j] < minScore || c.classIdx[j] !== c.classIdx[i] || apart(c, i, j)) continue;
      const iou = iouRows(c, i, j);
      if (iou <= 0) continue;
      const w = method === 'gaussian' ? Math.exp(-(iou * iou) / sigma) : iou > nt ? 1 - iou : 1;
      if (w !== 1) cur[j] *= w;
    }
  }
}

describe('greedyNms equals a straightforward O(n²) greedy NMS', () => {
  const sets = [randomBoxes(1, 3000), randomBoxes(2, 3000, 120), randomBoxes(3, 2000, 40)];
  it('the random sets are hard: many suppressions, ties, pairs on the threshold, both classes', () => {
    const c = sets[0];
    const scores = new Set(Array.from(c.score.subarray(0, c.count)));
    expect(scores.size).toBeLessThan(0.75 * c.count); // many tied scores
    expect(new Set(c.classIdx.subarray(0, c.count)).size).toBe(2);
    const keep = referenceGreedy(c, 0.5);
    expect(keep.length).toBeLessThan(0.8 * c.count);
    expect(keep.length).toBeGreaterThan(0.3 * c.count);
    let onThreshold = 0, nearThreshold = 0;
    for (let i = 0; i + 1 < c.count; i++) {
      const iou = iouRows(c, i, i + 1);
      if (iou === 0.5) onThreshold++; else if (Math.abs(iou - 0.5) < 1e-6) nearThreshold++;
    }
    expect(onThreshold).toBeGreaterThan(10);
    expect(nearThreshold).toBeGreaterThan(10);
  });
  for (const [k, c] of sets.entries()) {
    for (const thr of [0, 0.3, 0.5, 0.7]) {
      it(`set ${k}, IoU ${thr}: same rows in the same order (grid, R-tree; float32 and float64 scores)`, () => {
        const ref = referenceGreedy(c, thr);
        expect(Array.from(greedyNms(c, { iouThreshold: thr }))).toEqual(ref);
        expect(Array.from(greedyNms(c, { iouThreshold: thr, forceTree: true }))).toEqual(ref);
        expect(Array.from(greedyNms({ ...c, score: Float64Array.from(c.score) }, { iouThreshold: thr }))).toEqual(ref);
      });
    }
    it(`set ${k}: score threshold and class-agnostic variants`, () => {
      expect(Array.from(greedyNms(c, { iouThreshold: 0.5, scoreThreshold: 0.5 }))).toEqual(referenceGreedy(c, 0.5, 0.5));
      expect(Array.from(greedyNms(c, { iouThreshold: 0.5, scoreThreshold: 0 }))).toEqual(referenceGreedy(c, 0.5, 0));
      expect(Array.from(greedyNms(c, { iouThreshold: 0.4, classAgnostic: true }))).toEqual(referenceGreedy(c, 0.4, -Infinity, true));
    });
  }
  it('boxes with non-finite sizes or coordinates suppress nothing and are kept', () => {
    const c = randomBoxes(4, 600, 60);
    c.lengthM[10] = NaN; c.widthM[20] = Infinity; c.cxM[30] = NaN; c.score[10] = c.score[20] = c.score[30] = 0.99;
    const keep = Array.from(greedyNms(c, { iouThreshold: 0.5 }));
    expect(keep).toEqual(referenceGreedy(c, 0.5));
    expect(keep).toEqual(expect.arrayContaining([10, 20, 30]));
  });
});

describe('softNms equals a straightforward O(n²) Soft-NMS', () => {
  const c = randomBoxes(5, 700, 80);
  for (const [method, nt] of [['gaussian', 0.3], ['linear', 0.3], ['linear', 0.5]] as const) {
    it(`${method}${method === 'linear' ? ` N_t ${nt}` : ''}: same rows, same order, same decayed scores`, () => {
      const ref = referenceSoft(c, method, 0.5, nt, 0.05);
      for (const forceTree of [false, true]) {
        const r = softNms(c, { method, iouThreshold: nt, scoreThreshold: 0.05, forceTree });
        expect(Array.from(r.keep)).toEqual(ref.keep);
        expect(Array.from(r.score)).toEqual(Array.from(Float32Array.from(ref.score)));
      }
      expect(ref.score.filter((s, k) => s !== c.score[ref.keep[k]]).length).toBeGreaterThan(50); // decays happened
    });
  }
});

describe('orderByScore', () => {
  it('radix order of float32 scores = comparator order (ties by row; ±0 tie; ±Infinity; NaN dropped)', () => {
    const rnd = mulberry32(11);
    const n = 20_000;
    const s = new Float32Array(n);
    for (let i = 0; i < n; i++) {
      const u = rnd();
      s[i] = u < 0.05 ? -0 : u < 0.1 ? 0 : u < 0.11 ? Infinity : u < 0.12 ? -Infinity : u < 0.13 ? NaN : u < 0.5 ? Math.round(rnd() * 40) / 8 - 1 : (rnd() - 0.3) * 1e6 * rnd() ** 8;
    }
    const cols = { ...randomBoxes(1, n), count: n, score: s };
    for (const thr of [-Infinity, -0.5, 0, 0.25]) {
      const ref = Array.from({ length: n }, (_, i) => i).filter((i) => s[i] > thr).sort((a, b) => s[b] - s[a] || a - b);
      expect(Array.from(orderByScore(cols, thr))).toEqual(ref);
    }
  });
});
