// `seamtally sample`: lay the check cells over each AOI of a detect run, stratify them by the detector's count and
// draw a stratified random sample with a recorded seed; writes the sample cells as lon/lat polygons to check.
import { parseArgs } from 'node:util';
import { createTransform } from '../web/core/crs.ts';
import { SeamtallyError } from '../web/core/errors.ts';
import { writeAtomic } from './detect.ts';
import { designFor, readAois, readRunDir } from './checked-sample.ts';

export const USAGE = `seamtally sample --aoi AOI.geojson --run DIR --seed N --out CELLS.geojson
  Draws the cells a person checks by hand for an estimate of the true count (DIR: the --out directory of a detect
  run). Each cell of CELLS.geojson carries id, aoi, stratum, detected (per class) and the seed; after checking a cell
  completely (every object whose centre lies in it, inside the AOI), add "trueCounts": {"vehicle": 12, ...} to its
  properties and give the file to seamtally estimate.`;

function bad(message: string): never {
  throw new SeamtallyError('bad-argument', `${message} ${USAGE}`);
}

export async function run(argv: string[]): Promise<number> {
  let v;
  try {
    v = parseArgs({ args: argv, options: { aoi: { type: 'string' }, run: { type: 'string' }, seed: { type: 'string' }, out: { type: 'string' } } }).values;
  } catch (err) { bad(`${(err as Error).message}.`); }
  if (!v.aoi || !v.run || !v.out || v.seed === undefined) bad('--aoi, --run, --seed and --out are all required.');
  const seed = Number(v.seed);
  if (!Number.isInteger(seed) || seed < 0) bad(`--seed must be a whole number ≥ 0, not "${v.seed}".`);
  const runDir = readRunDir(v.run);
  const toLonLat = createTransform(runDir.frameEpsg, 4326);
  const features = [];
  for (const aoi of readAois(v.aoi)) {
    const { design } = designFor(aoi, runDir, seed);
    const byId = new Map(design.cells.map((c) => [c.id, c]));
    for (const id of design.sample) {
      const c = byId.get(id)!;
      const ring = [[c.x0M, c.y0M], [c.x1M, c.y0M], [c.x1M, c.y1M], [c.x0M, c.y1M], [c.x0M, c.y0M]].map((p) => toLonLat([p[0], p[1]]).map((x) => Math.round(x * 1e8) / 1e8));
      features.push({
        type: 'Feature',
        geometry: { type: 'Polygon', coordinates: [ring] },
        properties: {
          id, aoi: aoi.name, aoiId: aoi.id, stratum: design.strata[c.stratum], seed, cellSizeM: design.cellSizeM, areaInAoiM2: Math.round(c.areaM2 * 100) / 100,
          detected: Object.fromEntries(runDir.classes.map((k, i) => [k, c.detected[i]])),
        },
      });
    }
    process.stderr.write(`${aoi.name}: ${design.cells.length} cells of ${design.cellSizeM} m in strata ${design.strata.map((s, h) => `${s} ${design.cells.filter((c) => c.stratum === h).length}`).join(', ')}; ${design.sample.length} to check (seed ${seed}).\n`);
  }
  writeAtomic(v.out, JSON.stringify({ type: 'FeatureCollection', features, seamtally: { seed, frameCrs: runDir.counts.frameCrs, minScore: runDir.minScore, countingRule: runDir.counts.countingRule } }, null, 1) + '\n');
  return 0;
}
