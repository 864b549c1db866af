// Training chips from synthesizer scenes, made exactly as the pipeline sees a scene: the scene's bands picked by
// radiometry.selectBands, one percentile stretch per scene from an overview (radiometry.computeStretch), resampling
// to the model GSD with resample.ts; chips (uint8 RGB) and their truth boxes in chip pixels are written as shards
// that train.py reads: shard_<tag>.u8 (N × px × px × 3) + shard_<tag>.json {n, px, objects: [[i, class, cx, cy,
// length, width, angle, visible], …]} (angle = length-axis direction in the pixel frame, y down).
// Usage: npx tsx models/train/chips.ts --scenes DIR --out DIR [--px 320] [--step 240] [--gsd 0.3]
import { existsSync, readFileSync, readdirSync, statSync, writeFileSync, mkdirSync, renameSync } from 'node:fs';
import { join } from 'node:path';
import { openGeoTiffPath } from '../../web/io/geotiff-source.ts';
import { normaliseInPlace } from '../../web/core/radiometry.ts';
import { sourceWindowFor, planResample, resampleBand, modelGridSize } from '../../web/core/resample.ts';
import { invertGeoTransform, mapToPixel } from '../../web/core/geotransform.ts';
import { prepareScene } from '../../web/core/pipeline.ts';
import { validateSidecar } from '../../web/core/model-contract.ts';

const CLASSES = ['vehicle', 'solar_panel'];
/** Enough of a sidecar for prepareScene (the band/stretch part does not depend on the model). */
const SIDECAR = validateSidecar({
  format: 'seamtally-model/1', classes: CLASSES, inputGsdM: 0.3, tilePx: 512,
  input: { name: 'image', bands: 'rgb', scale: 1 / 255, mean: [0, 0, 0], std: [1, 1, 1] },
  output: { layout: 'center-heatmap', stride: 4, heatmap: 'heatmap', size: 'size', offset: 'offset', angle: 'angle' },
});

function arg(name: string, dflt?: string): string {
  const i = process.argv.indexOf(`--${name}`);
  if (i >= 0 && i + 1 < process.argv.length) return process.argv[i + 1];
  if (dflt === undefined) throw new Error(`missing --${name}`);
  return dflt;
}

interface TruthBox { cls: number; xPx: number; yPx: number; lengthPx: number; widthPx: number; anglePx: number; visible: number }

/** Truth objects of a scene in model pixels (full-scene model grid). */
function readTruth(path: string, gt: readonly number[], f: number, modelGsdM: number): TruthBox[] {
  const inv = invertGeoTransform(gt as [number, number, number, number, number, number]);
  const fc = JSON.parse(readFileSync(path, 'utf8')) as { features: Array<{ properties: Record<string, unknown> }> };
  const out: TruthBox[] = [];
  for (const ft of fc.features) {
    const p = ft.properties;
    const cls = CLASSES.indexOf(String(p.class));
    if (cls < 0) continue;
    const cx = Number(p.cxM), cy = Number(p.cyM), a = Number(p.angleRad);
    const [sx, sy] = mapToPixel(gt as [number, number, number, number, number, number], cx, cy, inv);
    const dx = inv[1] * Math.cos(a) + inv[2] * Math.sin(a);
    const dy = inv[4] * Math.cos(a) + inv[5] * Math.sin(a);
    out.push({
      cls, xPx: sx / f, yPx: sy / f,
      lengthPx: Number(p.lengthM) / modelGsdM, widthPx: Number(p.widthM) / modelGsdM,
      anglePx: Math.atan2(dy, dx), visible: p.visibleFraction === undefined ? 1 : Number(p.visibleFraction),
    });
  }
  return out;
}

async function chipsOfScene(tif: string, truthPath: string, px: number, step: number, modelGsdM: number) {
  const src = await openGeoTiffPath(tif, { byteLength: statSync(tif).size });
  const info = src.info;
  // the pipeline's own scene preparation: band roles and the per-scene stretch from an overview
  const { bands, stretch } = await prepareScene(src, 0, SIDECAR);
  const f = modelGsdM / info.georef.gsdM;
  const scale = { scenePxPerModelPxX: f, scenePxPerModelPxY: f };
  const grid = modelGridSize(info.widthPx, info.heightPx, scale);
  const truth = readTruth(truthPath, info.georef.geoTransform, f, modelGsdM);
  const chips: Uint8Array[] = [];
  const objects: number[][] = [];
  const plane = px * px;
  for (let y0 = 0; y0 + px <= grid.heightPx; y0 += step) {
    for (let x0 = 0; x0 + px <= grid.widthPx; x0 += step) {
      const box = { minXPx: x0, minYPx: y0, maxXPx: x0 + px, maxYPx: y0 + px };
      const srcBox = sourceWindowFor(box, scale, info.widthPx, info.heightPx);
      const win = await src.readWindow(srcBox);
      const plan = planResample(box, srcBox, scale, info.widthPx, info.heightPx);
      const t = new Float32Array(3 * plane);
      const valid = new Uint8Array(plane);
      const allValid = new Uint8Array(plane).fill(1);
      for (let c = 0; c < 3; c++) {
        resampleBand(win.bands[bands.indices[c]], plan, t.subarray(c * plane, (c + 1) * plane), { nodata: info.nodata, validOut: valid });
        for (let i = 0; i < plane; i++) allValid[i] &= valid[i];
      }
      let nValid = 0;
      for (let i = 0; i < plane; i++) nValid += allValid[i];
      if (nValid < 0.6 * plane) continue;
      normaliseInPlace(t, plane, stretch, { scale: 1, mean: [0, 0, 0], std: [1, 1, 1] }, allValid);
      const chip = new Uint8Array(3 * plane);
      for (let i = 0; i < plane; i++) for (let c = 0; c < 3; c++) chip[3 * i + c] = Math.round(t[c * plane + i]);
      const idx = chips.length;
      chips.push(chip);
      for (const o of truth) {
        const cx = o.xPx - x0, cy = o.yPx - y0;
        if (cx < -px * 0.2 || cy < -px * 0.2 || cx > px * 1.2 || cy > px * 1.2) continue;
        // objects whose centre is not imaged (nodata collar) are not in the picture: drop them
        if (cx >= 0 && cy >= 0 && cx < px && cy < px && !allValid[Math.floor(cy) * px + Math.floor(cx)]) continue;
        objects.push([idx, o.cls, cx, cy, o.lengthPx, o.widthPx, o.anglePx, o.visible]);
      }
    }
  }
  await src.close();
  return { chips, objects };
}

async function main(): Promise<void> {
  const scenes = arg('scenes');
  const out = arg('out');
  const px = Number(arg('px', '320'));
  const step = Number(arg('step', '240'));
  const gsd = Number(arg('gsd', '0.3'));
  mkdirSync(out, { recursive: true });
  for (const name of readdirSync(scenes).filter((n) => n.endsWith('.tif')).sort()) {
    const base = name.slice(0, -4);
    const truth = join(scenes, `${base}.truth.geojson`);
    if (existsSync(join(out, `shard_${base}.json`)) || !existsSync(truth)) continue;
    const { chips, objects } = await chipsOfScene(join(scenes, name), truth, px, step, gsd);
    if (chips.length === 0) continue;
    const buf = new Uint8Array(chips.length * 3 * px * px);
    chips.forEach((c, i) => buf.set(c, i * c.length));
    writeFileSync(join(out, `.tmp_${base}.u8`), buf);
    renameSync(join(out, `.tmp_${base}.u8`), join(out, `shard_${base}.u8`));
    writeFileSync(join(out, `.tmp_${base}.json`), JSON.stringify({ n: chips.length, px, objects }));
    renameSync(join(out, `.tmp_${base}.json`), join(out, `shard_${base}.json`));
    process.stderr.write(`${name}: ${chips.length} chips, ${objects.length} objects\n`);
  }
}

await main();
