// `npm run bench`: CLI (onnxruntime-node, 1 thread) and browser (chromium, onnxruntime-web WASM SIMD) end to end on
// cached synthetic scenes, merge scaling, page responsiveness; writes bench/results.json and prints a table.
// Options: --quick (fewer tiles, no whole-scene CLI runs), --big (16 000² instead of 8 000²), --tiles N (most tiles
// in the block for per-tile figures; one size for every scene), --tile PX (force a tile size instead of the one
// prepareScene picks per scene), --cache-mb N (CLI decoded-tile cache budget), --model FILE.onnx, --no-browser,
// --no-app, --smoke (tiny scenes, seconds; for CI).
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { resolve, join } from 'node:path';
import { parseArgs } from 'node:util';
import { cpus, loadavg } from 'node:os';
import { mergeDetectionTables } from '../web/core/seam-merge.ts';
import { parseSidecar } from '../web/core/model-contract.ts';
import { prepareScene } from '../web/core/pipeline.ts';
import type { TilePlan } from '../web/core/tiling.ts';
import { openGeoTiffPath } from '../web/io/geotiff-source.ts';
import { blockShape, commonBlockTiles } from './tile-subset.ts';
import { makeMergeTables, totalRows } from './merge-data.ts';
import { ensureScene, writeAppManifest, CACHE_DIR } from './scenes.ts';
import { appRun, browserMerge, browserTiles, haveChromium, startVite } from './browser.ts';
import { figures, printTable, type CliRun, type BenchRaw, type PlanSummary } from './report.ts';

const REPO = resolve(import.meta.dirname, '..');
const { values } = parseArgs({
  options: {
    quick: { type: 'boolean' }, big: { type: 'boolean' }, tiles: { type: 'string' }, model: { type: 'string' },
    'no-browser': { type: 'boolean' }, 'no-app': { type: 'boolean' }, smoke: { type: 'boolean' }, out: { type: 'string' },
    port: { type: 'string' }, tile: { type: 'string' }, 'cache-mb': { type: 'string' }, read: { type: 'string' },
  },
});
const smoke = values.smoke ?? false;
const quick = (values.quick ?? false) || smoke;
const log = (s: string) => process.stderr.write(`[bench] ${s}\n`);
const modelPath = resolve(REPO, values.model ?? 'models/seamtally-det.onnx');
const sizes = smoke ? [640, 1280] : [4000, values.big ? 16000 : 8000];
const askedTiles = Number(values.tiles ?? (smoke ? 4 : quick ? 16 : 36));
const forcedTilePx = values.tile ? Number(values.tile) : undefined;
/** The browser runs 1 and 2 workers: blocks are a multiple of this so both workers get equal shares. */
const MAX_WORKERS = 2;
const mergeNs = smoke ? [10_000, 100_000] : [100_000, 1_000_000];
const outPath = resolve(REPO, values.out ?? 'bench/results.json');
/** How the browser reads the scenes: a local File (default, as an analyst opens one) or HTTP range requests. */
const browserRead = (values.read ?? 'file') as 'file' | 'url';
if (browserRead !== 'file' && browserRead !== 'url') throw new Error(`--read takes file or url, not "${values.read}"`);

/** One CLI child run; `pipelined`: 'also' (block: serial, then pipelined as the CLI runs) or 'only' (whole scenes). */
function cliRun(tif: string, tiles: number, pipelined: 'also' | 'only'): CliRun {
  const args = ['--import', 'tsx', join(REPO, 'bench/cli-run.ts'), tif, modelPath, '--threads', '1', '--pipelined', pipelined];
  if (tiles > 0) args.push('--tiles', String(tiles));
  if (forcedTilePx) args.push('--tile', String(forcedTilePx));
  if (values['cache-mb']) args.push('--cache-mb', values['cache-mb']);
  const r = spawnSync(process.execPath, args, { cwd: REPO, encoding: 'utf8', maxBuffer: 1 << 24 });
  if (r.status !== 0) throw new Error(`bench/cli-run.ts failed on ${tif}: ${r.stderr}`);
  return JSON.parse(r.stdout.trim().split('\n').pop()!) as CliRun;
}

/** The plan prepareScene makes for a scene (the default tiling, or with `tilePx` forced). */
async function planOf(tif: string, tilePx?: number): Promise<TilePlan> {
  const sidecar = parseSidecar(readFileSync(modelPath.replace(/\.onnx$/, '.model.json'), 'utf8'));
  const src = await openGeoTiffPath(tif, { byteLength: statSync(tif).size });
  try { return (await prepareScene(src, 0, sidecar, { tilePx })).plan; } finally { await src.close(); }
}
const summary = (p: TilePlan): PlanSummary => ({ tilePx: p.tilePx, overlapPx: p.overlapPx, cols: p.cols, rows: p.rows, tiles: p.tiles.length, overheadRatio: p.overheadRatio });

const started = performance.now();
const scenes = sizes.map((s) => ensureScene(s, log));
const defaultPlans = await Promise.all(scenes.map((tif) => planOf(tif)));
const runPlans = forcedTilePx ? await Promise.all(scenes.map((tif) => planOf(tif, forcedTilePx))) : defaultPlans;
const blockTiles = commonBlockTiles(runPlans, askedTiles, MAX_WORKERS);
const raw: BenchRaw = {
  when: new Date().toISOString(), mode: smoke ? 'smoke' : quick ? 'quick' : 'default', sizes, blockTiles, askedTiles,
  forcedTilePx: forcedTilePx ?? null, cacheMB: values['cache-mb'] ? Number(values['cache-mb']) : null, model: modelPath.replace(`${REPO}/`, ''), browserRead,
  machine: { cpus: cpus().length, cpuModel: cpus()[0]?.model ?? '', loadAvgStart: loadavg() },
  plans: Object.fromEntries(sizes.map((s, k) => [String(s), {
    default: summary(defaultPlans[k]), run: summary(runPlans[k]), block: blockShape(runPlans[k], blockTiles),
  }])),
  cli: { block: {}, full: {} }, browser: {}, merge: { node: [], browser: [] }, app: null,
};
for (const [k, s] of sizes.entries()) {
  const d = defaultPlans[k];
  log(`${s}²: default tiling ${d.tilePx} px, overlap ${d.overlapPx}, ${d.cols}×${d.rows} tiles, overhead ${d.overheadRatio.toFixed(3)}${forcedTilePx ? `; runs at ${forcedTilePx} px (${runPlans[k].tiles.length} tiles)` : ''}`);
}
log(`block: ${blockTiles} tiles per scene (asked ${askedTiles}; the most every scene has, a multiple of ${MAX_WORKERS})`);

for (const [k, tif] of scenes.entries()) {
  const key = String(sizes[k]);
  log(`CLI ${key}²: ${blockTiles}-tile block…`);
  raw.cli.block[key] = cliRun(tif, blockTiles, 'also');
  if (!quick) {
    log(`CLI ${key}²: whole scene…`);
    raw.cli.full[key] = cliRun(tif, 0, 'only');
  }
}

log(`merge in Node: ${mergeNs.join(', ')} detections…`);
mergeDetectionTables(makeMergeTables(20_000)); // JIT warm-up
for (const n of mergeNs) {
  const tables = makeMergeTables(n);
  const t0 = performance.now();
  const m = mergeDetectionTables(tables);
  raw.merge.node.push({ n: totalRows(tables), ms: performance.now() - t0, kept: m.count });
}

if (!values['no-browser'] && haveChromium()) {
  const server = await startVite(Number(values.port ?? 5187), CACHE_DIR);
  try {
    for (const [k, tif] of scenes.entries()) {
      const key = String(sizes[k]);
      const file = tif.split('/').pop();
      log(`browser ${key}²: ${blockTiles} tiles on 1 worker, then 2, serial then with read-ahead…`);
      const spec = { sceneUrl: `/demo/${file}`, modelUrl: `/models/${modelPath.split('/').pop()}`, sidecarUrl: `/models/${modelPath.split('/').pop()!.replace(/\.onnx$/, '.model.json')}`, tiles: blockTiles, tilePx: forcedTilePx, read: browserRead };
      if (!modelPath.startsWith(join(REPO, 'models/'))) log('warning: the browser loads models from models/ only; using the file of that name there');
      raw.browser[key] = await browserTiles(server, [1, 2].flatMap((workers) => [{ ...spec, workers, readAhead: false }, { ...spec, workers }]), tif);
      const int8 = join(REPO, 'models', 'seamtally-det-int8.onnx');
      if (k === 0 && existsSync(int8) && modelPath === join(REPO, 'models', 'seamtally-det.onnx')) {
        log(`browser ${key}²: the int8 variant, 1 worker with read-ahead…`);
        const r8 = await browserTiles(server, [{ ...spec, modelUrl: '/models/seamtally-det-int8.onnx', sidecarUrl: '/models/seamtally-det-int8.model.json', workers: 1 }], tif);
        raw.browserInt8 = { model: 'seamtally-det-int8.onnx', runs: r8.runs };
      }
    }
    log('merge in the browser (tally worker)…');
    raw.merge.browser = await browserMerge(server, mergeNs);
    if (!values['no-app']) {
      const manifest = await writeAppManifest(scenes[0], smoke ? 0.3 : quick ? 0.12 : 0.25);
      log(`app run (${manifest}, areas only, 2 workers): long tasks…`);
      raw.app = await appRun(server, manifest, 2);
    }
  } finally {
    server.stop();
  }
} else {
  log('browser part skipped (--no-browser, or no chromium)');
}

raw.machine.loadAvgEnd = loadavg();
raw.totalS = (performance.now() - started) / 1000;
const results = { ...raw, figures: figures(raw) };
mkdirSync(resolve(outPath, '..'), { recursive: true });
writeFileSync(outPath, JSON.stringify(results, null, 2) + '\n');
printTable(results);
log(`wrote ${outPath.replace(`${REPO}/`, '')} in ${raw.totalS.toFixed(0)} s`);
