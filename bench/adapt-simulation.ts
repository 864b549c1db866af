// Measurement: how much does adapting scores to an analyst's reviews help on real imagery the shipped detector has
// not been trained on? On the real validation sets of the detector work (drone frames and roof crops at 0.3 m;
// detections with the model's features from models/train/real/adapt_extract.py), a simulated analyst reviews 20, 50
// or 100 detections picked by the review queue's rule (nearest the threshold, spread over the scene; among
// detections at or above the run's floor), the core trains the adapted scorer (web/core/adapted-scorer.ts), and
// precision, recall and F1 at the shipped threshold are measured on the unreviewed rest, before and after.
// A random pick of the same size (mean of 10 seeds) is shown beside the queue's.
//
//   /usr/bin/python3 models/train/real/adapt_extract.py && npx tsx bench/adapt-simulation.ts [--out bench/adapt-simulation.md]
import { readFileSync, writeFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { applyScorer, trainScorer, uncertaintyOrder } from '../web/core/adapted-scorer.ts';
import { createDetectionTable, type DetectionTable, type ReviewState } from '../web/core/types.ts';
import { mulberry32 } from '../web/core/seeded-random.ts';

const { values: v } = parseArgs({ options: { in: { type: 'string', default: '.cache/adapt-sim/real-detections.json' }, out: { type: 'string', default: 'bench/adapt-simulation.md' } } });
const sidecar = JSON.parse(readFileSync('models/seamtally-det.model.json', 'utf8')) as { name: string; version: string; minScore: number };
const THRESHOLD = sidecar.minScore;
const FLOOR = 0.2; // the page's run floor (run-plan.ts RUN_SCORE_FLOOR): detections below it are not kept
const PX_M = 0.3;
type Det = [number, number, number, number, number, number[], number]; // score, cx, cy, length, width, features, label
const data = JSON.parse(readFileSync(v.in!, 'utf8')) as { sets: Array<{ set: string; class: string; images: Array<{ truth: number; dets: Det[] }> }> };
const lines: string[] = [];
const say = (s: string) => { lines.push(s); process.stdout.write(s + '\n'); };

function f1(tp: number, fp: number, pos: number) {
  const p = tp + fp > 0 ? tp / (tp + fp) : 0, r = pos > 0 ? tp / pos : 0;
  return { p, r, f1: p + r > 0 ? (2 * p * r) / (p + r) : 0 };
}

say('# Review-adapted scores on real validation imagery\n');
say(`Shipped detector ${sidecar.name} ${sidecar.version}, threshold ${THRESHOLD}; detections ≥ ${FLOOR} (the run's floor) can be reviewed; measured on the unreviewed rest. Made by \`npx tsx bench/adapt-simulation.ts\` (${new Date().toISOString().slice(0, 10)}).\n`);
say('| set | class | reviews | picked by | accepted / rejected | P before → after | R before → after | F1 before → after | ΔF1 |');
say('|---|---|---|---|---|---|---|---|---|');
for (const s of data.sets) {
  const rows: Det[] = [];
  const imageOf: number[] = [];
  let truth = 0;
  s.images.forEach((im, j) => { truth += im.truth; for (const d of im.dets) if (d[0] >= FLOOR) { rows.push(d); imageOf.push(j); } });
  const n = rows.length;
  const F = rows[0]?.[5].length ?? 0;
  const t: DetectionTable = createDetectionTable('EPSG:32632', n);
  t.features = new Float32Array(n * F); t.featureDim = F;
  rows.forEach((d, i) => {
    // images side by side 1 km apart, so "spread over the scene" spreads over the images too
    t.cxM[i] = imageOf[i] * 1000 + d[1] * PX_M; t.cyM[i] = d[2] * PX_M;
    t.score[i] = d[0]; t.lengthM[i] = d[3]; t.widthM[i] = d[4]; t.classIdx[i] = 0;
    t.features!.set(d[5], i * F);
  });
  t.count = n;
  const label = rows.map((d) => d[6]);
  const candidates = rows.map((_, i) => i).filter((i) => label[i] !== -1);
  const evaluate = (picked: number[]) => {
    const review: ReviewState[] = new Array<ReviewState>(n).fill('unreviewed');
    for (const i of picked) review[i] = label[i] === 1 ? 'accepted' : 'rejected';
    const sc = trainScorer({ table: t, review, classes: [s.class], model: 'sim', threshold: THRESHOLD });
    const adapted = sc.perClass[s.class] ? applyScorer(sc, t, [s.class], 'sim') : t.score;
    const isPicked = new Set(picked);
    const reviewedTrue = picked.filter((i) => label[i] === 1).length;
    let tpB = 0, fpB = 0, tpA = 0, fpA = 0;
    for (let i = 0; i < n; i++) {
      if (isPicked.has(i) || label[i] === -1) continue;
      if (t.score[i] >= THRESHOLD) { if (label[i] === 1) tpB++; else fpB++; }
      if (adapted[i] >= THRESHOLD) { if (label[i] === 1) tpA++; else fpA++; }
    }
    const pos = truth - reviewedTrue;
    return { before: f1(tpB, fpB, pos), after: f1(tpA, fpA, pos), adapted: !!sc.perClass[s.class], acc: reviewedTrue, rej: picked.length - reviewedTrue };
  };
  const order = uncertaintyOrder(t, t.score, THRESHOLD, candidates);
  const pct = (x: number) => `${Math.round(100 * x)}`;
  for (const k of [20, 50, 100]) {
    const q = evaluate(order.slice(0, k));
    say(`| ${s.set} | ${s.class} | ${k} | queue | ${q.acc} / ${q.rej}${q.adapted ? '' : ' (not adapted)'} | ${pct(q.before.p)} → ${pct(q.after.p)} | ${pct(q.before.r)} → ${pct(q.after.r)} | ${q.before.f1.toFixed(3)} → ${q.after.f1.toFixed(3)} | ${(q.after.f1 - q.before.f1 >= 0 ? '+' : '') + (q.after.f1 - q.before.f1).toFixed(3)} |`);
    let dSum = 0, bSum = 0, aSum = 0;
    for (let seed = 1; seed <= 10; seed++) {
      const rnd = mulberry32(seed);
      const pool = [...candidates];
      for (let i = pool.length - 1; i > 0; i--) { const j = Math.floor(rnd() * (i + 1)); [pool[i], pool[j]] = [pool[j], pool[i]]; }
      const r = evaluate(pool.slice(0, k));
      bSum += r.before.f1; aSum += r.after.f1; dSum += r.after.f1 - r.before.f1;
    }
    say(`| ${s.set} | ${s.class} | ${k} | random (10 seeds) | | | | ${(bSum / 10).toFixed(3)} → ${(aSum / 10).toFixed(3)} | ${(dSum / 10 >= 0 ? '+' : '') + (dSum / 10).toFixed(3)} |`);
  }
}
writeFileSync(v.out!, lines.join('\n') + '\n');
