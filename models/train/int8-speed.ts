// fp32 vs int8 detector speed, measured in one run and interleaved (round by round, so the shared machine's load hits
// both alike): ms per tile at 512² and 1440² in onnxruntime-node (1 intra-op thread), onnxruntime-web WASM SIMD in
// Node (1 thread) and onnxruntime-web WASM SIMD in headless Debian Chromium (1 thread, main thread of a page).
// Inputs are real tiles made by the pipeline from a validation scene (prepareScene + fillTensor). Also prints how
// far the int8 outputs are from fp32, and int8 wasm from int8 native (the CLI and the browser must agree).
// Usage: npx tsx models/train/int8-speed.ts --fp32 models/seamtally-det.onnx --int8 X.onnx [--alt Y.onnx] [--rounds 6]
//        [--runs 3] [--scene models/train/work/scenes-val/val-000.tif] [--out results.json]
// Ratios are medians over rounds of the per-round ratio of medians (robust to the load drifting between rounds).
import { createServer } from 'node:http';
import { readFileSync, statSync, writeFileSync } from 'node:fs';
import { extname, join, resolve } from 'node:path';
import * as ortNode from 'onnxruntime-node';
import * as ortWeb from 'onnxruntime-web';
import { parseSidecar } from '../../web/core/model-contract.ts';
import { createTileScratch, fillTensor, prepareScene, readTile } from '../../web/core/pipeline.ts';
import { openGeoTiffPath } from '../../web/io/geotiff-source.ts';
import { launch } from '../../bench/browser.ts';

const REPO = resolve(import.meta.dirname, '..', '..');
function arg(name: string, dflt?: string): string {
  const i = process.argv.indexOf(`--${name}`);
  if (i >= 0 && i + 1 < process.argv.length) return process.argv[i + 1];
  if (dflt === undefined) throw new Error(`missing --${name}`);
  return dflt;
}

const TILES_PX = [512, 1440];
const MODELS: Record<string, string> = { fp32: resolve(arg('fp32', 'models/seamtally-det.onnx')), int8: resolve(arg('int8')) };
if (arg('alt', '')) MODELS.alt = resolve(arg('alt'));
type ModelKey = string;
const KEYS = Object.keys(MODELS);
const rounds = Number(arg('rounds', '6'));
const runs = Number(arg('runs', '3'));
const scene = resolve(arg('scene', 'models/train/work/scenes-val/val-000.tif'));

/** One pipeline-made input tile of tilePx² from the middle of the scene's tile plan. */
async function realTile(tilePx: number): Promise<Float32Array> {
  const sidecar = parseSidecar(readFileSync(MODELS.fp32.replace(/\.onnx$/, '.model.json'), 'utf8'));
  const src = await openGeoTiffPath(scene, { byteLength: statSync(scene).size });
  try {
    const p = await prepareScene(src, 0, { ...sidecar, maxTilePx: undefined }, { tilePx }); // square tilePx² windows, not sized ones
    const tile = p.plan.tiles[p.plan.tiles.length >> 1];
    const scratch = createTileScratch(tilePx);
    const read = await readTile(p, tile);
    if (!read.win || !fillTensor(p, tile, read.win, scratch)) throw new Error(`no valid pixels in the middle tile of ${scene}`);
    return scratch.tensor;
  } finally {
    await src.close();
  }
}

/** A static server for the page: onnxruntime-web's dist and the two models. */
function serve(): Promise<{ url: string; close(): void }> {
  const types: Record<string, string> = { '.mjs': 'text/javascript', '.js': 'text/javascript', '.wasm': 'application/wasm', '.html': 'text/html' };
  const srv = createServer((req, res) => {
    const u = new URL(req.url ?? '/', 'http://x');
    let file: string | undefined;
    if (u.pathname === '/') { res.writeHead(200, { 'content-type': 'text/html' }); res.end('<!doctype html><title>int8</title>'); return; }
    if (u.pathname.startsWith('/ort/')) file = join(REPO, 'node_modules/onnxruntime-web/dist', u.pathname.slice(5).replace(/\.\./g, ''));
    const m = /^\/m\/(\w+)\.onnx$/.exec(u.pathname);
    if (m) file = MODELS[m[1]];
    try {
      const body = readFileSync(file!);
      res.writeHead(200, { 'content-type': types[extname(file!)] ?? 'application/octet-stream' });
      res.end(body);
    } catch { res.writeHead(404); res.end(); }
  });
  return new Promise((ok) => srv.listen(0, '127.0.0.1', () => {
    const a = srv.address() as { port: number };
    ok({ url: `http://127.0.0.1:${a.port}`, close: () => srv.close() });
  }));
}

const median = (xs: number[]) => { const s = [...xs].sort((a, b) => a - b); return s.length ? s[s.length >> 1] : NaN; };
function maxAbsDiff(a: Record<string, Float32Array>, b: Record<string, Float32Array>, key: string): number {
  let m = 0;
  const x = a[key], y = b[key];
  for (let i = 0; i < x.length; i++) m = Math.max(m, Math.abs(x[i] - y[i]));
  return m;
}

async function main(): Promise<void> {
  const inputs = new Map<number, Float32Array>();
  for (const t of TILES_PX) inputs.set(t, await realTile(t));
  // native
  const nat = new Map<ModelKey, ortNode.InferenceSession>();
  for (const k of KEYS) {
    nat.set(k, await ortNode.InferenceSession.create(MODELS[k], { intraOpNumThreads: 1, interOpNumThreads: 1, executionMode: 'sequential', graphOptimizationLevel: 'all' }));
  }
  // wasm in node
  ortWeb.env.wasm.numThreads = 1;
  ortWeb.env.wasm.simd = true;
  ortWeb.env.logLevel = 'error';
  const wasm = new Map<ModelKey, ortWeb.InferenceSession>();
  for (const k of KEYS) {
    wasm.set(k, await ortWeb.InferenceSession.create(new Uint8Array(readFileSync(MODELS[k])), { executionProviders: ['wasm'], graphOptimizationLevel: 'all' }));
  }
  // wasm in chromium
  const server = await serve();
  const browser = await launch();
  const page = await (await browser.newContext()).newPage();
  page.on('pageerror', (e) => process.stderr.write(`[page] ${e.message}\n`));
  await page.goto(server.url);
  await page.evaluate(async (keys) => {
    const ort = await import(/* @vite-ignore */ `${location.origin}/ort/ort.wasm.min.mjs`);
    ort.env.wasm.numThreads = 1;
    ort.env.wasm.simd = true;
    ort.env.logLevel = 'error';
    const g = globalThis as unknown as Record<string, unknown>;
    g.ort = ort;
    const sessions: Record<string, unknown> = {};
    for (const k of keys) sessions[k] = await ort.InferenceSession.create(`${location.origin}/m/${k}.onnx`, { executionProviders: ['wasm'], graphOptimizationLevel: 'all' });
    g.sessions = sessions;
    g.inputs = {};
  }, KEYS);
  for (const t of TILES_PX) {
    // hand the tile over as base64 (page.evaluate serialises arguments as JSON)
    const b64 = Buffer.from(inputs.get(t)!.buffer).toString('base64');
    await page.evaluate(([tp, s]) => {
      const bin = atob(s as string);
      const u8 = new Uint8Array(bin.length);
      for (let i = 0; i < bin.length; i++) u8[i] = bin.charCodeAt(i);
      ((globalThis as unknown as { inputs: Record<number, Float32Array> }).inputs)[tp as number] = new Float32Array(u8.buffer);
    }, [t, b64] as const);
  }
  const browserRuns = (k: ModelKey, t: number, n: number) => page.evaluate(async ([key, tp, nr]) => {
    const g = globalThis as unknown as { ort: typeof ortWeb; sessions: Record<string, ortWeb.InferenceSession>; inputs: Record<number, Float32Array> };
    const s = g.sessions[key as string];
    const feeds = { [s.inputNames[0]]: new g.ort.Tensor('float32', g.inputs[tp as number], [1, 3, tp as number, tp as number]) };
    const ms: number[] = [];
    for (let i = 0; i < (nr as number); i++) {
      const t0 = performance.now();
      const out = await s.run(feeds);
      ms.push(performance.now() - t0);
      for (const v of Object.values(out)) v.dispose();
    }
    return ms;
  }, [k, t, n] as const);

  const feedsOf = <T extends { new (...a: never[]): unknown }>(T: T, t: number) => ({ image: new (T as unknown as typeof ortNode.Tensor)('float32', inputs.get(t)!, [1, 3, t, t]) });
  const outs = async (run: () => Promise<Record<string, { data: unknown }>>) => Object.fromEntries(Object.entries(await run()).map(([k, v]) => [k, v.data as Float32Array]));
  // agreement (512² tile): int8 vs fp32 (native), int8 wasm vs int8 native
  const agreement: Record<string, number> = {};
  {
    const t = 512;
    const fN = await outs(() => nat.get('fp32')!.run(feedsOf(ortNode.Tensor, t)));
    const qN = await outs(() => nat.get('int8')!.run(feedsOf(ortNode.Tensor, t)));
    const qW = await outs(() => wasm.get('int8')!.run(feedsOf(ortWeb.Tensor, t) as unknown as Record<string, ortWeb.Tensor>));
    for (const key of ['heatmap', 'size', 'offset', 'angle']) {
      agreement[`int8-vs-fp32 native ${key}`] = maxAbsDiff(qN, fN, key);
      agreement[`int8 wasm-vs-native ${key}`] = maxAbsDiff(qW, qN, key);
    }
  }
  // warm-up
  for (const t of TILES_PX) for (const k of KEYS) {
    await nat.get(k)!.run(feedsOf(ortNode.Tensor, t));
    await wasm.get(k)!.run(feedsOf(ortWeb.Tensor, t) as unknown as Record<string, ortWeb.Tensor>);
    await browserRuns(k, t, 1);
  }
  const ms: Record<string, number[]> = {};
  const perRound: Record<string, number[]> = {}; // key -> median of each round
  const rec = (key: string, xs: number[]) => { (ms[key] ??= []).push(...xs); (perRound[key] ??= [])[roundNow] = median(xs); };
  let roundNow = 0;
  for (let r = 0; r < rounds; r++) {
    roundNow = r;
    for (const t of TILES_PX) {
      for (const k of r % 2 ? [...KEYS].reverse() : KEYS) {
        const nx: number[] = [], wx: number[] = [];
        for (let i = 0; i < runs; i++) {
          const t0 = performance.now();
          await nat.get(k)!.run(feedsOf(ortNode.Tensor, t));
          nx.push(performance.now() - t0);
        }
        rec(`native ${k} ${t}`, nx);
        for (let i = 0; i < runs; i++) {
          const t0 = performance.now();
          await wasm.get(k)!.run(feedsOf(ortWeb.Tensor, t) as unknown as Record<string, ortWeb.Tensor>);
          wx.push(performance.now() - t0);
        }
        rec(`node-wasm ${k} ${t}`, wx);
        rec(`chromium-wasm ${k} ${t}`, await browserRuns(k, t, runs));
      }
    }
    process.stderr.write(`round ${r + 1}/${rounds}\n`);
  }
  await browser.close();
  server.close();
  const table: Record<string, { medianMs: number; minMs: number; n: number }> = {};
  for (const [k, xs] of Object.entries(ms)) table[k] = { medianMs: median(xs), minMs: Math.min(...xs), n: xs.length };
  /** Median over rounds of (a's round median / b's round median). */
  const ratio = (a: string, b: string) => median(perRound[a].map((x, i) => x / perRound[b][i]));
  const lines: string[] = [];
  for (const rt of ['native', 'node-wasm', 'chromium-wasm']) for (const t of TILES_PX) {
    const cells = KEYS.map((k) => { const v = table[`${rt} ${k} ${t}`]; return `${k} ${v.medianMs.toFixed(1)} ms (min ${v.minMs.toFixed(1)})`; });
    const sp = KEYS.slice(1).map((k) => `fp32/${k} ${ratio(`${rt} fp32 ${t}`, `${rt} ${k} ${t}`).toFixed(2)}`);
    lines.push(`${rt.padEnd(14)} ${String(t).padStart(4)}²: ${cells.join(', ')}; ${sp.join(', ')}`);
  }
  for (const t of TILES_PX) for (const k of KEYS) {
    lines.push(`browser/native ${k} ${t}²: ${ratio(`native ${k} ${t}`, `chromium-wasm ${k} ${t}`).toFixed(3)}`);
  }
  for (const t of TILES_PX) for (const k of KEYS.slice(1)) lines.push(`browser ${k} / native fp32 ${t}²: ${ratio(`native fp32 ${t}`, `chromium-wasm ${k} ${t}`).toFixed(3)}`);
  for (const [k, v] of Object.entries(agreement)) lines.push(`max |diff| ${k}: ${v.toPrecision(3)}`);
  process.stdout.write(`${lines.join('\n')}\n`);
  const out = arg('out', '');
  if (out) writeFileSync(out, JSON.stringify({ models: MODELS, rounds, runs, scene, table, perRound, agreement }, null, 1));
}

await main();
