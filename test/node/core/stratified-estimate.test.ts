// The stratified difference estimator against R's survey package (Lumley): svydesign(strata, fpc) + svytotal of
// d = true − detected, SE, and confint(df = degf) — reference values in test/fixtures/survey/reference.json, made by
// make-reference.R beside it (re-run and compared here when Rscript with survey is installed). Plus the t quantile
// against printed tables and a simulation of the interval's coverage on generated cells with a biased detector.
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { stratifiedEstimate, tQuantile, type CheckedCell, type StratumPopulation } from '../../../web/core/stratified-estimate.ts';
import { mulberry32 } from '../../helpers/mulberry32.ts';

interface RefDesign { N: number[]; cells: [number, number, number][]; totalD: number; se: number; lo: number; hi: number; df: number }

function check(ref: { designs: RefDesign[] }) {
  for (const d of ref.designs) {
    // the detector total over all cells is a known constant: give every stratum an arbitrary one and add it back
    const strata: StratumPopulation[] = d.N.map((N, h) => ({ cells: N, detected: 100 * (h + 1) }));
    const constant = strata.reduce((a, s) => a + s.detected, 0);
    const cells: CheckedCell[] = d.cells.map(([stratum, detected, truth]) => ({ stratum, detected, truth, truePositives: Math.min(detected, truth) }));
    const e = stratifiedEstimate(strata, cells);
    const rel = (a: number, b: number) => Math.abs(a - b) / Math.max(1, Math.abs(b));
    expect(rel(e.count - constant, d.totalD)).toBeLessThan(1e-9);
    expect(rel(e.se, d.se)).toBeLessThan(1e-9);
    expect(e.df).toBe(d.df);
    // R's interval is not clipped at 0; ours clips the lower bound (a count cannot be negative)
    expect(rel(e.ci95[1] - constant, d.hi)).toBeLessThan(1e-9);
    expect(rel(Math.max(0, d.lo + constant), e.ci95[0])).toBeLessThan(1e-9);
  }
}

describe('stratifiedEstimate equals R survey (svytotal with strata and fpc, confint on degf)', () => {
  it('committed reference values (R survey 4.1.1)', () => {
    check(JSON.parse(readFileSync('test/fixtures/survey/reference.json', 'utf8')));
  });
  let hasR = false;
  try { execFileSync('Rscript', ['-e', 'library(survey)'], { stdio: 'ignore' }); hasR = true; } catch { /* no R here */ }
  it.skipIf(!hasR)('freshly computed by R when installed', () => {
    check(JSON.parse(execFileSync('Rscript', ['test/fixtures/survey/make-reference.R']).toString()));
  });
});

describe('tQuantile', () => {
  it('matches printed t tables (two-sided 95 %: df 1 → 12.706, 2 → 4.303, 5 → 2.571, 10 → 2.228, 30 → 2.042; from memory)', () => {
    for (const [df, t] of [[1, 12.706], [2, 4.303], [5, 2.571], [10, 2.228], [30, 2.042]]) expect(tQuantile(0.05, df)).toBeCloseTo(t, 3);
  });
});

describe('coverage on generated AOIs with a biased detector (self-consistency simulation)', () => {
  it('over 600 samples the 95 % interval covers the true count 93–97 % of the time; the estimate is unbiased within 1 %', () => {
    const rnd = mulberry32(7);
    const pois = (lam: number) => { let k = 0; let p = Math.exp(-lam); let s = p; const u = rnd(); while (u > s && k < 500) { k++; p *= lam / k; s += p; } return k; };
    // 240 cells in three density strata; the detector finds 80 % of objects and adds false ones (count bias ~ −10 %)
    const N = [80, 100, 60];
    const lam = [0.5, 8, 25];
    const truthCells = N.map((n, h) => Array.from({ length: n }, () => pois(lam[h])));
    const detCells = truthCells.map((cs) => cs.map((t) => { let d = 0; for (let i = 0; i < t; i++) if (rnd() < 0.8) d++; return d + pois(0.1 * t + 0.2); }));
    const trueTotal = truthCells.flat().reduce((a, b) => a + b, 0);
    const detTotal = detCells.flat().reduce((a, b) => a + b, 0);
    const strata = N.map((n, h) => ({ cells: n, detected: detCells[h].reduce((a, b) => a + b, 0) }));
    const nh = [4, 8, 8];
    let covered = 0;
    let sum = 0;
    const runs = 600;
    for (let r = 0; r < runs; r++) {
      const checked: CheckedCell[] = [];
      for (let h = 0; h < 3; h++) {
        const idx = Array.from({ length: N[h] }, (_, i) => i);
        for (let i = 0; i < nh[h]; i++) { const j = i + Math.floor(rnd() * (N[h] - i)); [idx[i], idx[j]] = [idx[j], idx[i]]; }
        for (const i of idx.slice(0, nh[h])) checked.push({ stratum: h, detected: detCells[h][i], truth: truthCells[h][i], truePositives: Math.min(detCells[h][i], truthCells[h][i]) });
      }
      const e = stratifiedEstimate(strata, checked);
      if (e.ci95[0] <= trueTotal && trueTotal <= e.ci95[1]) covered++;
      sum += e.count;
    }
    expect(Math.abs(detTotal / trueTotal - 1)).toBeGreaterThan(0.05); // the raw count is off by its bias
    expect(covered / runs).toBeGreaterThanOrEqual(0.93);
    expect(covered / runs).toBeLessThanOrEqual(0.97);
    expect(Math.abs(sum / runs / trueTotal - 1)).toBeLessThan(0.01);
  });
});
