// Activation statistics for int8 calibration (models/train/quantize.py runs this): feeds model inputs made by the
// pipeline itself (prepareScene's band selection and per-scene stretch, the tile plan, fillTensor's resampling and
// normalisation) from TRAINING scenes to an fp32 model whose intermediate tensors are extra graph outputs, in
// onnxruntime-node, and writes per tensor its min, max and a histogram over [min, max] (two passes).
// Usage: npx tsx models/train/calibrate.ts --model CALIB.onnx --sidecar X.model.json --scenes DIR --out STATS.json
//        [--tiles-per-scene 3] [--bins 2048]
import { readFileSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import { basename, join, resolve } from 'node:path';
import * as ort from 'onnxruntime-node';
import { parseSidecar } from '../../web/core/model-contract.ts';
import { createTileScratch, fillTensor, prepareScene, readTile } from '../../web/core/pipeline.ts';
import { openGeoTiffPath } from '../../web/io/geotiff-source.ts';

function arg(name: string, dflt?: string): string {
  const i = process.argv.indexOf(`--${name}`);
  if (i >= 0 && i + 1 < process.argv.length) return process.argv[i + 1];
  if (dflt === undefined) throw new Error(`missing --${name}`);
  return dflt;
}

interface TensorStats { min: number; max: number; hist: Float64Array; count: number }

/** Up to `k` tiles of one scene, spread evenly over its tile plan, as model inputs (NCHW float32). */
async function sceneInputs(tif: string, sidecarText: string, k: number): Promise<Float32Array[]> {
  const sidecar = parseSidecar(sidecarText);
  const src = await openGeoTiffPath(tif, { byteLength: statSync(tif).size });
  try {
    // square tilePx² inputs (as fed below): plan as for a fixed-input model, not with sized windows
    const p = await prepareScene(src, 0, { ...sidecar, maxTilePx: undefined }, { tilePx: sidecar.tilePx });
    const tiles = p.plan.tiles;
    const picks = [...new Set(Array.from({ length: Math.min(k, tiles.length) }, (_, i) => Math.floor(((i + 0.5) * tiles.length) / Math.min(k, tiles.length))))];
    const out: Float32Array[] = [];
    for (const ti of picks) {
      const scratch = createTileScratch(p.plan.tilePx);
      const read = await readTile(p, tiles[ti]);
      if (read.win && fillTensor(p, tiles[ti], read.win, scratch)) out.push(scratch.tensor);
    }
    return out;
  } finally {
    await src.close();
  }
}

async function main(): Promise<void> {
  const scenes = resolve(arg('scenes'));
  if (/eval/i.test(basename(scenes))) throw new Error(`refusing to calibrate on "${scenes}": calibration must use training scenes, never the evaluation set`);
  const sidecarText = readFileSync(arg('sidecar'), 'utf8');
  const tilePx = parseSidecar(sidecarText).tilePx;
  const k = Number(arg('tiles-per-scene', '3'));
  const bins = Number(arg('bins', '2048'));
  const inputs: Float32Array[] = [];
  for (const name of readdirSync(scenes).filter((n) => n.endsWith('.tif')).sort()) {
    inputs.push(...(await sceneInputs(join(scenes, name), sidecarText, k)));
  }
  process.stderr.write(`calibrate: ${inputs.length} tiles of ${tilePx}² from ${scenes}\n`);
  const session = await ort.InferenceSession.create(arg('model'), { intraOpNumThreads: 1, interOpNumThreads: 1, graphOptimizationLevel: 'basic' });
  const inputName = session.inputNames[0];
  const stats = new Map<string, TensorStats>();
  const each = async (fn: (name: string, data: Float32Array) => void) => {
    for (const x of inputs) {
      fn(inputName, x);
      const res = await session.run({ [inputName]: new ort.Tensor('float32', x, [1, 3, tilePx, tilePx]) });
      for (const [name, t] of Object.entries(res)) fn(name, t.data as Float32Array);
    }
  };
  // pass 1: ranges
  await each((name, d) => {
    let s = stats.get(name);
    if (!s) stats.set(name, (s = { min: Infinity, max: -Infinity, hist: new Float64Array(bins), count: 0 }));
    for (let i = 0; i < d.length; i++) { const v = d[i]; if (v < s.min) s.min = v; if (v > s.max) s.max = v; }
  });
  // pass 2: histograms over [min, max]
  await each((name, d) => {
    const s = stats.get(name)!;
    const w = (s.max - s.min) / bins || 1;
    for (let i = 0; i < d.length; i++) s.hist[Math.min(bins - 1, Math.floor((d[i] - s.min) / w))]++;
    s.count += d.length;
  });
  const json: Record<string, { min: number; max: number; count: number; hist: number[] }> = {};
  for (const [name, s] of stats) json[name] = { min: s.min, max: s.max, count: s.count, hist: [...s.hist] };
  writeFileSync(arg('out'), JSON.stringify({ scenes, tiles: inputs.length, tilePx, tensors: json }));
  await session.release();
}

await main();
