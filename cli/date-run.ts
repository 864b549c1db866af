// One date's run outside the page: open its inputs (model sidecar, AOIs, scenes), prepare each scene's tile plan, and
// turn the tiles' detection tables into detect's outputs. `seamtally detect` runs the tiles itself; the batch's
// finishing job gets them from the queue's workers. Both go through here, so their outputs are the same bytes.
import { closeSync, existsSync, mkdirSync, openSync, readFileSync, readSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { basename, join } from 'node:path';
import { parseAois, reprojectAoi, type Aoi, type AoiInCrs } from '../web/core/aoi.ts';
import { applyScorer, type ScorerJson } from '../web/core/adapted-scorer.ts';
import type { CountAoi } from '../web/core/counts.ts';
import { aoiCoverage, frameToScenePxMapping, type CoverageMask } from '../web/core/coverage.ts';
import { epsgName } from '../web/core/crs.ts';
import { SeamtallyError } from '../web/core/errors.ts';
import { countsToCsv, countsToJson } from '../web/core/export-csv.ts';
import { detectionsToGeoJson } from '../web/core/export-geojson.ts';
import { multiPolygonAreaM2 } from '../web/core/geodesic-area.ts';
import { DEFAULT_MIN_SCORE, parseSidecar, type ModelSidecar } from '../web/core/model-contract.ts';
import { prepareScene, runFrameEpsg, type ScenePipeline } from '../web/core/pipeline.ts';
import { COUNTING_RULE } from '../web/core/point-in-polygon.ts';
import type { SceneSource } from '../web/core/scene-source.ts';
import { mergeDetectionTables } from '../web/core/seam-merge.ts';
import { tallyDate, type DateTally } from '../web/core/tally.ts';
import type { DetectionTable, PixelBox } from '../web/core/types.ts';
import { assertSomeValidPixels, readValidMask } from '../web/core/valid-mask.ts';
import { openGeoTiffPath, openGeoTiffUrl } from '../web/io/geotiff-source.ts';

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

export function writeAtomic(path: string, text: string | Uint8Array): void {
  writeFileSync(`${path}.part`, text);
  renameSync(`${path}.part`, path);
}

/** The model's sidecar (`<model>.model.json`), read and checked. */
export function loadSidecar(modelPath: string): ModelSidecar {
  if (!existsSync(modelPath)) throw new SeamtallyError('bad-argument', `The model "${modelPath}" does not exist: check the path given to --model.`);
  const p = sidecarPath(modelPath);
  if (!existsSync(p)) throw new SeamtallyError('sidecar-invalid', `The model has no sidecar: expected "${p}" next to the .onnx file (format seamtally-model/1, see README).`);
  return parseSidecar(readFileSync(p, 'utf8'));
}

/** True for an HTTP(S) address (a COG read by range requests), false for a file path. */
export const isUrl = (scene: string): boolean => /^https?:\/\//i.test(scene);

/** A scene by path (local or shared storage) or by HTTP(S) URL (range requests). */
export async function openScene(scene: string): Promise<SceneSource> {
  if (isUrl(scene)) return openGeoTiffUrl(scene);
  if (!existsSync(scene)) throw new SeamtallyError('bad-argument', `The scene "${scene}" does not exist: check the path.`);
  const head = new Uint8Array(8);
  const fd = openSync(scene, 'r');
  try { readSync(fd, head, 0, 8, 0); } finally { closeSync(fd); }
  return openGeoTiffPath(scene, { byteLength: statSync(scene).size, head });
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

/** What one date's run needs besides its tiles: the scenes (open), their frame, date, coverage masks and the AOIs. */
export interface DateRun {
  scenes: string[];
  sources: SceneSource[];
  frameEpsg: number;
  date: string;
  masks: CoverageMask[];
  aois: Aoi[];
  sidecar: ModelSidecar;
}

/**
 * Open one date's scenes and check them against the AOIs, with detect's sentences: a missing scene, no valid pixel,
 * scenes of different dates, an AOI that no scene images. The caller closes the run (`closeDateRun`).
 */
export async function openDateRun(scenes: string[], aoiText: string, sidecar: ModelSidecar, givenDate?: string): Promise<DateRun> {
  const aois = parseAois(aoiText);
  const sources: SceneSource[] = [];
  try {
    for (const p of scenes) sources.push(await openScene(p));
    const frameEpsg = runFrameEpsg(sources);
    const date = sceneDate(sources, givenDate);
    const masks = await Promise.all(sources.map((s) => coverageMask(s, frameEpsg)));
    const run: DateRun = { scenes, sources, frameEpsg, date, masks, aois, sidecar };
    for (const a of countAois(run)) {
      if (a.coverage === 0) {
        throw new SeamtallyError('aoi-outside', `AOI "${a.aoi.name}" lies outside every scene given (${scenes.map((s) => basename(s)).join(', ')}): check that the AOI and the scenes show the same place.`, { aoi: a.aoi.id });
      }
    }
    return run;
  } catch (err) {
    for (const s of sources) await s.close();
    throw err;
  }
}

export async function closeDateRun(run: DateRun): Promise<void> {
  for (const s of run.sources) await s.close();
}

/**
 * The AOIs in the run's frame with their geodesic areas and imaged fractions. Tiles that failed for good
 * (`failedTilesPx`, per scene index, full-resolution scene pixels) count as not imaged, as in the page.
 */
export function countAois(run: DateRun, failedTilesPx: ReadonlyMap<number, readonly PixelBox[]> = new Map()): CountAoi[] {
  const masks = run.masks.map((m, i) => (failedTilesPx.get(i)?.length ? { ...m, failedTilesPx: failedTilesPx.get(i) } : m));
  return run.aois.map((a) => {
    const inFrame: AoiInCrs = reprojectAoi(a, run.frameEpsg);
    return { aoi: inFrame, areaM2: multiPolygonAreaM2(a.polygonsLonLat), coverage: aoiCoverage(inFrame.polygons, masks).fraction };
  });
}

export interface PlanOptions {
  tilePx?: number;
  overlapPx: number | 'auto';
  minScore?: number;
  /** Band numbers counted from 0. */
  bands?: number[];
}

/** Each scene's pipeline (band roles, stretch, tile plan), in scene order: the same plan wherever it is made. */
export async function prepareDate(run: DateRun, opts: PlanOptions): Promise<ScenePipeline[]> {
  const out: ScenePipeline[] = [];
  for (let i = 0; i < run.sources.length; i++) {
    out.push(await prepareScene(run.sources[i], i, run.sidecar, { tilePx: opts.tilePx, overlapPx: opts.overlapPx, bands: opts.bands, frameEpsg: run.frameEpsg, minScore: opts.minScore }));
  }
  return out;
}

export interface DateOutputOptions {
  modelPath: string;
  scorer?: { json: ScorerJson; path: string };
  /** Write features.f32 (the model's features per detection) when the tables carry them. */
  features: boolean;
  failedTilesPx?: ReadonlyMap<number, readonly PixelBox[]>;
  /** Extra fields of counts.json (timing, the batch's failed tiles…), given the merge's time in ms. */
  meta?: (mergeMs: number) => Record<string, unknown>;
}

export interface DateOutputs {
  /** File name → contents: detections.geojson, counts.csv, counts.json and, when kept, features.f32. */
  files: Map<string, string | Uint8Array>;
  tally: DateTally;
  detections: DetectionTable;
  mergeMs: number;
}

/**
 * Merge the tiles' tables (in scene order, then tile order: the order detect produces them) across seams and scene
 * overlaps, tally them per AOI and render detect's output files.
 */
export function dateOutputs(run: DateRun, pipelines: readonly ScenePipeline[], tables: readonly DetectionTable[], opts: DateOutputOptions): DateOutputs {
  const { sidecar, date, sources } = run;
  const t0 = performance.now();
  const merged = mergeDetectionTables(tables);
  let detections = merged.frameCrs ? merged : { ...merged, frameCrs: epsgName(run.frameEpsg) };
  const id = modelId(sidecar, opts.modelPath);
  // a review-adapted scorer re-scores every detection; the counts (and the exported scores) are then its scores
  if (opts.scorer) detections = { ...detections, score: applyScorer(opts.scorer.json, detections, sidecar.classes, id) };
  const mergeMs = performance.now() - t0;
  const minScore = pipelines[0]?.minScore ?? DEFAULT_MIN_SCORE;
  // the tally the app shows (core/tally.ts): counts, their Garwood interval, caveats and the date's notes
  const tally = tallyDate({ detections, aois: countAois(run, opts.failedTilesPx), dateIso: date, scenes: sources.map((s) => ({ name: s.info.name, georef: s.info.georef })), sidecar }, minScore);
  const scenesMeta = sources.map((s) => ({ name: s.info.name, acquisitionDate: s.info.acquisitionDate ?? date, gsdM: s.info.georef.gsdM }));
  const files = new Map<string, string | Uint8Array>();
  files.set('detections.geojson', JSON.stringify(detectionsToGeoJson({ detections, classes: sidecar.classes, scenes: scenesMeta }, { minScore })) + '\n');
  files.set('counts.csv', countsToCsv(tally.rows));
  // the model's features at each detection (rows in detections.geojson order), for seamtally adapt
  const featureMeta = opts.features && detections.features && detections.featureDim ? { file: 'features.f32', dim: detections.featureDim, rows: detections.count } : null;
  if (featureMeta) files.set('features.f32', new Uint8Array(detections.features!.buffer, detections.features!.byteOffset, detections.count * featureMeta.dim * 4));
  const plans = pipelines.map((p) => ({ scene: p.source.info.name, tilePx: p.plan.tilePx, overlapPx: p.plan.overlapPx, tiles: p.plan.tiles.length, overheadRatio: p.plan.overheadRatio, bands: p.bands.indices.map((b) => b + 1), stretch: p.stretch }));
  // The same notes the app's tally shows: resolution caveats at the coarsest scene's GSD, upsampling, low sun.
  const notes = { gsdM: tally.gsdM, caveats: tally.caveats, upsampling: tally.upsampling, noonSunDeg: tally.noonSunDeg, lowSun: tally.lowSun };
  const json = countsToJson(tally.rows, COUNTING_RULE, {
    model: sidecar.name ?? basename(opts.modelPath), frameCrs: detections.frameCrs, date, scenes: scenesMeta, tiling: plans, ...opts.meta?.(mergeMs), notes,
    modelId: id, features: featureMeta, scores: opts.scorer ? { source: 'adapted', scorer: opts.scorer.path } : { source: 'detector' },
  });
  files.set('counts.json', JSON.stringify(json, null, 2) + '\n');
  return { files, tally, detections, mergeMs };
}

/** Write a date's outputs into `dir` (each file atomically); a features.f32 left from an earlier run is removed. */
export function writeDateOutputs(dir: string, files: ReadonlyMap<string, string | Uint8Array>): void {
  mkdirSync(dir, { recursive: true });
  for (const [name, body] of files) writeAtomic(join(dir, name), body);
  if (!files.has('features.f32')) rmSync(join(dir, 'features.f32'), { force: true });
}

/** The lines detect prints after a run: counts, caveats, notes and the caution. */
export function summaryLines(tally: DateTally): string[] {
  const lines = tally.rows.map((r) => `${r.aoiName} ${r.date} ${r.className}: ${r.count} (coverage ${(r.coverage * 100).toFixed(1)} %)`);
  for (const c of tally.caveats) if (c.level !== 'reliable') lines.push(`${c.className} at ${Number(c.gsdM.toFixed(2))} m GSD: ${c.level.replace(/-/g, ' ')}. ${c.reason}`);
  if (tally.upsampling) lines.push(tally.upsampling);
  for (const n of tally.lowSun) lines.push(n.text);
  lines.push('Counts are estimates from an automatic detector: verify a sample before acting on them; counts.json states the counting rule and these notes.');
  return lines;
}
