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
  modelUrl: string;
  sidecarUrl: string;
  /** About this many tiles from the middle of the scene; 0 = all. */
  tiles: number;
  workers: number;
  tilePx?: number;
}

export interface TileRunFigures {
  workers: number;
  tiles: number;
  scenePx: number;
  wallMs: number;
  timings: TileTimingsMs;
  planTiles: number;
  overheadRatio: number;
  numThreads: number;
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
    const input = { kind: 'url' as const, url: spec.sceneUrl };
    // the bench scenes are in EPSG:32632, which is also their metric frame
    const prepare: ScenePrepareOptions = { sceneIdx: 0, frameEpsg: 32632, minScore: sidecar.minScore ?? 0.5, tilePx: spec.tilePx };
    const plans = await Promise.all(handles.map((h) => h.api.planScene('bench', input, prepare).then((r) => unwrap(r))));
    const plan: TilePlan = plans[0].plan;
    const tiles = spec.tiles > 0 ? centredBlock(plan, spec.tiles) : plan.tiles;
    const task = (tileIndex: number) => ({ runId: 'bench', sceneKey: 'bench', input, prepare, tileIndex });
    // warm-up: one tile per worker (onnxruntime's first runs allocate), from outside the timed block
    await Promise.all(handles.map((h, i) => h.api.detectTile(task(plan.tiles[i % plan.tiles.length].index)).then(unwrap)));
    // the app's hand-out (web/app/tile-queue.ts): contiguous bands per worker, work stealing at the end
    const queue = new BandQueue(tiles.map((t) => t.index), handles.length);
    const timings: TileTimingsMs = { readMs: 0, resampleMs: 0, inferMs: 0, decodeMs: 0 };
    const t0 = performance.now();
    await Promise.all(handles.map(async (h, w) => {
      for (let idx = queue.take(w); idx !== undefined; idx = queue.take(w)) {
        const r = unwrap(await h.api.detectTile(task(idx)));
        for (const k of Object.keys(timings) as (keyof TileTimingsMs)[]) timings[k] += r.timingsMs[k];
      }
    }));
    const wallMs = performance.now() - t0;
    let scenePx = 0;
    for (const t of tiles) scenePx += tileScenePx(plan, t);
    return { workers: spec.workers, tiles: tiles.length, scenePx, wallMs, timings, planTiles: plan.tiles.length, overheadRatio: plan.overheadRatio, numThreads: loads[0].numThreads };
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
