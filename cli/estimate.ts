// `seamtally estimate`: from a detect run and its checked sample cells, the estimated true count of every AOI and
// class with its standard error and 95 % interval (stratified difference estimator, web/core/stratified-estimate.ts),
// written as counts.json / counts.csv: the run's rows plus `estimate`.
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { SeamtallyError } from '../web/core/errors.ts';
import { countsToCsv, type CountsJson } from '../web/core/export-csv.ts';
import { estimatesForDesign, sampleProgress, type CellTally } from '../web/core/sample-estimate.ts';
import type { CountRow } from '../web/core/counts.ts';
import { readText, writeAtomic } from './detect.ts';
import { designFor, readAois, readRunDir } from './checked-sample.ts';

export const USAGE = `seamtally estimate --aoi AOI.geojson --run DIR --checked CELLS.geojson --out DIR2
  The estimated true count per AOI and class from the cells of seamtally sample that carry "trueCounts" (a checked
  cell is checked for every class). Writes DIR2/counts.json and DIR2/counts.csv: the run's rows plus the estimate,
  its standard error, 95 % interval, number of checked cells and the method.`;

function bad(message: string): never {
  throw new SeamtallyError('bad-argument', `${message} ${USAGE}`);
}

interface CellFeature { properties: { id: string; aoiId?: string; aoi: string; seed: number; detected: Record<string, number>; trueCounts?: Record<string, number>; accepted?: Record<string, number> } }

export async function run(argv: string[]): Promise<number> {
  let v;
  try {
    v = parseArgs({ args: argv, options: { aoi: { type: 'string' }, run: { type: 'string' }, checked: { type: 'string' }, out: { type: 'string' } } }).values;
  } catch (err) { bad(`${(err as Error).message}.`); }
  if (!v.aoi || !v.run || !v.checked || !v.out) bad('--aoi, --run, --checked and --out are all required.');
  const runDir = readRunDir(v.run);
  let cellsFc: { features: CellFeature[] };
  try { cellsFc = JSON.parse(readText(v.checked, 'checked cells file')); } catch (err) {
    if (err instanceof SeamtallyError) throw err;
    throw new SeamtallyError('bad-argument', `The checked cells file "${v.checked}" is not valid JSON (${(err as Error).message}): give the file seamtally sample wrote, with "trueCounts" added to the cells you checked.`);
  }
  const rows: CountRow[] = runDir.counts.rows.map((r) => ({ ...r, countingRule: runDir.counts.countingRule }));
  for (const aoi of readAois(v.aoi)) {
    const mine = cellsFc.features.filter((f) => (f.properties.aoiId ?? f.properties.aoi) === aoi.id || f.properties.aoi === aoi.name);
    const checked = mine.filter((f) => f.properties.trueCounts);
    if (checked.length === 0) continue;
    const seed = checked[0].properties.seed;
    const { design } = designFor(aoi, runDir, seed);
    const byId = new Map(design.cells.map((c) => [c.id, c]));
    for (const f of checked) {
      const c = byId.get(f.properties.id);
      const same = c && runDir.classes.every((k, i) => (f.properties.detected?.[k] ?? 0) === c.detected[i]);
      if (!same) throw new SeamtallyError('bad-argument', `Cell ${f.properties.id} of AOI "${aoi.name}" does not match the run in "${v.run}" (seed ${seed}): the run or the AOI changed since the sample was drawn. Draw the sample again with seamtally sample on this run.`);
    }
    // detector counts from the design (the run's counted detections), truths from the file
    const tallies = new Map<string, CellTally>(design.cells.map((c) => [c.id, { detected: c.detected }]));
    for (const f of checked) {
      const cell = tallies.get(f.properties.id)!;
      cell.truth = runDir.classes.map((k) => Number(f.properties.trueCounts![k] ?? 0));
      const acc = f.properties.accepted;
      cell.truePositives = acc && runDir.classes.every((k) => acc[k] !== undefined) ? runDir.classes.map((k) => Number(acc[k])) : null;
    }
    const progress = sampleProgress(design, new Set(checked.map((f) => f.properties.id)));
    if (!progress.ready) throw new SeamtallyError('bad-argument', `AOI "${aoi.name}": ${progress.cellsChecked} of ${progress.cellsInSample} sample cells are checked, and some stratum has fewer than 2; check at least 2 cells in every stratum for an estimate with an interval.`);
    const estimates = estimatesForDesign(design, tallies, runDir.classes.length);
    runDir.classes.forEach((cls, k) => {
      const estimate = estimates[k];
      if (estimate) for (const r of rows) if (r.aoiId === aoi.id && r.className === cls) r.estimate = estimate;
    });
  }
  mkdirSync(v.out, { recursive: true });
  const json: CountsJson = { ...runDir.counts, rows: rows.map(({ countingRule: _c, ...rest }) => rest), checkedCells: v.checked };
  writeAtomic(join(v.out, 'counts.json'), JSON.stringify(json, null, 2) + '\n');
  writeAtomic(join(v.out, 'counts.csv'), countsToCsv(rows));
  for (const r of rows) {
    if (r.estimate) process.stderr.write(`${r.aoiName} ${r.date} ${r.className}: detector ${r.detectedCount}, estimated ${r.estimate.count.toFixed(1)} (95 % ${r.estimate.ci95[0].toFixed(1)}–${r.estimate.ci95[1].toFixed(1)}, ${r.estimate.cellsChecked} cells checked)\n`);
  }
  return 0;
}
