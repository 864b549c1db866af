// `seamtally adapt`: a review-adapted scorer from a detect run and the analyst's reviews (web/core/adapted-scorer.ts).
// Reviews are lon/lat GeoJSON features whose properties.review is accepted, rejected or added (the page's detections
// export has that form); each accepted or rejected one is matched to the run's detection of the same class whose
// centre is nearest, within 1.5 m. Writes the scorer JSON and prints the cross-validated gain on the reviews.
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { SeamtallyError } from '../web/core/errors.ts';
import { createTransform, parseEpsgName } from '../web/core/crs.ts';
import { boxFromCorners } from '../web/core/box-mapping.ts';
import { trainScorer } from '../web/core/adapted-scorer.ts';
import { createDetectionTable, type ReviewState } from '../web/core/types.ts';
import { concatDetectionTables } from '../web/core/seam-merge.ts';
import { readText, writeAtomic } from './detect.ts';

export const USAGE = `seamtally adapt --run DIR --reviews REVIEWS.geojson --out SCORER.json
  A scorer adapted to this imagery from your reviews (DIR: the --out directory of a detect run made with --features,
  or without it for a scorer on box sizes only; REVIEWS: lon/lat
  features with properties.review accepted | rejected | added, e.g. the page's detections export). Needs 10 accepted
  and 10 rejected detections of a class to adapt it. Use the scorer with seamtally detect --scorer SCORER.json.`;

/** Centres within this distance (m) of a review are the reviewed detection. */
const MATCH_M = 1.5;

function bad(message: string): never {
  throw new SeamtallyError('bad-argument', `${message} ${USAGE}`);
}

type Feature = { geometry: { type: string; coordinates: number[][][] }; properties: Record<string, unknown> };

export async function run(argv: string[]): Promise<number> {
  let v;
  try {
    v = parseArgs({ args: argv, options: { run: { type: 'string' }, reviews: { type: 'string' }, out: { type: 'string' }, seed: { type: 'string' } } }).values;
  } catch (err) { bad(`${(err as Error).message}.`); }
  if (!v.run || !v.reviews || !v.out) bad('--run, --reviews and --out are all required.');
  for (const f of ['counts.json', 'detections.geojson']) {
    if (!existsSync(join(v.run, f))) throw new SeamtallyError('bad-argument', `"${v.run}" is not a seamtally detect output directory (it has no ${f}): give --run the --out directory of a detect run.`);
  }
  const counts = JSON.parse(readFileSync(join(v.run, 'counts.json'), 'utf8')) as { frameCrs: string; modelId?: string; model?: string; rows: Array<{ className: string; minScore: number }>; features?: { file: string; dim: number; rows: number } | null };
  const classes = [...new Set(counts.rows.map((r) => r.className))];
  const threshold = counts.rows[0]?.minScore ?? 0.5;
  const frame = parseEpsgName(counts.frameCrs);
  const toFrame = createTransform(4326, frame);
  const dets = (JSON.parse(readFileSync(join(v.run, 'detections.geojson'), 'utf8')) as { features: Feature[] }).features;
  const t = createDetectionTable(counts.frameCrs, dets.length);
  dets.forEach((f, i) => {
    const b = boxFromCorners(f.geometry.coordinates[0].slice(0, 4).map((ll) => toFrame([ll[0], ll[1]])));
    t.cxM[i] = b.cxM; t.cyM[i] = b.cyM; t.lengthM[i] = b.lengthM; t.widthM[i] = b.widthM; t.angleRad[i] = b.angleRad;
    t.score[i] = Number(f.properties.score); t.classIdx[i] = Math.max(0, classes.indexOf(String(f.properties.class)));
  });
  t.count = dets.length;
  if (counts.features) {
    const buf = readFileSync(join(v.run, counts.features.file));
    if (buf.byteLength !== dets.length * counts.features.dim * 4) throw new SeamtallyError('bad-argument', `${counts.features.file} in "${v.run}" does not match its ${dets.length} detections: run seamtally detect again.`);
    t.features = new Float32Array(buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength));
    t.featureDim = counts.features.dim;
  }
  let reviews: Feature[];
  try { reviews = (JSON.parse(readText(v.reviews, 'reviews file')) as { features: Feature[] }).features ?? []; } catch (err) {
    if (err instanceof SeamtallyError) throw err;
    throw new SeamtallyError('bad-argument', `The reviews file "${v.reviews}" is not GeoJSON (${(err as Error).message}).`);
  }
  const review: ReviewState[] = new Array<ReviewState>(t.count).fill('unreviewed');
  const added: number[] = [];
  let unmatched = 0;
  for (const f of reviews) {
    const state = f.properties?.review;
    if (state !== 'accepted' && state !== 'rejected' && state !== 'added') continue;
    const k = classes.indexOf(String(f.properties.class));
    if (k < 0) continue;
    const ring = f.geometry.coordinates[0].slice(0, 4).map((ll) => toFrame([ll[0], ll[1]]));
    const c = boxFromCorners(ring);
    if (state === 'added') { added.push(k); continue; }
    let best = -1, bestD = MATCH_M;
    for (let i = 0; i < t.count; i++) {
      if (t.classIdx[i] !== k) continue;
      const d = Math.hypot(t.cxM[i] - c.cxM, t.cyM[i] - c.cyM);
      if (d <= bestD) { best = i; bestD = d; }
    }
    if (best < 0) unmatched++; else review[best] = state;
  }
  // added objects: rows of their own after the detections (no model features: NaN rows, so they count only as
  // misses in the gain), as the page's reviewed table adds them
  const addedRows = createDetectionTable(t.frameCrs, added.length);
  added.forEach((k, j) => { addedRows.classIdx[j] = k; addedRows.score[j] = 1; });
  addedRows.count = added.length;
  const withAdded = concatDetectionTables([t, addedRows]);
  const scorer = trainScorer({ table: withAdded, review: [...review, ...added.map(() => 'added' as const)], classes, model: counts.modelId ?? counts.model ?? 'unknown', threshold, seed: v.seed ? Number(v.seed) : 1 });
  writeAtomic(v.out, JSON.stringify(scorer, null, 1) + '\n');
  const pct = (x: number | null) => (x === null ? '–' : `${Math.round(100 * x)} %`);
  if (unmatched) process.stderr.write(`${unmatched} reviewed features matched no detection of the run within ${MATCH_M} m and were left out.\n`);
  for (const cls of classes) {
    const s = scorer.perClass[cls];
    const g = scorer.gain[cls];
    if (!s) { process.stderr.write(`${cls}: not adapted (needs 10 accepted and 10 rejected detections).\n`); continue; }
    process.stderr.write(`${cls}: adapted from ${s.positives} accepted and ${s.negatives} rejected (C ${s.C}); on the reviews, cross-validated at score ${g.threshold}: precision ${pct(g.before.precision)} → ${pct(g.after.precision)}, recall ${pct(g.before.recall)} → ${pct(g.after.recall)}${g.added ? ` (${g.added} added objects count as misses both ways)` : ''}.\n`);
  }
  return 0;
}
