// Child process of the bench: one scene through the CLI's pipeline (onnxruntime-node) — prints one JSON line with
// throughput, the per-tile split, the merge time, decoded-tile cache figures and this process's peak RSS.
// Usage: node --import tsx bench/cli-run.ts SCENE.tif MODEL.onnx [--tiles N] [--tile PX] [--threads N]
//          [--cache-mb N] (decoded-tile cache budget; default: the source's own)
//          [--pipelined also|only] (also: after the serial run — prefetch off, so the phases add up — run the same
//          tiles again on a fresh opening of the scene as the CLI runs them, reading and filling tile k+1 while tile k
//          infers; only: just that run, reported as the main figures)
import { readFileSync, statSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { inflateSync } from 'node:zlib';
import { parseSidecar } from '../web/core/model-contract.ts';
import { prepareScene, runScene } from '../web/core/pipeline.ts';
import { mergeDetectionTables } from '../web/core/seam-merge.ts';
import { openGeoTiffPath, sourceCacheStats } from '../web/io/geotiff-source.ts';
import { setSyncInflate } from '../web/io/inflate.ts';
import { openNodeModel } from '../web/io/ort-node.ts';
import { centredBlock, tileScenePx } from './tile-subset.ts';

const { positionals, values } = parseArgs({
  allowPositionals: true,
  options: { tiles: { type: 'string' }, tile: { type: 'string' }, threads: { type: 'string' }, pipelined: { type: 'string' }, warmup: { type: 'string' }, 'cache-mb': { type: 'string' } },
});
// as `seamtally` itself does (cli/main.ts): node:zlib inflates DEFLATE tiles, bounded by the block size
setSyncInflate((bytes, maxOutBytes) => inflateSync(bytes, { maxOutputLength: maxOutBytes }));
const [scenePath, modelPath] = positionals;
const sidecar = parseSidecar(readFileSync(modelPath.replace(/\.onnx$/, '.model.json'), 'utf8'));
const tilePx = values.tile ? Number(values.tile) : undefined;
const model = await openNodeModel(new Uint8Array(readFileSync(modelPath)), sidecar, { threads: Number(values.threads ?? 1), tilePx });
const cacheBytes = values['cache-mb'] !== undefined ? Number(values['cache-mb']) * 2 ** 20 : undefined;
const open = () => openGeoTiffPath(scenePath, { byteLength: statSync(scenePath).size, cacheBytes });
const pipelined = values.pipelined;
if (pipelined !== undefined && pipelined !== 'also' && pipelined !== 'only') throw new Error('--pipelined takes also or only');
const src = await open();
const p = await prepareScene(src, 0, sidecar, { tilePx });
const want = values.tiles ? Number(values.tiles) : 0;
const tiles = want > 0 ? centredBlock(p.plan, want) : p.plan.tiles;
// warm-up, not counted: the first inferences allocate onnxruntime's arena and V8 optimises the read and fill loops
// only after a few calls. On a second opening of the scene (its own decoded-tile cache, closed afterwards), so the
// timed run starts with compiled code and a cold cache, as a real run does.
const warm = Number(values.warmup ?? 3);
if (warm > 0) {
  const warmSrc = await open();
  const wp = await prepareScene(warmSrc, 0, sidecar, { tilePx });
  await runScene(wp, model.infer, { tiles: wp.plan.tiles.slice(0, warm), prefetch: false });
  await warmSrc.close();
}
const r = await runScene(p, model.infer, { tiles, prefetch: pipelined === 'only' });
let piped: { elapsedMs: number; timings: typeof r.timings } | undefined;
if (pipelined === 'also') {
  const src2 = await open();
  const p2 = await prepareScene(src2, 0, sidecar, { tilePx });
  const r2 = await runScene(p2, model.infer, { tiles: tiles.map((t) => p2.plan.tiles[t.index]), prefetch: true });
  piped = { elapsedMs: r2.elapsedMs, timings: r2.timings };
  await src2.close();
}
const t0 = performance.now();
const merged = mergeDetectionTables(r.tables);
const mergeMs = performance.now() - t0;
let scenePx = 0;
for (const t of tiles) scenePx += tileScenePx(p.plan, t);
const ru = process.resourceUsage();
process.stdout.write(JSON.stringify({
  scene: src.info.name, widthPx: src.info.widthPx, heightPx: src.info.heightPx,
  tilePx: p.plan.tilePx, overlapPx: p.plan.overlapPx, planTiles: p.plan.tiles.length, overheadRatio: p.plan.overheadRatio,
  tiles: tiles.length, tilesRun: r.tilesRun, tilesSkipped: r.tilesSkipped, scenePx,
  elapsedMs: r.elapsedMs, timings: r.timings, pipelined: pipelined === 'only' ? 'only' : piped ?? null, mergeMs, detections: merged.count,
  cache: sourceCacheStats(src), peakRssB: ru.maxRSS * 1024, cpuUserMs: ru.userCPUTime / 1000,
}) + '\n');
await model.close();
await src.close();
