// Random oriented-box sets that are hard for NMS: piles of duplicates, tied scores, both classes, boxes that touch
// or overlap right at an IoU threshold, arrays far larger than cars, all at UTM-sized coordinates.
import { mulberry32 } from './mulberry32.ts';

export interface RandomBoxColumns {
  count: number;
  cxM: Float64Array; cyM: Float64Array;
  lengthM: Float32Array; widthM: Float32Array; angleRad: Float32Array;
  score: Float32Array;
  classIdx: Uint8Array;
}

/** (length, shift) pairs with IoU 0.3, 0.5 and 0.7. */
const ON_THRESHOLD = [[6.5, 3.5], [1.5, 0.5], [8.5, 1.5]] as const;

/**
 * About `n` boxes over a `sideM` square near (500 000, 5 000 000): groups of 1–6 jittered copies of one car or
 * array (scores quantised to 1/8 in half the groups, so ties are common, with a few ±0 and negative scores), pairs
 * that share an edge (axis-aligned and rotated), pairs shifted along their length so that their IoU is exactly 0.3,
 * 0.5 or 0.7 (as doubles; nearly so when one of them is turned by float32 π), and a few boxes of several hundred
 * metres (past every grid level of the candidate index).
 */
export function randomBoxes(seed: number, n: number, sideM = 300): RandomBoxColumns {
  const r = mulberry32(seed);
  const c: RandomBoxColumns = {
    count: 0, cxM: new Float64Array(n), cyM: new Float64Array(n), lengthM: new Float32Array(n), widthM: new Float32Array(n),
    angleRad: new Float32Array(n), score: new Float32Array(n), classIdx: new Uint8Array(n),
  };
  const add = (x: number, y: number, l: number, w: number, a: number, s: number, k: number) => {
    if (c.count === n) return;
    const i = c.count++;
    c.cxM[i] = x; c.cyM[i] = y; c.lengthM[i] = l; c.widthM[i] = w; c.angleRad[i] = a; c.score[i] = s; c.classIdx[i] = k;
  };
  const score = (tied: boolean) => {
    const u = r();
    if (u < 0.01) return u < 0.005 ? -0 : 0;
    if (u < 0.015) return -0.25;
    return tied ? Math.ceil(r() * 8) / 8 : r();
  };
  while (c.count < n) {
    const x = 500_000 + r() * sideM, y = 5_000_000 + r() * sideM, kind = r();
    if (kind < 0.7) { // a pile of detections of one object
      const big = r() < 0.1, huge = r() < 0.01;
      const l = huge ? 300 + r() * 600 : big ? 10 + r() * 50 : 3.5 + r() * 2, w = huge ? 100 + r() * 200 : big ? 5 + r() * 10 : 1.6 + r() * 0.6;
      const a = r() < 0.2 ? 0 : (r() - 0.5) * Math.PI, k = big || huge ? 1 : r() < 0.85 ? 0 : 1, tied = r() < 0.5;
      const copies = 1 + Math.floor(r() * 6), jitterM = r() * 0.15 * l;
      for (let d = 0; d < copies; d++) {
        add(x + (r() - 0.5) * jitterM, y + (r() - 0.5) * jitterM, l * (0.9 + 0.2 * r()), w * (0.9 + 0.2 * r()), a + (r() - 0.5) * 0.2, score(tied), k);
      }
    } else if (kind < 0.85) { // two boxes sharing an edge: the length side (rotated) or the width side (axis-aligned)
      const l = 4.5, w = Math.fround(1.8), s = score(true), k = r() < 0.5 ? 0 : 1;
      if (r() < 0.5) { add(x, y, l, w, 0, s, k); add(x + l, y, l, w, 0, s, k); }
      else { const a = r() * Math.PI; add(x, y, l, w, a, s, k); add(x - w * Math.sin(a), y + w * Math.cos(a), l, w, a, score(true), k); }
    } else { // same boxes shifted by d along their length l: IoU = (l − d)/(l + d) = 6/20, 2/4 or 14/20, all exact
      const [l, d] = ON_THRESHOLD[Math.floor(r() * ON_THRESHOLD.length)], k = r() < 0.5 ? 0 : 1;
      add(x, y, l, 1, 0, score(true), k); add(x + d, y, l, 1, r() < 0.5 ? 0 : Math.PI, score(true), k);
    }
  }
  return c;
}
