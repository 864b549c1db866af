// `seamtally sample` and `seamtally estimate` on a detect run of the fixture scenes: the cells are the same for the
// same seed, tile the AOI (areas add up to the AOI's), every counted detection falls in exactly one cell, and the
// estimate is exact arithmetic where the checks make it so (a perfect detector → the detector's count with SE 0;
// one missed object in every checked cell → the count plus one per cell of the AOI).
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import gjv from 'geojson-validation';
import { beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../../helpers/cli.ts';
import { designFor, readAois, readRunDir } from '../../../cli/checked-sample.ts';
import { makeBlobScenes, type BlobScenes } from '../../fixtures/blob-scenes.ts';

const MODEL = 'test/fixtures/fixture-model.onnx';
const dir = mkdtempSync(join(tmpdir(), 'seamtally-sample-'));
let fx: BlobScenes;
const runDir = join(dir, 'run');

const cli = (args: string[]) => runCli(args);

interface CellsFc { features: Array<{ properties: Record<string, unknown> & { id: string; detected: Record<string, number>; trueCounts?: Record<string, number> } }> }

beforeAll(async () => {
  fx = makeBlobScenes(dir);
  const r = await cli(['detect', fx.pathA, fx.pathB, '--aoi', fx.aoiAll, '--model', MODEL, '--out', runDir, '--quiet']);
  expect(r.rc, r.err).toBe(0);
}, 120_000);

describe('seamtally sample', () => {
  it('writes valid GeoJSON cells; the same seed gives the same cells', async () => {
    const a = join(dir, 'a.geojson');
    const b = join(dir, 'b.geojson');
    expect((await cli(['sample', '--aoi', fx.aoiAll, '--run', runDir, '--seed', '11', '--out', a])).rc).toBe(0);
    expect((await cli(['sample', '--aoi', fx.aoiAll, '--run', runDir, '--seed', '11', '--out', b])).rc).toBe(0);
    const fc = JSON.parse(readFileSync(a, 'utf8'));
    expect(gjv.valid(fc)).toBe(true); // geojson-validation (npm)
    expect(readFileSync(a, 'utf8')).toBe(readFileSync(b, 'utf8'));
    expect(fc.features.length).toBeGreaterThanOrEqual(4);
    for (const f of fc.features) expect(f.properties.seed).toBe(11);
  });

  it('cells tile the AOI: areas add up to its area, each counted detection lies in exactly one cell, ≥ 2 checks per stratum', () => {
    const run = readRunDir(runDir);
    for (const aoi of readAois(fx.aoiAll)) {
      const { inFrame, design } = designFor(aoi, run, 3);
      // planar shoelace area of the AOI in the frame (self-consistency: the same frame, computed independently)
      let area = 0;
      for (const poly of inFrame.polygons) poly.forEach((ring, k) => {
        let s = 0;
        for (let i = 0; i + 1 < ring.length; i++) s += ring[i][0] * ring[i + 1][1] - ring[i + 1][0] * ring[i][1];
        area += (k === 0 ? 1 : -1) * Math.abs(s) / 2;
      });
      expect(Math.abs(design.cells.reduce((s, c) => s + c.areaM2, 0) / area - 1)).toBeLessThan(1e-7); // clipping at UTM coordinates (~5e6 m) leaves ~1e-8 of float error over ~50 cells
      const inCells = design.cells.reduce((s, c) => s + c.detected.reduce((x, y) => x + y, 0), 0);
      const counted = run.counts.rows.filter((r) => r.aoiId === aoi.id).reduce((s, r) => s + r.count, 0);
      expect(inCells).toBe(counted);
      for (let h = 0; h < design.strata.length; h++) {
        const picked = design.sample.filter((id) => design.cells.find((c) => c.id === id)!.stratum === h).length;
        expect(picked).toBeGreaterThanOrEqual(Math.min(2, design.cells.filter((c) => c.stratum === h).length));
      }
    }
  });
});

describe('seamtally estimate', () => {
  const withTruth = (add: number) => {
    const src = join(dir, 'cells.geojson');
    const fc = JSON.parse(readFileSync(src, 'utf8')) as CellsFc;
    for (const f of fc.features) f.properties.trueCounts = Object.fromEntries(Object.entries(f.properties.detected).map(([k, n]) => [k, n + add]));
    const out = join(dir, `checked-${add}.geojson`);
    writeFileSync(out, JSON.stringify(fc));
    return out;
  };
  it('a perfect detector: the estimate is the detector count, SE 0; one missed object per checked cell: + one per cell', async () => {
    expect((await cli(['sample', '--aoi', fx.aoiAll, '--run', runDir, '--seed', '5', '--out', join(dir, 'cells.geojson')])).rc).toBe(0);
    const run = readRunDir(runDir);
    for (const add of [0, 1]) {
      const out = join(dir, `est-${add}`);
      const r = await cli(['estimate', '--aoi', fx.aoiAll, '--run', runDir, '--checked', withTruth(add), '--out', out]);
      expect(r.rc, r.err).toBe(0);
      const json = JSON.parse(readFileSync(join(out, 'counts.json'), 'utf8'));
      for (const row of json.rows) {
        const aoi = readAois(fx.aoiAll).find((a) => a.id === row.aoiId)!;
        const cells = designFor(aoi, run, 5).design.cells.length;
        expect(row.estimate.count).toBeCloseTo(row.count + add * cells, 9);
        expect(row.estimate.se).toBeCloseTo(0, 12);
        expect(row.estimate.method).toMatch(/stratified difference estimator/);
      }
      const csv = readFileSync(join(out, 'counts.csv'), 'utf8').split('\r\n');
      expect(csv[0]).toMatch(/estimated_count,estimate_se,estimate_ci95_low,estimate_ci95_high,cells_checked/);
    }
  });
  it('cells that no longer match the run are refused with what to do', async () => {
    const fc = JSON.parse(readFileSync(withTruth(0), 'utf8')) as CellsFc;
    fc.features[0].properties.detected = Object.fromEntries(Object.keys(fc.features[0].properties.detected).map((k) => [k, 999]));
    const p = join(dir, 'stale.geojson');
    writeFileSync(p, JSON.stringify(fc));
    const r = await cli(['estimate', '--aoi', fx.aoiAll, '--run', runDir, '--checked', p, '--out', join(dir, 'est-stale')]);
    expect(r.rc).toBe(1);
    expect(r.err).toMatch(/does not match the run.*seamtally sample/);
  });
});
