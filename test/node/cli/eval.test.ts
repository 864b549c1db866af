// `seamtally eval` end to end with the fixture ONNX model on GDAL-written planted squares: perfect truth gives
// precision = recall = AP = 1 and zero count error; a missing and a spurious truth object give exactly one false
// positive and one miss; a truth object marked less than half visible is VOC "difficult": neither a hit nor a miss,
// and the detection on it is not a false positive (PASCAL VOC rule, Everingham et al. 2010, sec. 4.4 — from memory).
import { copyFileSync, mkdirSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it, vi } from 'vitest';
import { main } from '../../../cli/main.ts';
import { makeBlobScenes, SQUARE_M, type BlobScenes } from '../../fixtures/blob-scenes.ts';

const MODEL = 'test/fixtures/fixture-model.onnx';
const root = mkdtempSync(join(tmpdir(), 'seamtally-eval-'));
let fx: BlobScenes;

beforeAll(() => { fx = makeBlobScenes(root); });

interface TruthObj { xM: number; yM: number; visibleFraction?: number }
/** A scene folder holding scene A and a truth file in the synthesizer's format (scene CRS metres). */
function sceneDir(name: string, truth: TruthObj[]): string {
  const d = join(root, name);
  mkdirSync(d, { recursive: true });
  copyFileSync(fx.pathA, join(d, 'a.tif'));
  writeFileSync(join(d, 'a.truth.geojson'), JSON.stringify({
    type: 'FeatureCollection',
    features: truth.map((o) => ({
      type: 'Feature', geometry: null,
      properties: { class: 'blob', cxM: o.xM, cyM: o.yM, lengthM: SQUARE_M, widthM: SQUARE_M, angleRad: 0, visibleFraction: o.visibleFraction ?? 1 },
    })),
  }));
  return d;
}

async function evalDir(d: string): Promise<{ overall: Record<string, Record<string, number>>; aoiCounts: Array<Record<string, number | string>> }> {
  const out = join(d, 'eval.json');
  const spy = vi.spyOn(process.stderr, 'write').mockImplementation(() => true);
  try {
    expect(await main(['eval', '--model', MODEL, '--scenes', d, '--out', out, '--quiet'])).toBe(0);
  } finally { spy.mockRestore(); }
  return JSON.parse(readFileSync(out, 'utf8'));
}

describe('seamtally eval', () => {
  it('perfect truth: precision, recall and AP@0.5 are 1 and every quadrant count is exact', async () => {
    const inA = fx.objects.filter((o) => o.inA);
    const r = await evalDir(sceneDir('perfect', inA));
    const q = r.overall.blob;
    expect(q.positives).toBe(inA.length);
    expect([q.tp, q.fp, q.fn]).toEqual([inA.length, 0, 0]);
    expect([q.precision, q.recall, q.ap50]).toEqual([1, 1, 1]);
    const whole = r.aoiCounts.find((c) => c.aoi === 'whole scene')!;
    expect([whole.trueCount, whole.detectedCount, whole.error]).toEqual([inA.length, inA.length, 0]);
    expect(r.aoiCounts.filter((c) => c.aoi !== 'whole scene').every((c) => c.error === 0 || c.trueCount === 0)).toBe(true);
  });

  it('one truth dropped and one invented: exactly one false positive and one miss', async () => {
    const inA = fx.objects.filter((o) => o.inA);
    // an invented object 10 m from every planted square, inside the scene (no square there, so nothing detects it)
    const empty = { xM: fx.ulA[0] + 1.5, yM: fx.ulA[1] - 1.5 };
    expect(inA.every((o) => Math.hypot(o.xM - empty.xM, o.yM - empty.yM) > 5)).toBe(true);
    const r = await evalDir(sceneDir('off-by-one', [...inA.slice(1), empty]));
    const q = r.overall.blob, n = inA.length;
    expect([q.positives, q.tp, q.fp, q.fn]).toEqual([n, n - 1, 1, 1]);
    expect(q.precision).toBeCloseTo((n - 1) / n, 4);
    expect(q.recall).toBeCloseTo((n - 1) / n, 4);
    expect(q.ap50).toBeLessThan(1);
  });

  it('a truth object less than half visible is "difficult": not a positive, its detection not a false positive', async () => {
    const inA = fx.objects.filter((o) => o.inA);
    const truth = inA.map((o, i) => (i === 0 ? { ...o, visibleFraction: 0.3 } : o));
    const r = await evalDir(sceneDir('difficult', truth));
    const q = r.overall.blob, n = inA.length;
    expect([q.positives, q.tp, q.fp, q.fn]).toEqual([n - 1, n - 1, 0, 0]);
    expect(q.ap50).toBe(1);
  });
});
