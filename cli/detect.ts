// `seamtally detect`: scenes of one date + AOIs + model → detections.geojson, counts.csv, counts.json (onnxruntime-node).
import { readFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { checkScorerModel, parseScorer, type ScorerJson } from '../web/core/adapted-scorer.ts';
import { SeamtallyError } from '../web/core/errors.ts';
import { runScene, type TileTimings } from '../web/core/pipeline.ts';
import type { DetectionTable } from '../web/core/types.ts';
import { openNodeModel } from '../web/io/ort-node.ts';
import { closeDateRun, dateOutputs, loadSidecar, modelId, openDateRun, prepareDate, readText, summaryLines, writeDateOutputs, type DateRun } from './date-run.ts';

export { modelId, readText, sidecarPath, writeAtomic } from './date-run.ts';

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

/** A whole-number option ≥ min, or the sentence (with `usage`) saying what it must be. */
export function intArg(v: string | undefined, name: string, min: number, usage = USAGE): number | undefined {
  if (v === undefined) return undefined;
  const n = Number(v);
  if (!Number.isInteger(n) || n < min) throw new SeamtallyError('bad-argument', `--${name} must be a whole number ≥ ${min}, not "${v}". ${usage}`);
  return n;
}

/** Parse argv (after `detect`). Throws SeamtallyError('bad-argument') with the usage line (`usage`: another command's that takes the same options). */
export function parseDetectArgs(argv: string[], usage = USAGE): DetectArgs {
  function bad(message: string): never { throw new SeamtallyError('bad-argument', `${message} ${usage}`); }
  const intArg1 = (v: string | undefined, name: string, min: number) => intArg(v, name, min, usage);
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
  const overlapPx = ov === 'auto' ? 'auto' : intArg1(ov, 'overlap', 0)!;
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
    scenes: parsed.positionals, aoi: v.aoi, model: v.model, out: v.out, tilePx: intArg1(v.tile, 'tile', 16), overlapPx, minScore,
    date: v.date, threads: intArg1(v.threads, 'threads', 1) ?? 1, bands, scorer: v.scorer, features: v.features ?? false, quiet: v.quiet ?? false,
  };
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
  const aoiText = readText(args.aoi, 'AOI file');
  const modelBytes = new Uint8Array(readFileSync(args.model));
  // the model's features are fetched only when kept (--features) or used by the scorer (costly to copy out)
  const withFeatures = args.features || (scorer?.modelFeatureDim ?? 0) > 0;
  const model = await openNodeModel(modelBytes, sidecar, { threads: args.threads, tilePx: args.tilePx, withFeatures });
  let dateRun: DateRun | null = null;
  try {
    // scenes, their frame and date, coverage masks; an AOI that no scene images is an error
    dateRun = await openDateRun(args.scenes, aoiText, sidecar, args.date);
    const progress = progressPrinter(args.quiet);
    const tables: DetectionTable[] = [];
    const totals: TileTimings = { readMs: 0, resampleMs: 0, inferMs: 0, decodeMs: 0 };
    let tilesRun = 0;
    const started = performance.now();
    const pipelines = await prepareDate(dateRun, args);
    for (const p of pipelines) {
      const label = `scene ${p.sceneIdx + 1}/${pipelines.length} ${p.source.info.name}`;
      const r = await runScene(p, model.infer, { onProgress: (q) => progress(label, q.tilesDone, q.tilesTotal, q.scenePxDone, q.elapsedMs) });
      tables.push(...r.tables);
      tilesRun += r.tilesRun;
      for (const k of Object.keys(totals) as (keyof TileTimings)[]) totals[k] += r.timings[k];
    }
    const msPerTile = tilesRun ? { read: totals.readMs / tilesRun, resampleNormalise: totals.resampleMs / tilesRun, infer: totals.inferMs / tilesRun, decode: totals.decodeMs / tilesRun } : null;
    const out = dateOutputs(dateRun, pipelines, tables, {
      modelPath: args.model, scorer: scorer && args.scorer ? { json: scorer, path: args.scorer } : undefined, features: args.features,
      meta: (mergeMs) => ({ timing: { tilesRun, msPerTile, mergeMs, totalMs: performance.now() - started } }),
    });
    writeDateOutputs(args.out, out.files);
    if (!args.quiet) {
      for (const line of summaryLines(out.tally)) process.stderr.write(`${line}\n`);
      if (msPerTile) {
        const m = msPerTile;
        process.stderr.write(`${out.detections.count} detections from ${tilesRun} tiles; ms per tile: read ${m.read.toFixed(2)}, resample+normalise ${m.resampleNormalise.toFixed(2)}, infer ${m.infer.toFixed(2)}, decode ${m.decode.toFixed(2)}; merge ${out.mergeMs.toFixed(1)} ms\n`);
      }
    }
    return 0;
  } finally {
    await model.close();
    if (dateRun) await closeDateRun(dateRun);
  }
}
