// `seamtally detect`: scenes of one date + AOIs + model → detections.geojson, counts.csv, counts.json (onnxruntime-node).
import { closeSync, existsSync, mkdirSync, openSync, readFileSync, readSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { basename, join } from 'node:path';
import { parseArgs } from 'node:util';
import { parseAois, reprojectAoi, type AoiInCrs } from '../web/core/aoi.ts';
import type { CountAoi } from '../web/core/counts.ts';
import { tallyDate } from '../web/core/tally.ts';
import { aoiCoverage, frameToScenePxMapping, type CoverageMask } from '../web/core/coverage.ts';
import { epsgName } from '../web/core/crs.ts';
import { SeamtallyError } from '../web/core/errors.ts';
import { countsToCsv, countsToJson } from '../web/core/export-csv.ts';
import { detectionsToGeoJson } from '../web/core/export-geojson.ts';
import { multiPolygonAreaM2 } from '../web/core/geodesic-area.ts';
import { DEFAULT_MIN_SCORE, parseSidecar, type ModelSidecar } from '../web/core/model-contract.ts';
import { prepareScene, runFrameEpsg, runScene, type ScenePipeline, type TileTimings } from '../web/core/pipeline.ts';
import { COUNTING_RULE } from '../web/core/point-in-polygon.ts';
import type { SceneSource } from '../web/core/scene-source.ts';
import { mergeDetectionTables } from '../web/core/seam-merge.ts';
import { applyScorer, checkScorerModel, parseScorer, type ScorerJson } from '../web/core/adapted-scorer.ts';
import type { DetectionTable } from '../web/core/types.ts';
import { assertSomeValidPixels, readValidMask } from '../web/core/valid-mask.ts';
import { openGeoTiffPath } from '../web/io/geotiff-source.ts';
import { openNodeModel } from '../web/io/ort-node.ts';

export const USAGE = 'Usage: seamtally detect SCENE.tif... --aoi AOI.geojson --model FILE.onnx --out DIR [--tile PX] [--overlap PX|auto] [--min-score S] [--date YYYY-MM-DD] [--threads N] [--bands R,G,B] [--features] [--scorer SCORER.json] [--quiet]';

export interface DetectArgs {
  scenes: string[];
  aoi: string;
  model: string;
  out: string;
  tilePx?: number;
  overlapPx: number | 'auto';
  minScore?: number;
  date?: string;
  threads: number;
  bands?: number[];
  /** A review-adapted scorer (seamtally adapt, or the page's export): counts use its scores. */
  scorer?: string;
  /** Keep the model's features per detection (features.f32) for seamtally adapt. */
  features: boolean;
  quiet: boolean;
}

function bad(message: string): never {
  throw new SeamtallyError('bad-argument', `${message} ${USAGE}`);
}

function intArg(v: string | undefined, name: string, min: number): number | undefined {
  if (v === undefined) return undefined;
  const n = Number(v);
  if (!Number.isInteger(n) || n < min) bad(`--${name} must be a whole number ≥ ${min}, not "${v}".`);
  return n;
}

/** Parse argv (after `detect`). Throws SeamtallyError('bad-argument') with the usage line. */
export function parseDetectArgs(argv: string[]): DetectArgs {
  let parsed;
  try {
    parsed = parseArgs({
      args: argv,
      allowPositionals: true,
      options: {
        aoi: { type: 'string' }, model: { type: 'string' }, out: { type: 'string' }, tile: { type: 'string' },
        overlap: { type: 'string' }, 'min-score': { type: 'string' }, date: { type: 'string' }, threads: { type: 'string' },
        bands: { type: 'string' }, scorer: { type: 'string' }, features: { type: 'boolean' }, quiet: { type: 'boolean' },
      },
    });
  } catch (err) {
    bad(`${(err as Error).message}.`);
  }
  const v = parsed.values;
  if (parsed.positionals.length === 0) bad('Give at least one scene file.');
  if (!v.aoi) bad('--aoi is required.');
  if (!v.model) bad('--model is required.');
  if (!v.out) bad('--out is required.');
  const ov = v.overlap ?? 'auto';
  const overlapPx = ov === 'auto' ? 'auto' : intArg(ov, 'overlap', 0)!;
  let minScore: number | undefined;
  if (v['min-score'] !== undefined) {
    minScore = Number(v['min-score']);
    if (!(minScore > 0 && minScore < 1)) bad(`--min-score must be a number between 0 and 1, not "${v['min-score']}".`);
  }
  if (v.date !== undefined && !/^\d{4}-\d{2}-\d{2}$/.test(v.date)) bad(`--date must look like 2024-05-17, not "${v.date}".`);
  let bands: number[] | undefined;
  if (v.bands !== undefined) {
    bands = v.bands.split(',').map((s) => Number(s.trim()) - 1);
    if (!bands.every((b) => Number.isInteger(b) && b >= 0) || (bands.length !== 1 && bands.length !== 3)) bad(`--bands takes 1 or 3 band numbers counted from 1 (e.g. 5,3,2), not "${v.bands}".`);
  }
  return {
    scenes: parsed.positionals, aoi: v.aoi, model: v.model, out: v.out, tilePx: intArg(v.tile, 'tile', 16), overlapPx, minScore,
    date: v.date, threads: intArg(v.threads, 'threads', 1) ?? 1, bands, scorer: v.scorer, features: v.features ?? false, quiet: v.quiet ?? false,
  };
}

/** The detector's identity a scorer is tied to: the sidecar's name and version (else the file name). */
export function modelId(sidecar: Pick<ModelSidecar, 'name' | 'version'>, modelPath: string): string {
  return `${sidecar.name ?? basename(modelPath)}${sidecar.version ? ` ${sidecar.version}` : ''}`;
}

/** `<model>.model.json` next to `<model>.onnx`. */
export function sidecarPath(modelPath: string): string {
  return modelPath.replace(/\.onnx$/i, '') + '.model.json';
}

export function readText(path: string, what: string): string {
  if (!existsSync(path)) throw new SeamtallyError('bad-argument', `The ${what} "${path}" does not exist: check the path.`);
  return readFileSync(path, 'utf8');
}

function loadSidecar(modelPath: string): ModelSidecar {
  if (!existsSync(modelPath)) throw new SeamtallyError('bad-argument', `The model "${modelPath}" does not exist: check the path given to --model.`);
  const p = sidecarPath(modelPath);
  if (!existsSync(p)) throw new SeamtallyError('sidecar-invalid', `The model has no sidecar: expected "${p}" next to the .onnx file (format seamtally-model/1, see README).`);
  return parseSidecar(readFileSync(p, 'utf8'));
}

async function openScene(path: string): Promise<SceneSource> {
  if (!existsSync(path)) throw new SeamtallyError('bad-argument', `The scene "${path}" does not exist: check the path.`);
  const head = new Uint8Array(8);
  const fd = openSync(path, 'r');
  try { readSync(fd, head, 0, 8, 0); } finally { closeSync(fd); }
  return openGeoTiffPath(path, { byteLength: statSync(path).size, head });
}

/** A scene's coverage mask: the core's valid-pixel rule (valid-mask.ts, shared with the browser workers). */
async function coverageMask(src: SceneSource, frameEpsg: number): Promise<CoverageMask> {
  const info = src.info;
  const mask = await readValidMask(src);
  await assertSomeValidPixels(src, mask);
  return {
    frameToScenePx: frameToScenePxMapping(info.georef.geoTransform, info.georef.epsg, frameEpsg),
    sceneWidthPx: info.widthPx, sceneHeightPx: info.heightPx, ...mask,
  };
}

function sceneDate(sources: SceneSource[], given?: string): string {
  if (given) return given;
  const dates = [...new Set(sources.map((s) => s.info.acquisitionDate).filter((d): d is string => d !== null))];
  if (dates.length > 1) throw new SeamtallyError('bad-argument', `The scenes carry different acquisition dates (${dates.join(', ')}); one run counts one date: run each date separately, or pass --date if they belong together.`);
  return dates[0] ?? 'unknown';
}

export function writeAtomic(path: string, text: string | Uint8Array): void {
  writeFileSync(`${path}.part`, text);
  renameSync(`${path}.part`, path);
}

/** Progress on stderr: one updating line on a terminal, a line every ~2 s otherwise. */
function progressPrinter(quiet: boolean) {
  let last = 0;
  return (label: string, done: number, total: number, scenePx: number, ms: number) => {
    if (quiet) return;
    const t = performance.now();
    if (done !== total && t - last < (process.stderr.isTTY ? 200 : 2000)) return;
    last = t;
    const mpx = ms > 0 ? scenePx / 1e6 / (ms / 1000) : 0;
    const line = `${label}: tiles ${done}/${total}, ${mpx.toFixed(2)} MPix/s`;
    process.stderr.write(process.stderr.isTTY ? `\r${line}${done === total ? '\n' : ''}` : `${line}\n`);
  };
}

/** The command. Returns the exit code (0 = written); bad input throws SeamtallyError (main prints its sentence). */
export async function run(argv: string[]): Promise<number> {
  const args = parseDetectArgs(argv);
  const sidecar = loadSidecar(args.model);
  let scorer: ScorerJson | null = null;
  if (args.scorer) {
    try { scorer = parseScorer(readText(args.scorer, 'scorer file')); checkScorerModel(scorer, modelId(sidecar, args.model)); } catch (err) {
      if (err instanceof SeamtallyError) throw err;
      throw new SeamtallyError('bad-argument', `${(err as Error).message}`);
    }
  }
  const aois = parseAois(readText(args.aoi, 'AOI file'));
  const modelBytes = new Uint8Array(readFileSync(args.model));
  // the model's features are fetched only when kept (--features) or used by the scorer (costly to copy out)
  const withFeatures = args.features || (scorer?.modelFeatureDim ?? 0) > 0;
  const model = await openNodeModel(modelBytes, sidecar, { threads: args.threads, tilePx: args.tilePx, withFeatures });
  const sources: SceneSource[] = [];
  try {
    for (const p of args.scenes) sources.push(await openScene(p));
    const frameEpsg = runFrameEpsg(sources);
    const date = sceneDate(sources, args.date);
    // AOIs in the frame, their geodesic areas and imaged fractions; an AOI that no scene images is an error.
    const masks = await Promise.all(sources.map((s) => coverageMask(s, frameEpsg)));
    const countAois: CountAoi[] = aois.map((a) => {
      const inFrame: AoiInCrs = reprojectAoi(a, frameEpsg);
      const cov = aoiCoverage(inFrame.polygons, masks);
      if (cov.fraction === 0) {
        throw new SeamtallyError('aoi-outside', `AOI "${a.name}" lies outside every scene given (${args.scenes.map((s) => basename(s)).join(', ')}): check that the AOI and the scenes show the same place.`, { aoi: a.id });
      }
      return { aoi: inFrame, areaM2: multiPolygonAreaM2(a.polygonsLonLat), coverage: cov.fraction };
    });
    const progress = progressPrinter(args.quiet);
    const tables: DetectionTable[] = [];
    const totals: TileTimings = { readMs: 0, resampleMs: 0, inferMs: 0, decodeMs: 0 };
    let tilesRun = 0;
    let pipelines: ScenePipeline[] = [];
    const started = performance.now();
    for (let i = 0; i < sources.length; i++) {
      const p = await prepareScene(sources[i], i, sidecar, { tilePx: args.tilePx, overlapPx: args.overlapPx, bands: args.bands, frameEpsg, minScore: args.minScore });
      pipelines.push(p);
      const label = `scene ${i + 1}/${sources.length} ${sources[i].info.name}`;
      const r = await runScene(p, model.infer, { onProgress: (q) => progress(label, q.tilesDone, q.tilesTotal, q.scenePxDone, q.elapsedMs) });
      tables.push(...r.tables);
      tilesRun += r.tilesRun;
      for (const k of Object.keys(totals) as (keyof TileTimings)[]) totals[k] += r.timings[k];
    }
    const t0 = performance.now();
    const merged = tables.length ? mergeDetectionTables(tables) : mergeDetectionTables([]);
    let detections = merged.frameCrs ? merged : { ...merged, frameCrs: epsgName(frameEpsg) };
    // a review-adapted scorer re-scores every detection; the counts (and the exported scores) are then its scores
    if (scorer) detections = { ...detections, score: applyScorer(scorer, detections, sidecar.classes, modelId(sidecar, args.model)) };
    const mergeMs = performance.now() - t0;
    const minScore = pipelines[0]?.minScore ?? DEFAULT_MIN_SCORE;
    // the tally the app shows (core/tally.ts): counts, their Garwood interval, caveats and the date's notes
    const tally = tallyDate({ detections, aois: countAois, dateIso: date, scenes: sources.map((s) => ({ name: s.info.name, georef: s.info.georef })), sidecar }, minScore);
    const { gsdM, rows } = tally;
    const scenesMeta = sources.map((s) => ({ name: s.info.name, acquisitionDate: s.info.acquisitionDate ?? date, gsdM: s.info.georef.gsdM }));
    const geojson = detectionsToGeoJson({ detections, classes: sidecar.classes, scenes: scenesMeta }, { minScore });
    mkdirSync(args.out, { recursive: true });
    writeAtomic(join(args.out, 'detections.geojson'), JSON.stringify(geojson) + '\n');
    writeAtomic(join(args.out, 'counts.csv'), countsToCsv(rows));
    // the model's features at each detection (rows in detections.geojson order), for seamtally adapt
    const featureMeta = args.features && detections.features && detections.featureDim ? { file: 'features.f32', dim: detections.featureDim, rows: detections.count } : null;
    if (featureMeta) writeAtomic(join(args.out, 'features.f32'), Buffer.from(detections.features!.buffer, detections.features!.byteOffset, detections.count * featureMeta.dim * 4));
    else rmSync(join(args.out, 'features.f32'), { force: true }); // none from an earlier run of the same folder
    const plans = pipelines.map((p) => ({ scene: p.source.info.name, tilePx: p.plan.tilePx, overlapPx: p.plan.overlapPx, tiles: p.plan.tiles.length, overheadRatio: p.plan.overheadRatio, bands: p.bands.indices.map((b) => b + 1), stretch: p.stretch }));
    const timing = { tilesRun, msPerTile: tilesRun ? { read: totals.readMs / tilesRun, resampleNormalise: totals.resampleMs / tilesRun, infer: totals.inferMs / tilesRun, decode: totals.decodeMs / tilesRun } : null, mergeMs, totalMs: performance.now() - started };
    // The same notes the app's tally shows: resolution caveats at the coarsest scene's GSD, upsampling, low sun.
    const notes = { gsdM, caveats: tally.caveats, upsampling: tally.upsampling, noonSunDeg: tally.noonSunDeg, lowSun: tally.lowSun };
    writeAtomic(join(args.out, 'counts.json'), JSON.stringify(countsToJson(rows, COUNTING_RULE, { model: sidecar.name ?? basename(args.model), frameCrs: detections.frameCrs, date, scenes: scenesMeta, tiling: plans, timing, notes, modelId: modelId(sidecar, args.model), features: featureMeta, scores: scorer ? { source: 'adapted', scorer: args.scorer } : { source: 'detector' } }), null, 2) + '\n');
    if (!args.quiet) {
      for (const r of rows) process.stderr.write(`${r.aoiName} ${r.date} ${r.className}: ${r.count} (coverage ${(r.coverage * 100).toFixed(1)} %)\n`);
      for (const c of notes.caveats) if (c.level !== 'reliable') process.stderr.write(`${c.className} at ${Number(c.gsdM.toFixed(2))} m GSD: ${c.level.replace(/-/g, ' ')}. ${c.reason}\n`);
      if (notes.upsampling) process.stderr.write(`${notes.upsampling}\n`);
      for (const n of notes.lowSun) process.stderr.write(`${n.text}\n`);
      process.stderr.write(`Counts are estimates from an automatic detector: verify a sample before acting on them; counts.json states the counting rule and these notes.\n`);
      if (timing.msPerTile) {
        const m = timing.msPerTile;
        process.stderr.write(`${detections.count} detections from ${tilesRun} tiles; ms per tile: read ${m.read.toFixed(2)}, resample+normalise ${m.resampleNormalise.toFixed(2)}, infer ${m.infer.toFixed(2)}, decode ${m.decode.toFixed(2)}; merge ${mergeMs.toFixed(1)} ms\n`);
      }
    }
    pipelines = [];
    return 0;
  } finally {
    await model.close();
    for (const s of sources) await s.close();
  }
}
