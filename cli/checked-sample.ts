// Shared by `seamtally sample` and `seamtally estimate`: a `detect` output directory read back (its counted
// detections as points in its metric frame) and the sample design of each AOI, made by the core (check-sample.ts),
// so both commands (and a second `sample` with the same seed) lay exactly the same cells.
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseAois, reprojectAoi, type Aoi, type AoiInCrs } from '../web/core/aoi.ts';
import { createTransform, parseEpsgName } from '../web/core/crs.ts';
import { designSample, type CountedPoint, type SampleDesign } from '../web/core/check-sample.ts';
import { SeamtallyError } from '../web/core/errors.ts';
import type { CountsJson } from '../web/core/export-csv.ts';
import { countsUnderRule } from '../web/core/counts.ts';
import { DEFAULT_MIN_SCORE } from '../web/core/model-contract.ts';
import type { ReviewState } from '../web/core/types.ts';
import { readText } from './detect.ts';

export interface RunDir {
  counts: CountsJson;
  frameEpsg: number;
  classes: string[];
  minScore: number;
  points: CountedPoint[];
}

/** Read a `detect` output directory: counts.json (frame, classes, threshold) and the counted detections. */
export function readRunDir(dir: string): RunDir {
  for (const f of ['counts.json', 'detections.geojson']) {
    if (!existsSync(join(dir, f))) throw new SeamtallyError('bad-argument', `"${dir}" is not a seamtally detect output directory (it has no ${f}): give --run the --out directory of a detect run.`);
  }
  const counts = JSON.parse(readFileSync(join(dir, 'counts.json'), 'utf8')) as CountsJson;
  const frameEpsg = parseEpsgName(String(counts.frameCrs));
  const classes = [...new Set(counts.rows.map((r) => r.className))];
  const minScore = counts.rows[0]?.minScore ?? DEFAULT_MIN_SCORE;
  const fc = JSON.parse(readFileSync(join(dir, 'detections.geojson'), 'utf8')) as { features: Array<{ geometry: { coordinates: number[][][] }; properties: { class: string; score: number; review?: ReviewState } }> };
  const toFrame = createTransform(4326, frameEpsg);
  const points: CountedPoint[] = [];
  for (const f of fc.features) {
    const p = f.properties;
    const classIdx = classes.indexOf(p.class);
    if (classIdx < 0 || !countsUnderRule(p.score, p.review ?? 'unreviewed', minScore)) continue;
    const ring = f.geometry.coordinates[0].slice(0, -1).map((ll) => toFrame([ll[0], ll[1]]));
    points.push({ xM: ring.reduce((a, q) => a + q[0], 0) / ring.length, yM: ring.reduce((a, q) => a + q[1], 0) / ring.length, classIdx });
  }
  return { counts, frameEpsg, classes, minScore, points };
}

export function readAois(path: string): Aoi[] {
  return parseAois(readText(path, 'AOI file'));
}

/** The design of one AOI on a run (deterministic in the seed). */
export function designFor(aoi: Aoi, run: RunDir, seed: number): { inFrame: AoiInCrs; design: SampleDesign } {
  const inFrame = reprojectAoi(aoi, run.frameEpsg);
  return { inFrame, design: designSample(inFrame.polygons, run.points, { seed, classCount: run.classes.length }) };
}
