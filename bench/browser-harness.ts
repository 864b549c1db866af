// In-page part of the browser bench (imported by Playwright through Vite): runs planned tiles of a scene on N
// detector workers (the app's own worker entry and contract) and merges invented detections in the tally worker.
import { spawnDetector, spawnTally, type WorkerHandle } from '../workers/spawn.ts';
import type { DetectorApi, ScenePrepareOptions, TileTimingsMs } from '../workers/contract.ts';
import type { TilePlan } from '../web/core/tiling.ts';
import { centredBlock, tileScenePx } from './tile-subset.ts';
import { BandQueue } from '../web/app/tile-queue.ts';
import { makeMergeTables, totalRows } from './merge-data.ts';

export interface TileRunSpec {
  sceneUrl: string;
  /**
   * 'file' (default): the scene as a local File, as an analyst opens one (the page's `<input id="bench-scene">`, set
   * by the Node side with a disk-backed file); 'url': HTTP range requests to the Vite server (as the demo reads).
   */
  read?: 'file' | 'url';
  /** Id of the page's file input that holds the scene of a 'file' run (bench/browser.ts creates and sets it). */
  fileInputId?: string;
  modelUrl: string;
  sidecarUrl: string;
  /** About this many tiles from the middle of the scene; 0 = all. */
  tiles: number;
  workers: number;
  tilePx?: number;
  /** Warm-up tiles per worker before the timed block (default 3), see runTiles. */
  warmupTiles?: number;
  /**
   * Send each worker's next tile as a read-ahead hint, as the app's pool does (default true). False: each tile is
   * read, filled and inferred one after the other (serial), so its phases add up to the worker's wall.
   */
  readAhead?: boolean;
}

/** CPU time so far (ms), read from /proc by the Node side (bench/browser.ts cpuSnapshot) through an exposed function. */
export interface CpuSnapshot {
  /** All threads of the renderer processes (page, detector workers, wasm). */
  rendererMs: number;
  /** Each dedicated-worker thread of the renderers, by "pid/tid". */
  workerMs: Record<string, number>;
  /** The whole machine's busy time (every process, niced ones included). */
  machineBusyMs: number;
}

/** Cores in use on average during the timed part: CPU ms / wall ms. */
export interface CoresUsed {
  renderer: number;
  /** The busiest detector-worker threads, one per worker, most first. */
  workers: number[];
  /** Dedicated-worker threads that ran at all (more than the workers: onnxruntime's own threads, or the tally worker). */
  busyThreads: number;
  machine: number;
}

export interface TileRunFigures {
  workers: number;
  readAhead: boolean;
  tiles: number;
  scenePx: number;
  wallMs: number;
  timings: TileTimingsMs;
  planTiles: number;
  overheadRatio: number;
  numThreads: number;
  /** Wall time each worker spent waiting on its detectTile calls (the rest of the wall it was idle). */
  busyMs: number[];
  cpu: CoresUsed | null;
}

function coresUsed(a: CpuSnapshot, b: CpuSnapshot, wallMs: number, workers: number): CoresUsed {
  const perThread = Object.keys(b.workerMs).map((k) => (b.workerMs[k] - (a.workerMs[k] ?? 0)) / wallMs).sort((x, y) => y - x);
  return {
    // each detector worker has an inference worker: the 2 busiest worker threads per detector worker
    renderer: (b.rendererMs - a.rendererMs) / wallMs, workers: perThread.slice(0, 2 * workers), busyThreads: perThread.filter((c) => c > 0).length,
    machine: (b.machineBusyMs - a.machineBusyMs) / wallMs,
  };
}

/** The file the Node side put into the page's file input (bench/browser.ts). */
function benchFile(id: string | undefined): File {
  const f = id ? (document.getElementById(id) as HTMLInputElement | null)?.files?.[0] : undefined;
  if (!f) throw new Error(`no scene file in the file input "${id}": bench/browser.ts sets it before runTiles`);
  return f;
}

function unwrap<T>(r: { ok: true; value: T } | { ok: false; error: { message: string } }): T {
  if (!r.ok) throw new Error(r.error.message);
  return r.value;
}

/** Run a centred block of tiles on `workers` fresh detector workers; one warm-up tile per worker is not counted. */
export async function runTiles(spec: TileRunSpec): Promise<TileRunFigures> {
  const [modelBytes, sidecar] = await Promise.all([
    fetch(spec.modelUrl).then((r) => r.arrayBuffer()),
    fetch(spec.sidecarUrl).then((r) => r.json()),
  ]);
  const handles: WorkerHandle<DetectorApi>[] = [];
  for (let i = 0; i < spec.workers; i++) handles.push(spawnDetector(`bench-detector-${i}`));
  try {
    const loads = await Promise.all(handles.map((h) => h.api.loadModel(modelBytes.slice(0), sidecar, { numThreads: 1 }).then((r) => unwrap(r))));
    const input = spec.read === 'url' ? { kind: 'url' as const, url: spec.sceneUrl } : { kind: 'file' as const, file: benchFile(spec.fileInputId) };
    // the bench scenes are in EPSG:32632, which is also their metric frame
    const prepare: ScenePrepareOptions = { sceneIdx: 0, frameEpsg: 32632, minScore: sidecar.minScore ?? 0.5, tilePx: spec.tilePx };
    const plans = await Promise.all(handles.map((h) => h.api.planScene('bench', input, prepare).then((r) => unwrap(r))));
    const plan: TilePlan = plans[0].plan;
    const tiles = spec.tiles > 0 ? centredBlock(plan, spec.tiles) : plan.tiles;
    // as the app's pool sends them: with the next tile of the worker's band as a read-ahead hint
    const task = (tileIndex: number, nextTileIndex?: number) => ({ runId: 'bench', sceneKey: 'bench', input, prepare, tileIndex, nextTileIndex });
    // warm-up, not timed: onnxruntime's first runs allocate, and V8 compiles a hot loop (read, fill) to optimised
    // code only after a few calls — the first tile's fill runs ~5× slower than the tenth. Warm-up tiles run on a
    // second opening of the scene (its own key, so its own decoded-tile cache, dropped afterwards): the timed block
    // then starts, as a real run does, with a cold cache but compiled code.
    const warmKey = 'bench-warm';
    const warmTask = (tileIndex: number) => ({ runId: 'bench', sceneKey: warmKey, input, prepare, tileIndex });
    const warm = spec.warmupTiles ?? 3;
    await Promise.all(handles.map(async (h, i) => {
      for (let k = 0; k < warm; k++) unwrap(await h.api.detectTile(warmTask(plan.tiles[(i * warm + k) % plan.tiles.length].index)));
      await h.api.forgetScene(warmKey);
    }));
    // the app's hand-out (web/app/tile-queue.ts): contiguous bands per worker, work stealing at the end
    const queue = new BandQueue(tiles.map((t) => t.index), handles.length);
    const readAhead = spec.readAhead ?? true;
    const timings: TileTimingsMs = { readMs: 0, resampleMs: 0, inferMs: 0, decodeMs: 0 };
    const busyMs = handles.map(() => 0);
    const cpuNow = (globalThis as { __benchCpu?: () => Promise<CpuSnapshot> }).__benchCpu;
    const cpu0 = cpuNow ? await cpuNow() : null;
    const t0 = performance.now();
    await Promise.all(handles.map(async (h, w) => {
      for (let idx = queue.take(w); idx !== undefined; idx = queue.take(w)) {
        const ts = performance.now();
        const r = unwrap(await h.api.detectTile(task(idx, readAhead ? queue.peek(w) : undefined)));
        busyMs[w] += performance.now() - ts;
        for (const k of Object.keys(timings) as (keyof TileTimingsMs)[]) timings[k] += r.timingsMs[k];
      }
    }));
    const wallMs = performance.now() - t0;
    const cpu1 = cpuNow ? await cpuNow() : null;
    let scenePx = 0;
    for (const t of tiles) scenePx += tileScenePx(plan, t);
    return { workers: spec.workers, readAhead, tiles: tiles.length, scenePx, wallMs, timings, planTiles: plan.tiles.length, overheadRatio: plan.overheadRatio, numThreads: loads[0].numThreads,
      busyMs, cpu: cpu0 && cpu1 ? coresUsed(cpu0, cpu1, wallMs, spec.workers) : null };
  } finally {
    for (const h of handles) h.terminate();
  }
}

/** Merge `n` invented detections in the tally worker (as the app merges a date): wall time including the hand-over. */
export async function mergeInTally(ns: number[]): Promise<Array<{ n: number; ms: number; kept: number }>> {
  const tally = spawnTally();
  try {
    const out = [];
    // warm-up (JIT) on a small set
    unwrap(await tally.api.mergeDate(makeMergeTables(20_000), {}));
    for (const n of ns) {
      const tables = makeMergeTables(n);
      const t0 = performance.now();
      const merged = unwrap(await tally.api.mergeDate(tables, {}));
      out.push({ n: totalRows(tables), ms: performance.now() - t0, kept: merged.count });
    }
    return out;
  } finally {
    tally.terminate();
  }
}
