// Candidate pairs for NMS: the neighbour lists hold exactly the same-class pairs whose axis-aligned bounds overlap.
import { describe, it, expect } from 'vitest';
import { neighbourLists, type NeighbourLists } from '../../../web/core/candidate-index.ts';
import { boxHalfExtents, rotatedIoU } from '../../../web/core/oriented-box.ts';
import { randomBoxes, type RandomBoxColumns } from '../../helpers/random-boxes.ts';

const allRows = (n: number) => Uint32Array.from({ length: n }, (_, i) => i);

function listOf(nb: NeighbourLists, i: number): number[] {
  return Array.from(nb.nbr.subarray(nb.start[i], nb.start[i + 1])).sort((a, b) => a - b);
}

/** Brute force over all pairs: which same-class pairs have overlapping bounds, with a relative slack? */
function overlapTest(c: RandomBoxColumns): (i: number, j: number, slack: number) => boolean {
  const h = Array.from({ length: c.count }, (_, i) => boxHalfExtents(c.lengthM[i], c.widthM[i], c.angleRad[i]));
  return (i, j, slack) => Math.abs(c.cxM[i] - c.cxM[j]) <= (h[i][0] + h[j][0]) * (1 + slack) && Math.abs(c.cyM[i] - c.cyM[j]) <= (h[i][1] + h[j][1]) * (1 + slack);
}

describe('neighbourLists', () => {
  const c = randomBoxes(21, 2000, 150);
  const overlap = overlapTest(c);
  for (const forceTree of [false, true]) {
    it(`${forceTree ? 'R-tree only' : 'grids + R-tree'}: every same-class overlapping pair once per side, nothing else`, () => {
      const nb = neighbourLists(c, allRows(c.count), c.classIdx, { forceTree });
      expect(nb.start.length).toBe(c.count + 1);
      const wrong: string[] = [];
      let pairs = 0, touching = 0;
      for (let i = 0; i < c.count; i++) {
        const list = listOf(nb, i);
        if (new Set(list).size !== list.length || list.includes(i)) wrong.push(`row ${i}: duplicate or self in ${list}`);
        const have = new Set(list);
        for (let j = 0; j < c.count; j++) {
          if (j === i) continue;
          const should = c.classIdx[j] === c.classIdx[i] && overlap(i, j, 1e-9);
          const may = c.classIdx[j] === c.classIdx[i] && overlap(i, j, 1e-6); // bounds are grown by ~1e-11 relative
          if (should) pairs++;
          if ((should && !have.has(j)) || (!may && have.has(j))) wrong.push(`${i}–${j}: listed ${have.has(j)}`);
          if (have.has(j) && rotatedIoU(box(c, i), box(c, j)) === 0) touching++;
        }
      }
      expect(wrong.slice(0, 5)).toEqual([]);
      expect(pairs).toBeGreaterThan(2 * c.count); // a dense set: the test means something
      expect(touching).toBeGreaterThan(0); // boxes sharing an edge are candidates too
    });
  }
  it('class-agnostic lists pair across classes; rows not given and non-finite boxes get none', () => {
    const d = randomBoxes(22, 800, 60);
    d.lengthM[5] = NaN; d.cyM[6] = Infinity;
    const some = allRows(d.count).filter((i) => i % 3 !== 0);
    const nb = neighbourLists(d, some, null);
    let crossClass = 0;
    for (let i = 0; i < d.count; i++) {
      const list = listOf(nb, i);
      if (i % 3 === 0 || i === 5 || i === 6) { expect(list).toEqual([]); continue; }
      for (const j of list) { expect(j % 3).not.toBe(0); if (d.classIdx[j] !== d.classIdx[i]) crossClass++; }
    }
    expect(crossClass).toBeGreaterThan(0);
  });
});

function box(c: RandomBoxColumns, i: number) {
  return { cxM: c.cxM[i], cyM: c.cyM[i], lengthM: c.lengthM[i], widthM: c.widthM[i], angleRad: c.angleRad[i] };
}
