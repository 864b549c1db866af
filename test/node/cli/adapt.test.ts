// `seamtally adapt` and `seamtally detect --scorer` on a detect run of the fixture scenes (invented labels: a
// self-consistency check of the plumbing; the regression is checked against scikit-learn in logistic.test.ts):
// the scorer file is written from reviews matched to the run's detections, detect --scorer counts exactly what the
// core's applyScorer gives on the same detections, counts.json says which scores were used, and a scorer for
// another detector is refused with a sentence.
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../../helpers/cli.ts';
import { applyScorer, parseScorer } from '../../../web/core/adapted-scorer.ts';
import { createDetectionTable } from '../../../web/core/types.ts';
import { makeBlobScenes, type BlobScenes } from '../../fixtures/blob-scenes.ts';

const MODEL = 'test/fixtures/fixture-model.onnx';
const dir = mkdtempSync(join(tmpdir(), 'seamtally-adapt-'));
let fx: BlobScenes;
const runDir = join(dir, 'run');

const cli = (args: string[]) => runCli(args);

type Fc = { features: Array<{ geometry: unknown; properties: Record<string, unknown> }> };

beforeAll(async () => {
  fx = makeBlobScenes(dir);
  const r = await cli(['detect', fx.pathA, fx.pathB, '--aoi', fx.aoiAll, '--model', MODEL, '--out', runDir, '--quiet', '--min-score', '0.2']);
  expect(r.rc, r.err).toBe(0);
}, 120_000);

describe('seamtally adapt / detect --scorer', () => {
  it('adapts from reviews and detect --scorer counts with the adapted scores', async () => {
    const run = JSON.parse(readFileSync(join(runDir, 'detections.geojson'), 'utf8')) as Fc;
    expect(run.features.length).toBeGreaterThanOrEqual(20);
    // invented reviews (the fixture's boxes all look alike, so there is nothing real to learn: this checks the
    // plumbing; learning is checked in core/adapted-scorer.test.ts)
    const scores = run.features.map((f) => Number(f.properties.score));
    const median = [...scores].sort((x, y) => x - y)[Math.floor(scores.length / 2)];
    const reviews = { type: 'FeatureCollection', features: run.features.map((f, i) => ({ ...f, properties: { ...f.properties, review: scores[i] >= median ? 'accepted' : 'rejected' } })) };
    const reviewsPath = join(dir, 'reviews.geojson');
    writeFileSync(reviewsPath, JSON.stringify(reviews));
    const scorerPath = join(dir, 'scorer.json');
    const a = await cli(['adapt', '--run', runDir, '--reviews', reviewsPath, '--out', scorerPath]);
    expect(a.rc, a.err).toBe(0);
    expect(a.err).toMatch(/adapted from \d+ accepted and \d+ rejected/);
    const scorer = parseScorer(readFileSync(scorerPath, 'utf8'));
    const cls = scorer.classes[0];
    expect(scorer.perClass[cls]).not.toBeNull();
    const out2 = join(dir, 'run2');
    const d = await cli(['detect', fx.pathA, fx.pathB, '--aoi', fx.aoiAll, '--model', MODEL, '--out', out2, '--quiet', '--min-score', '0.2', '--scorer', scorerPath]);
    expect(d.rc, d.err).toBe(0);
    const counts = JSON.parse(readFileSync(join(out2, 'counts.json'), 'utf8'));
    expect(counts.scores.source).toBe('adapted');
    // the exported scores are the core's applyScorer on the same detections (same merge order), and the counts
    // are those scores under the rule
    const adapted = JSON.parse(readFileSync(join(out2, 'detections.geojson'), 'utf8')) as Fc;
    expect(adapted.features.length).toBe(run.features.length);
    const t = createDetectionTable('EPSG:4326', run.features.length);
    run.features.forEach((f, i) => { t.score[i] = Number(f.properties.score); t.lengthM[i] = Number(f.properties.lengthM); t.widthM[i] = Number(f.properties.widthM); t.classIdx[i] = scorer.classes.indexOf(String(f.properties.class)); });
    t.count = run.features.length;
    const want = applyScorer(scorer, t, scorer.classes, scorer.model);
    adapted.features.forEach((f, i) => expect(Number(f.properties.score)).toBeCloseTo(want[i], 3));
    const counted = adapted.features.filter((f) => Number(f.properties.score) >= 0.2).length;
    expect(counts.rows.filter((r: { className: string }) => r.className === cls)[0].count).toBe(counted);
  });
  it('a scorer for another detector is refused with a sentence', async () => {
    const p = join(dir, 'other.json');
    writeFileSync(p, JSON.stringify({ format: 'seamtally-scorer/1', model: 'someone else 3', classes: ['x'], modelFeatureDim: 0, perClass: {}, gain: {}, createdIso: '' }));
    const d = await cli(['detect', fx.pathA, '--aoi', fx.aoiAll, '--model', MODEL, '--out', join(dir, 'run3'), '--quiet', '--scorer', p]);
    expect(d.rc).not.toBe(0);
    expect(d.err).toMatch(/adapted for the detector "someone else 3"/);
  });
});
