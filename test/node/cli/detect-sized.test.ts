// Tiling invariance with sized (rectangular) windows: the fixture model (dynamic H and W) declared with a maxTilePx,
// run by `seamtally detect` through onnxruntime-node at several tile sizes — every planted square is found once.
import { copyFileSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../../helpers/cli.ts';
import { createTransform } from '../../../web/core/crs.ts';
import { planTiles } from '../../../web/core/tiling.ts';
import { makeBlobScenes, SQUARE_M, type BlobScenes } from '../../fixtures/blob-scenes.ts';

const dir = mkdtempSync(join(tmpdir(), 'seamtally-detect-sized-'));
const MODEL = join(dir, 'sized-fixture.onnx');
let fx: BlobScenes;

beforeAll(() => {
  fx = makeBlobScenes(dir);
  copyFileSync('test/fixtures/fixture-model.onnx', MODEL);
  const sc = JSON.parse(readFileSync('test/fixtures/fixture-model.model.json', 'utf8'));
  writeFileSync(join(dir, 'sized-fixture.model.json'), JSON.stringify({ ...sc, maxTilePx: 192, tileAlignPx: 8 }));
});

const cli = (args: string[]) => runCli(['detect', ...args]);

/** Detected centres in EPSG:32632 (mean of each box polygon's 4 corners). */
function detectedCentres(out: string): [number, number][] {
  const fc = JSON.parse(readFileSync(join(out, 'detections.geojson'), 'utf8')) as { features: { geometry: { coordinates: number[][][] } }[] };
  const toUtm = createTransform(4326, 32632);
  return fc.features.map((f) => {
    const ring = f.geometry.coordinates[0].slice(0, 4).map((p) => toUtm([p[0], p[1]]));
    return [ring.reduce((a, p) => a + p[0], 0) / 4, ring.reduce((a, p) => a + p[1], 0) / 4];
  });
}

/** Planted objects with exactly one detection within tolM, and detections left over. */
function matchAll(dets: [number, number][], truth: { xM: number; yM: number }[], tolM: number) {
  const used = new Set<number>();
  for (const t of truth) {
    const i = dets.findIndex((d, k) => !used.has(k) && Math.hypot(d[0] - t.xM, d[1] - t.yM) <= tolM);
    if (i >= 0) used.add(i);
  }
  return { matched: used.size, extra: dets.length - used.size };
}

describe('tiling invariance with sized windows (fixture model with maxTilePx 192, alignment 8)', () => {
  for (const t of [{ tile: '64', overlap: '14' }, { tile: '96', overlap: '20' }, { tile: '128', overlap: 'auto' }]) {
    it(`scene A, tile ${t.tile} px, overlap ${t.overlap}: rectangular windows, every square once`, async () => {
      const plan = planTiles({ sceneWidthPx: 300, sceneHeightPx: 300, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx: Number(t.tile),
        maxObjectExtentM: 4.7, overlapPx: t.overlap === 'auto' ? 'auto' : Number(t.overlap), alignPx: 8, sizeStepPx: 8 });
      // the plan really has windows narrower than the tile, and squares across its seams (else the test is void)
      expect(plan.tiles.some((k) => k.windowModelPx.maxXPx - k.windowModelPx.minXPx < Number(t.tile))).toBe(true);
      const half = SQUARE_M / 2 / 0.3;
      const seams = new Set(plan.tiles.map((k) => k.corePx.minXPx).filter((v) => v > 0));
      const inA = fx.objects.filter((o) => o.inA);
      const crossing = inA.filter((o) => [...seams].some((s) => Math.abs((o.xM - fx.ulA[0]) / 0.3 - s) < half));
      if (plan.cols > 1) expect(crossing.length).toBeGreaterThanOrEqual(1);

      const out = join(dir, `out-${t.tile}`);
      const r = await cli([fx.pathA, '--aoi', fx.aoiAll, '--model', MODEL, '--out', out, '--tile', t.tile, '--overlap', t.overlap, '--quiet']);
      expect(r.err).toBe('');
      expect(r.rc).toBe(0);
      expect(matchAll(detectedCentres(out), inA, 0.05)).toEqual({ matched: inA.length, extra: 0 });
    });
  }

  it('two overlapping scenes of one date (0.3 m and 0.5 m upsampled) at the default tiling count each square once', async () => {
    const out = join(dir, 'out-ab');
    const r = await cli([fx.pathA, fx.pathB, '--aoi', fx.aoiAll, '--model', MODEL, '--out', out, '--quiet']);
    expect(r.rc, r.err).toBe(0);
    expect(matchAll(detectedCentres(out), fx.objects, 0.6)).toEqual({ matched: fx.objects.length, extra: 0 });
  });
});
