// Tests for eval-metrics.ts: VOC matching, all-point AP against a published worked example and an independent brute force.
import { describe, expect, it } from 'vitest';
import { mulberry32 as rng } from '../../helpers/mulberry32.ts';
import {
  classQuality, matchVoc, prCurve, relativeCountError, vocAllPointAp,
  type EvalDetection, type EvalTruth,
} from '../../../web/core/eval-metrics.ts';

/** Axis-aligned box helper (angle 0) so IoU is easy to work by hand. */
function box(sceneIdx: number, x: number, y: number, l: number, w: number, extra: Partial<EvalDetection & EvalTruth> = {}) {
  return { sceneIdx, classIdx: 0, cxM: x, cyM: y, lengthM: l, widthM: w, angleRad: 0, score: 0, ...extra };
}


describe('vocAllPointAp', () => {
  it('matches the published worked example (24 detections, 15 objects: every-point AP 24.56 %)', () => {
    // Source: R. Padilla, S. L. Netto, E. A. B. da Silva, "A Survey on Performance Metrics for Object-Detection
    // Algorithms", IWSSIP 2020, and its Object-Detection-Metrics README worked example (VOC all-point
    // interpolation = "every point"): 7 images, 15 ground-truth boxes, 24 detections; by decreasing confidence the
    // true positives are ranks 1, 3, 7, 10, 12, 14, 23. Published results: every-point AP = 24.56 %, 11-point
    // AP = 26.84 %. (Rank list from memory; it reproduces both published figures, which pins it down.)
    const tpRanks = new Set([1, 3, 7, 10, 12, 14, 23]);
    const recall: number[] = [];
    const precision: number[] = [];
    let tp = 0;
    for (let r = 1; r <= 24; r++) {
      if (tpRanks.has(r)) tp++;
      recall.push(tp / 15);
      precision.push(tp / r);
    }
    // The README sums rounded terms (0.0666 + 0.0444 + 0.1142 + 0.0202); the exact value is 0.245687.
    expect(vocAllPointAp(recall, precision)).toBeCloseTo(0.2456, 3);
    // The published 11-point figure, from the same curve, confirms the curve itself (VOC2007 11-point definition).
    let ap11 = 0;
    for (let t = 0; t <= 10; t++) {
      const p = Math.max(0, ...precision.filter((_, i) => recall[i] >= t / 10 - 1e-12));
      ap11 += p / 11;
    }
    expect(ap11).toBeCloseTo(0.2684, 4);
  });

  it('hand-worked from the VOC 2010 definition', () => {
    // 4 objects; detections by score: TP, FP, TP, FP, TP → recall .25 .25 .5 .5 .75, precision 1 .5 .667 .5 .6.
    // Monotone envelope: p(.25) = 1, p(.5) = .667, p(.75) = .6; AP = .25·1 + .25·(2/3) + .25·.6 = 0.566667.
    expect(vocAllPointAp([0.25, 0.25, 0.5, 0.5, 0.75], [1, 0.5, 2 / 3, 0.5, 0.6])).toBeCloseTo(0.25 + 0.25 * (2 / 3) + 0.25 * 0.6, 12);
    expect(vocAllPointAp([], [])).toBe(0);
    expect(vocAllPointAp([1], [1])).toBe(1);
  });

  it('agrees with an independent brute force on random curves', () => {
    // Independent form of the same definition: AP = (1/P) Σ over true positives k of max_{j ≥ k} precision(j).
    const rand = rng(42);
    for (let trial = 0; trial < 200; trial++) {
      const P = 1 + Math.floor(rand() * 20);
      const n = Math.floor(rand() * 40);
      const isTp: boolean[] = [];
      let tp = 0;
      for (let i = 0; i < n; i++) { const t = tp < P && rand() < 0.5; if (t) tp++; isTp.push(t); }
      const recall: number[] = [];
      const precision: number[] = [];
      let c = 0;
      isTp.forEach((t, i) => { if (t) c++; recall.push(c / P); precision.push(c / (i + 1)); });
      let brute = 0;
      isTp.forEach((t, k) => { if (t) brute += Math.max(...precision.slice(k)) / P; });
      expect(vocAllPointAp(recall, precision)).toBeCloseTo(brute, 12);
    }
  });
});

describe('matchVoc', () => {
  it('takes detections by score, rejects duplicates and low IoU, ignores difficult objects', () => {
    const truths: EvalTruth[] = [box(0, 0, 0, 4, 2), box(0, 10, 0, 4, 2), box(0, 20, 0, 4, 2, { difficult: true }), box(1, 0, 0, 4, 2)];
    const dets: EvalDetection[] = [
      box(0, 0.2, 0, 4, 2, { score: 0.9 }), // TP on truth 0 (IoU 3.8/4.2 = .905)
      box(0, 0, 0, 4, 2, { score: 0.8 }), // duplicate of truth 0 → FP
      box(0, 10, 1.2, 4, 2, { score: 0.7 }), // IoU 0.8·4/(16-3.2) = .25 → FP
      box(0, 20, 0, 4, 2, { score: 0.6 }), // difficult → ignored
      box(1, 0, 0, 4, 2, { score: 0.5 }), // other scene's truth → TP
      box(0, 10, 0, 4, 2, { score: 0.4, classIdx: 1 }), // other class: not considered
    ];
    const m = matchVoc(dets, truths, 0);
    expect(Array.from(m.order)).toEqual([0, 1, 2, 3, 4]);
    expect(Array.from(m.outcome)).toEqual([1, 0, 0, -1, 1]);
    expect(Array.from(m.matchedTruth)).toEqual([0, -1, -1, -1, 3]);
    expect(m.positives).toBe(3);
    const c = prCurve(m, dets);
    expect(c.recall).toEqual([1 / 3, 1 / 3, 1 / 3, 2 / 3]);
    expect(c.precision).toEqual([1, 0.5, 1 / 3, 0.5]);
    const q = classQuality(dets, truths, 0, { minScore: 0.55 });
    expect(q).toMatchObject({ tp: 1, fp: 2, fn: 2, positives: 3 });
    // AP: envelope p(1/3) = 1, p(2/3) = .5 → 1/3 + (1/3)(.5) = .5
    expect(q.ap).toBeCloseTo(0.5, 12);
  });

  it('IoU exactly at the threshold counts (VOC: ovmax >= 0.5)', () => {
    // Two 4×2 boxes shifted by 4/3 along x: intersection (4 − 4/3)·2 = 16/3, union 16 − 16/3 = 32/3 → IoU 0.5.
    const m = matchVoc([box(0, 4 / 3, 0, 4, 2, { score: 1 })], [box(0, 0, 0, 4, 2)], 0);
    expect(Array.from(m.outcome)).toEqual([1]);
    const m2 = matchVoc([box(0, 1.4, 0, 4, 2, { score: 1 })], [box(0, 0, 0, 4, 2)], 0);
    expect(Array.from(m2.outcome)).toEqual([0]);
  });

  it('uses rotated IoU: a box turned 90° about the same centre is no match', () => {
    // 4×1 boxes crossing at right angles: intersection 1, union 7 → IoU 1/7.
    const m = matchVoc([{ ...box(0, 0, 0, 4, 1, { score: 1 }), angleRad: Math.PI / 2 }], [box(0, 0, 0, 4, 1)], 0);
    expect(Array.from(m.outcome)).toEqual([0]);
    const same = matchVoc([{ ...box(0, 0, 0, 4, 1, { score: 1 }), angleRad: Math.PI }], [box(0, 0, 0, 4, 1)], 0);
    expect(Array.from(same.outcome)).toEqual([1]);
  });

  it('agrees with an independent axis-aligned brute force on random scenes', () => {
    // Independent implementation of the VOC devkit loop with plain min/max IoU for axis-aligned boxes.
    const rand = rng(7);
    for (let trial = 0; trial < 50; trial++) {
      const truths: EvalTruth[] = [];
      const dets: EvalDetection[] = [];
      for (let i = 0; i < 15; i++) truths.push(box(Math.floor(rand() * 2), rand() * 30, rand() * 30, 2 + rand() * 4, 1 + rand() * 2, { difficult: rand() < 0.1 }));
      for (let i = 0; i < 25; i++) {
        const t = truths[Math.floor(rand() * truths.length)];
        dets.push(box(t.sceneIdx, t.cxM + (rand() - 0.5) * 3, t.cyM + (rand() - 0.5) * 3, t.lengthM * (0.7 + rand() * 0.6), t.widthM, { score: Math.round(rand() * 100) / 100 }));
      }
      const iou = (a: EvalTruth, b: EvalTruth) => {
        const ix = Math.min(a.cxM + a.lengthM / 2, b.cxM + b.lengthM / 2) - Math.max(a.cxM - a.lengthM / 2, b.cxM - b.lengthM / 2);
        const iy = Math.min(a.cyM + a.widthM / 2, b.cyM + b.widthM / 2) - Math.max(a.cyM - a.widthM / 2, b.cyM - b.widthM / 2);
        const inter = ix > 0 && iy > 0 ? ix * iy : 0;
        return inter / (a.lengthM * a.widthM + b.lengthM * b.widthM - inter);
      };
      const order = dets.map((_, i) => i).sort((a, b) => dets[b].score - dets[a].score || a - b);
      const used = new Set<number>();
      let tp = 0, fp = 0;
      const rec: number[] = [], prec: number[] = [];
      const P = truths.filter((t) => !t.difficult).length;
      for (const di of order) {
        let best = -1, bo = -1;
        truths.forEach((t, ti) => { if (t.sceneIdx === dets[di].sceneIdx) { const o = iou(dets[di], t); if (o > bo) { bo = o; best = ti; } } });
        if (bo >= 0.5 && truths[best].difficult) continue;
        if (bo >= 0.5 && !used.has(best)) { used.add(best); tp++; } else fp++;
        rec.push(tp / P); prec.push(tp / (tp + fp));
      }
      const c = prCurve(matchVoc(dets, truths, 0), dets);
      expect(c.recall).toEqual(rec);
      expect(c.precision).toEqual(prec);
    }
  });
});

describe('relativeCountError', () => {
  it('is signed and relative to the true count', () => {
    expect(relativeCountError(95, 100)).toBeCloseTo(-0.05, 12);
    expect(relativeCountError(103, 100)).toBeCloseTo(0.03, 12);
    expect(relativeCountError(0, 0)).toBe(0);
    expect(relativeCountError(2, 0)).toBe(Infinity);
  });
});
