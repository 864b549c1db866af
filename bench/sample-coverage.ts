// Measurement: does a checked sample's 95 % interval cover the true count? On the demo's synthetic scenes (every
// object known, two GSDs: 0.3 and 0.5 m), with the shipped detector run once at a low floor and counted at three
// thresholds (0.25: over-counts, the model's default, 0.60: misses), for each area and each of N seeds the core
// draws the sample (check-sample.ts) and a perfect checker supplies each sampled cell's truth (known objects with
// their centre in the cell and the area; detections within 2 m of a known object, one to one, are true
// positives); the core's estimate (sample-estimate.ts) is compared with the known count. Reports coverage, mean
// estimate / truth, raw detector count / truth, and the mean interval half-width at two sample sizes.
//
//   npx tsx bench/sample-coverage.ts [--runs 500] [--out bench/sample-coverage.md]
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { parseAois, reprojectAoi } from '../web/core/aoi.ts';
import { createTransform } from '../web/core/crs.ts';
import { designSample, cellIdAt, type CountedPoint } from '../web/core/check-sample.ts';
import { estimatesForDesign, type CellTally } from '../web/core/sample-estimate.ts';
import { prepareMultiPolygon } from '../web/core/point-in-polygon.ts';

const DEMO = '.cache/demo';
const WORK = '.cache/sample-coverage';
const FLOOR = 0.15;
const MATCH_M = 2;

const { values: v } = parseArgs({ options: { runs: { type: 'string', default: '500' }, out: { type: 'string', default: 'bench/sample-coverage.md' } } });
const runs = Number(v.runs);

if (!existsSync(join(DEMO, 'manifest.json'))) execFileSync(process.execPath, ['bin/seamtally.mjs', 'demo', '--out', DEMO, '--quiet'], { stdio: 'inherit' });
const manifest = JSON.parse(readFileSync(join(DEMO, 'manifest.json'), 'utf8')) as { epsg: number; aois: string; scenes: Array<{ file: string; truth: string; date: string; gsdM: number }> };
const model = 'models/seamtally-det.onnx';
const sidecar = JSON.parse(readFileSync('models/seamtally-det.model.json', 'utf8')) as { minScore: number };
const aois = parseAois(readFileSync(join(DEMO, manifest.aois), 'utf8'));
const lines: string[] = [];
const say = (s: string) => { lines.push(s); process.stdout.write(s + '\n'); };

say(`# Checked-sample intervals on the demo's synthetic scenes\n`);
say(`${runs} seeded samples per case; vehicles; perfect checker; shipped detector (${model}) decoded at ${FLOOR} and counted at the threshold shown. Made by \`npx tsx bench/sample-coverage.ts\` (${new Date().toISOString().slice(0, 10)}).\n`);
say('| date (GSD) | threshold | area | cells | checked | known | detector / known | mean estimate / known | 95 % covers | mean half-width | half-width, 2× cells checked (covers) |');
say('|---|---|---|---|---|---|---|---|---|---|---|');

for (const date of [...new Set(manifest.scenes.map((s) => s.date))].sort()) {
  const scenes = manifest.scenes.filter((s) => s.date === date);
  const out = join(WORK, date);
  if (!existsSync(join(out, 'detections.geojson'))) {
    execFileSync(process.execPath, ['bin/seamtally.mjs', 'detect', ...scenes.map((s) => join(DEMO, s.file)), '--aoi', join(DEMO, manifest.aois), '--model', model,
      '--out', out, '--date', date, '--min-score', String(FLOOR), '--quiet', '--threads', '2'], { stdio: ['ignore', 'ignore', 'inherit'] });
  }
  const toFrame = createTransform(4326, manifest.epsg);
  const dets = (JSON.parse(readFileSync(join(out, 'detections.geojson'), 'utf8')) as { features: Array<{ geometry: { coordinates: number[][][] }; properties: { class: string; score: number } }> }).features
    .filter((f) => f.properties.class === 'vehicle').map((f) => {
      const ring = f.geometry.coordinates[0].slice(0, -1).map((ll) => toFrame([ll[0], ll[1]]));
      return { x: ring.reduce((a, q) => a + q[0], 0) / ring.length, y: ring.reduce((a, q) => a + q[1], 0) / ring.length, score: f.properties.score };
    });
  const seen = new Set<string>();
  const known: Array<{ x: number; y: number }> = [];
  for (const s of scenes) {
    for (const f of (JSON.parse(readFileSync(join(DEMO, s.truth), 'utf8')) as { features: Array<{ properties: { class: string; cxM: number; cyM: number } }> }).features) {
      const k = `${f.properties.cxM.toFixed(2)}|${f.properties.cyM.toFixed(2)}`;
      if (f.properties.class === 'vehicle' && !seen.has(k)) { seen.add(k); known.push({ x: f.properties.cxM, y: f.properties.cyM }); }
    }
  }
  const gsd = Math.max(...scenes.map((s) => s.gsdM));
  for (const threshold of [0.25, sidecar.minScore, 0.6]) {
    const kept = dets.filter((d) => d.score >= threshold);
    // one-to-one matching, nearest pairs first (a grid would be faster; a few thousand objects do not need it)
    const pairs: Array<[number, number, number]> = [];
    kept.forEach((d, i) => known.forEach((o, j) => { const dist = Math.hypot(d.x - o.x, d.y - o.y); if (dist <= MATCH_M) pairs.push([dist, i, j]); }));
    pairs.sort((a, b) => a[0] - b[0]);
    const tp = new Set<number>(), hit = new Set<number>();
    for (const [, i, j] of pairs) if (!tp.has(i) && !hit.has(j)) { tp.add(i); hit.add(j); }
    for (const aoi of aois) {
      const poly = reprojectAoi(aoi, manifest.epsg).polygons;
      const inAoi = prepareMultiPolygon(poly);
      const knownIn = known.filter((o) => inAoi.contains(o.x, o.y));
      const detIn = kept.filter((d) => inAoi.contains(d.x, d.y)).length;
      const points: CountedPoint[] = kept.map((d) => ({ xM: d.x, yM: d.y, classIdx: 0 }));
      const stats = (sampleFactor: number) => {
        let covered = 0, sum = 0, half = 0, n = 0, cells = 0, checked = 0;
        for (let seed = 1; seed <= runs; seed++) {
          const base = designSample(poly, points, { seed, classCount: 1 });
          const design = sampleFactor === 1 ? base : designSample(poly, points, { seed, classCount: 1, sampleSize: Math.min(base.cells.length, base.sample.length * sampleFactor) });
          const tallies = new Map<string, CellTally>(design.cells.map((c) => [c.id, { detected: [0] }]));
          const inSample = new Set(design.sample);
          for (const id of inSample) { const t = tallies.get(id)!; t.truth = [0]; t.truePositives = [0]; }
          kept.forEach((d, i) => {
            if (!inAoi.contains(d.x, d.y)) return;
            const t = tallies.get(cellIdAt(design, d.x, d.y));
            if (!t) return;
            t.detected[0]++;
            if (t.truePositives && tp.has(i)) t.truePositives[0]++;
          });
          for (const o of knownIn) { const t = tallies.get(cellIdAt(design, o.x, o.y)); if (t?.truth) t.truth[0]++; }
          const e = estimatesForDesign(design, tallies, 1)[0];
          if (!e) continue;
          n++; sum += e.count; half += (e.ci95[1] - e.ci95[0]) / 2;
          if (e.ci95[0] <= knownIn.length && knownIn.length <= e.ci95[1]) covered++;
          cells = design.cells.length; checked += design.sample.length;
        }
        return { covered: covered / n, meanEst: sum / n, half: half / n, cells, checked: checked / n };
      };
      const s1 = stats(1), s2 = stats(2);
      const f = (x: number, d = 2) => x.toFixed(d);
      say(`| ${date} (${gsd} m) | ${threshold.toFixed(2)} | ${aoi.name} | ${s1.cells} | ${f(s1.checked, 1)} | ${knownIn.length} | ${f(detIn / knownIn.length)} | ${f(s1.meanEst / knownIn.length, 3)} | ${f(100 * s1.covered, 1)} % | ${f(s1.half, 1)} | ${f(s2.half, 1)} (${f(100 * s2.covered, 1)} %) |`);
    }
  }
}
writeFileSync(v.out!, lines.join('\n') + '\n');
