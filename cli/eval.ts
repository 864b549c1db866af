// `seamtally eval`: run the detector on scenes with truth files and report precision, recall, AP@0.5 (PASCAL VOC
// all-point) per class and per GSD, and per-AOI count error; optionally store the quality curves in the sidecar.
import { existsSync, readFileSync, readdirSync, renameSync, statSync, writeFileSync } from 'node:fs';
import { basename, join } from 'node:path';
import { parseArgs } from 'node:util';
import { createTransform } from '../web/core/crs.ts';
import { mapOrientedBox } from '../web/core/box-mapping.ts';
import { SeamtallyError } from '../web/core/errors.ts';
import { classQuality, matchVoc, prCurve, relativeCountError, type ClassQuality, type EvalDetection, type EvalTruth } from '../web/core/eval-metrics.ts';
import { pixelToMap } from '../web/core/geotransform.ts';
import { DEFAULT_MIN_SCORE, parseSidecar, validateSidecar, type ModelSidecar } from '../web/core/model-contract.ts';
import { prepareScene, runScene } from '../web/core/pipeline.ts';
import { mergeDetectionTables } from '../web/core/seam-merge.ts';
import { openGeoTiffPath } from '../web/io/geotiff-source.ts';
import { openNodeModel } from '../web/io/ort-node.ts';
import { sidecarPath } from './detect.ts';

/** The GSDs the quality curves are reported at (issue: 0.15, 0.3, 0.45, 0.6, 0.8 m). */
export const DEFAULT_GSD_BINS_M = [0.15, 0.3, 0.45, 0.6, 0.8];
/** Truth objects less visible than this (tree cover) are VOC "difficult": neither hit nor miss. */
export const DEFAULT_DIFFICULT_BELOW = 0.5;

interface EvalArgs {
  model: string; scenes: string; out: string; minScore?: number; evalMinScore: number; iou: number; threads: number;
  tilePx?: number; difficultBelow: number; writeQuality: boolean; evalSet?: string; quiet: boolean;
}

function num(v: string | undefined, name: string): number | undefined {
  if (v === undefined) return undefined;
  const x = Number(v);
  if (!Number.isFinite(x)) throw new SeamtallyError('bad-argument', `--${name} must be a number, not "${v}".`);
  return x;
}

export const USAGE = 'Usage: seamtally eval --model FILE.onnx --scenes DIR --out FILE.json [--min-score S] [--eval-min-score S] [--iou F] [--tile PX] [--threads N] [--difficult-below F] [--write-quality] [--eval-set TEXT] [--quiet]';

function parseEvalArgs(argv: string[]): EvalArgs {
  let v;
  try {
    v = parseArgs({
      args: argv, allowPositionals: false, options: {
        model: { type: 'string' }, scenes: { type: 'string' }, out: { type: 'string' }, 'min-score': { type: 'string' },
        'eval-min-score': { type: 'string' }, iou: { type: 'string' }, threads: { type: 'string' }, tile: { type: 'string' },
        'difficult-below': { type: 'string' }, 'write-quality': { type: 'boolean' }, 'eval-set': { type: 'string' }, quiet: { type: 'boolean' },
      },
    }).values;
  } catch (err) {
    throw new SeamtallyError('bad-argument', `${(err as Error).message}. ${USAGE}`);
  }
  if (!v.model || !v.scenes || !v.out) {
    throw new SeamtallyError('bad-argument', `--model, --scenes and --out are required. ${USAGE}`);
  }
  return {
    model: v.model, scenes: v.scenes, out: v.out, minScore: num(v['min-score'], 'min-score'),
    evalMinScore: num(v['eval-min-score'], 'eval-min-score') ?? 0.05, iou: num(v.iou, 'iou') ?? 0.5,
    threads: num(v.threads, 'threads') ?? 1, tilePx: num(v.tile, 'tile'),
    difficultBelow: num(v['difficult-below'], 'difficult-below') ?? DEFAULT_DIFFICULT_BELOW,
    writeQuality: v['write-quality'] ?? false, evalSet: v['eval-set'], quiet: v.quiet ?? false,
  };
}

interface SceneEval {
  name: string; gsdM: number; sceneIdx: number; tiles: number; msPerTileInfer: number;
  truth: EvalTruth[]; dets: EvalDetection[]; quadrants: (x: number, y: number) => number;
}

/** Truth objects of one scene (truth GeoJSON properties cxM, cyM, lengthM, widthM, angleRad in the scene CRS) in the run frame. */
function readTruth(path: string, classes: string[], sceneIdx: number, sceneEpsg: number, frameEpsg: number, difficultBelow: number): EvalTruth[] {
  const fc = JSON.parse(readFileSync(path, 'utf8')) as { features?: Array<{ properties?: Record<string, unknown> }> };
  const toFrame = createTransform(sceneEpsg, frameEpsg);
  const out: EvalTruth[] = [];
  for (const f of fc.features ?? []) {
    const p = f.properties ?? {};
    const classIdx = classes.indexOf(String(p.class));
    if (classIdx < 0) continue;
    const box = mapOrientedBox((x, y) => toFrame([x, y]), Number(p.cxM), Number(p.cyM), Number(p.lengthM), Number(p.widthM), Number(p.angleRad));
    const vis = p.visibleFraction === undefined ? 1 : Number(p.visibleFraction);
    out.push({ sceneIdx, classIdx, ...box, difficult: vis < difficultBelow });
  }
  return out;
}

async function evalScene(tif: string, truthPath: string, sceneIdx: number, sidecar: ModelSidecar, infer: Parameters<typeof runScene>[1], a: EvalArgs): Promise<SceneEval> {
  const src = await openGeoTiffPath(tif, { byteLength: statSync(tif).size });
  try {
    const p = await prepareScene(src, sceneIdx, sidecar, { minScore: a.evalMinScore, tilePx: a.tilePx });
    const r = await runScene(p, infer);
    const merged = mergeDetectionTables(r.tables);
    const dets: EvalDetection[] = [];
    for (let i = 0; i < merged.count; i++) {
      dets.push({ sceneIdx, classIdx: merged.classIdx[i], score: merged.score[i], cxM: merged.cxM[i], cyM: merged.cyM[i], lengthM: merged.lengthM[i], widthM: merged.widthM[i], angleRad: merged.angleRad[i] });
    }
    const g = src.info.georef;
    const truth = readTruth(truthPath, sidecar.classes, sceneIdx, g.epsg, p.frameEpsg, a.difficultBelow);
    const toFrame = createTransform(g.epsg, p.frameEpsg);
    const mid = toFrame(pixelToMap(g.geoTransform, g.widthPx / 2, g.heightPx / 2));
    return {
      name: basename(tif), gsdM: g.gsdM, sceneIdx, tiles: r.tilesRun, msPerTileInfer: r.tilesRun ? r.timings.inferMs / r.tilesRun : 0,
      truth, dets, quadrants: (x, y) => (x >= mid[0] ? 1 : 0) + (y >= mid[1] ? 2 : 0),
    };
  } finally {
    await src.close();
  }
}

/** The bin a scene GSD falls in: the nearest bin within ±15 %, else the GSD itself rounded to 0.01 m. */
function gsdBin(gsdM: number, bins: readonly number[]): number {
  let best = bins[0];
  for (const b of bins) if (Math.abs(b - gsdM) < Math.abs(best - gsdM)) best = b;
  return Math.abs(best - gsdM) <= 0.15 * best ? best : Math.round(gsdM * 100) / 100;
}

interface AoiCount { scene: string; aoi: string; className: string; trueCount: number; detectedCount: number; error: number }

/** Per-AOI counts: each scene's four quadrants (split at the scene centre) and the whole scene, centre-in-AOI rule. */
function aoiCounts(s: SceneEval, classes: string[], minScore: number): AoiCount[] {
  const names = ['north-west', 'north-east', 'south-west', 'south-east'];
  const out: AoiCount[] = [];
  for (let c = 0; c < classes.length; c++) {
    const t = [0, 0, 0, 0], d = [0, 0, 0, 0];
    // quadrant index: bit 0 = east, bit 1 = north (y grows north in the metric frame)
    for (const o of s.truth) if (o.classIdx === c && !o.difficult) t[s.quadrants(o.cxM, o.cyM)]++;
    for (const o of s.dets) if (o.classIdx === c && o.score >= minScore) d[s.quadrants(o.cxM, o.cyM)]++;
    const q = [2, 3, 0, 1]; // NW = west+north (2), NE (3), SW (0), SE (1)
    names.forEach((n, k) => out.push({ scene: s.name, aoi: n, className: classes[c], trueCount: t[q[k]], detectedCount: d[q[k]], error: relativeCountError(d[q[k]], t[q[k]]) }));
    const tt = t.reduce((x, y) => x + y, 0), dd = d.reduce((x, y) => x + y, 0);
    out.push({ scene: s.name, aoi: 'whole scene', className: classes[c], trueCount: tt, detectedCount: dd, error: relativeCountError(dd, tt) });
  }
  return out;
}

/** The score threshold with the best F1 on these scenes (to choose a sidecar minScore on a validation set). */
function bestF1(dets: EvalDetection[], truth: EvalTruth[], c: number, iou: number) {
  const curve = prCurve(matchVoc(dets, truth, c, { iouThreshold: iou }), dets);
  let best = { score: NaN, f1: 0, precision: 0, recall: 0 };
  curve.recall.forEach((r, i) => {
    const p = curve.precision[i], f1 = p + r > 0 ? (2 * p * r) / (p + r) : 0;
    if (f1 > best.f1 && (i + 1 >= curve.score.length || curve.score[i + 1] < curve.score[i])) best = { score: curve.score[i], f1, precision: p, recall: r };
  });
  return { score: finite(best.score), f1: finite(best.f1), precision: finite(best.precision), recall: finite(best.recall) };
}

function finite(x: number): number | null { return Number.isFinite(x) ? Math.round(x * 1e4) / 1e4 : null; }
function qualityJson(q: ClassQuality) {
  return { ap50: finite(q.ap), precision: finite(q.precision), recall: finite(q.recall), tp: q.tp, fp: q.fp, fn: q.fn, positives: q.positives };
}

/** Store recall/precision per GSD bin and AP at the model's input GSD into the sidecar next to the model. */
function writeQuality(modelPath: string, sidecar: ModelSidecar, bins: number[], perBin: Map<number, ClassQuality[]>, evalSet: string): void {
  const gsdM = bins.filter((b) => perBin.has(b));
  const recall: Record<string, number[]> = {}, precision: Record<string, number[]> = {}, ap50: Record<string, number> = {};
  sidecar.classes.forEach((cls, c) => {
    const r = gsdM.map((b) => perBin.get(b)![c].recall), p = gsdM.map((b) => perBin.get(b)![c].precision);
    if (r.every(Number.isFinite)) recall[cls] = r.map((x) => Math.round(x * 1e4) / 1e4);
    // no detections at all at a GSD: precision is undefined there; 0 keeps the curve honest (nothing reliable)
    if (r.every(Number.isFinite)) precision[cls] = p.map((x) => (Number.isFinite(x) ? Math.round(x * 1e4) / 1e4 : 0));
    const atInput = perBin.get(gsdBin(sidecar.inputGsdM, gsdM));
    if (atInput && Number.isFinite(atInput[c].ap)) ap50[cls] = Math.round(atInput[c].ap * 1e4) / 1e4;
  });
  const path = sidecarPath(modelPath);
  const raw = JSON.parse(readFileSync(path, 'utf8')) as Record<string, unknown>;
  raw.quality = { gsdM, recall, precision, ap50, evalSet };
  validateSidecar(raw);
  writeFileSync(`${path}.part`, JSON.stringify(raw, null, 2) + '\n');
  renameSync(`${path}.part`, path);
}

export async function run(argv: string[]): Promise<number> {
  const a = parseEvalArgs(argv);
  const scPath = sidecarPath(a.model);
  if (!existsSync(a.model)) throw new SeamtallyError('bad-argument', `The model "${a.model}" does not exist: check the path.`);
  if (!existsSync(scPath)) throw new SeamtallyError('sidecar-invalid', `The model has no sidecar: expected "${scPath}" next to the .onnx file.`);
  if (!existsSync(a.scenes)) throw new SeamtallyError('bad-argument', `The scene folder "${a.scenes}" does not exist: check the path.`);
  const sidecar = parseSidecar(readFileSync(scPath, 'utf8'));
  const minScore = a.minScore ?? sidecar.minScore ?? DEFAULT_MIN_SCORE;
  const model = await openNodeModel(new Uint8Array(readFileSync(a.model)), sidecar, { threads: a.threads, tilePx: a.tilePx });
  const scenes: SceneEval[] = [];
  try {
    const tifs = readdirSync(a.scenes).filter((n) => n.endsWith('.tif')).sort();
    for (const name of tifs) {
      const truth = join(a.scenes, name.replace(/\.tif$/, '.truth.geojson'));
      if (!existsSync(truth)) { if (!a.quiet) process.stderr.write(`skipping ${name}: no ${basename(truth)}\n`); continue; }
      const s = await evalScene(join(a.scenes, name), truth, scenes.length, sidecar, model.infer, a);
      scenes.push(s);
      if (!a.quiet) process.stderr.write(`${name}: GSD ${s.gsdM.toFixed(3)} m, ${s.tiles} tiles, ${s.dets.length} detections, ${s.truth.length} truth objects\n`);
    }
  } finally {
    await model.close();
  }
  if (scenes.length === 0) throw new SeamtallyError('bad-argument', `No scene in "${a.scenes}" has a <name>.truth.geojson beside its <name>.tif: nothing to evaluate.`);
  const truth = scenes.flatMap((s) => s.truth), dets = scenes.flatMap((s) => s.dets);
  const q = (sub: SceneEval[]) => {
    const t = sub.flatMap((s) => s.truth), d = sub.flatMap((s) => s.dets);
    return sidecar.classes.map((_, c) => classQuality(d, t, c, { iouThreshold: a.iou, minScore }));
  };
  const bins = [...new Set([...DEFAULT_GSD_BINS_M, ...scenes.map((s) => gsdBin(s.gsdM, DEFAULT_GSD_BINS_M))])].sort((x, y) => x - y);
  const perBin = new Map<number, ClassQuality[]>();
  for (const b of bins) {
    const sub = scenes.filter((s) => gsdBin(s.gsdM, DEFAULT_GSD_BINS_M) === b);
    if (sub.length) perBin.set(b, q(sub));
  }
  const counts = scenes.flatMap((s) => aoiCounts(s, sidecar.classes, minScore));
  const countSummary = (rows: AoiCount[]) => {
    const e = rows.filter((r) => r.trueCount > 0).map((r) => Math.abs(r.error));
    return { aois: e.length, meanAbsError: finite(e.reduce((x, y) => x + y, 0) / Math.max(1, e.length)), maxAbsError: finite(Math.max(0, ...e)), within5pct: e.filter((x) => x <= 0.05).length };
  };
  const byGsd = [...perBin.entries()].map(([b, qs]) => {
    const names = new Set(scenes.filter((s) => gsdBin(s.gsdM, DEFAULT_GSD_BINS_M) === b).map((s) => s.name));
    const rows = counts.filter((r) => names.has(r.scene) && r.aoi !== 'whole scene');
    return {
      gsdM: b, scenes: names.size,
      classes: Object.fromEntries(sidecar.classes.map((cls, c) => [cls, { ...qualityJson(qs[c]), countError: countSummary(rows.filter((r) => r.className === cls)) }])),
    };
  });
  const report = {
    model: basename(a.model), scenesDir: a.scenes, definition: 'PASCAL VOC 2010+ all-point interpolated AP (Everingham et al. 2010), rotated-box IoU >= ' + a.iou + '; truth with visibleFraction < ' + a.difficultBelow + ' is "difficult" (ignored)',
    operatingMinScore: minScore, evalMinScore: a.evalMinScore, countingRule: 'an object counts for an AOI when its centre lies inside; AOIs = the four quadrants of each scene (split at its centre)',
    overall: Object.fromEntries(sidecar.classes.map((cls, c) => [cls, { ...qualityJson(classQuality(dets, truth, c, { iouThreshold: a.iou, minScore })), bestF1: bestF1(dets, truth, c, a.iou) }])),
    byGsd,
    msPerTileInfer: finite(scenes.reduce((x, s) => x + s.msPerTileInfer * s.tiles, 0) / Math.max(1, scenes.reduce((x, s) => x + s.tiles, 0))),
    scenes: scenes.map((s) => ({ name: s.name, gsdM: finite(s.gsdM), tiles: s.tiles, detections: s.dets.filter((d) => d.score >= minScore).length, truth: s.truth.length })),
    aoiCounts: counts.map((r) => ({ ...r, error: finite(r.error) })),
  };
  writeFileSync(a.out, JSON.stringify(report, null, 2) + '\n');
  if (!a.quiet) {
    for (const g of byGsd) {
      const parts = Object.entries(g.classes).map(([cls, v]) => `${cls} AP ${v.ap50} P ${v.precision} R ${v.recall} |count err| mean ${v.countError.meanAbsError} max ${v.countError.maxAbsError}`);
      process.stderr.write(`GSD ${g.gsdM} m (${g.scenes} scenes): ${parts.join('; ')}\n`);
    }
  }
  if (a.writeQuality) writeQuality(a.model, sidecar, bins, perBin, a.evalSet ?? `${scenes.length} scenes in ${basename(a.scenes)}`);
  return 0;
}
