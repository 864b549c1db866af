// `seamtally batch work`: one machine's worker process. BullMQ hands it block jobs (up to --concurrency at once, each
// on its own onnxruntime-node session) and finishing jobs; retries, stalled jobs of vanished workers and the flows'
// parent/child bookkeeping are BullMQ's. A block job plans its scene as submit did, runs its tiles through the core
// pipeline and stores their detection tables (block-codec.ts) under a key of its own: a retried or re-run block
// overwrites the same key, so nothing is counted twice.
import { availableParallelism } from 'node:os';
import { Worker, type Job } from 'bullmq';
import type { Redis } from 'ioredis';
import { SeamtallyError, toErrorInfo } from '../../web/core/errors.ts';
import { parseSidecar, type ModelSidecar } from '../../web/core/model-contract.ts';
import { prepareScene, runScene, type ScenePipeline } from '../../web/core/pipeline.ts';
import { openNodeModel, type NodeModel } from '../../web/io/ort-node.ts';
import { openScene } from '../date-run.ts';
import { intArg } from '../detect.ts';
import { encodeBlock, type TileTable } from './block-codec.ts';
import { checkTileCount, finishDate } from './finish.ts';
import { takeOptions } from './submit.ts';
import { BLOCK_QUEUE, connect, DEFAULT_PREFIX, FINISH_QUEUE, blockJobId, keys, readPlan, redisOptions, type BatchPlan, type BlockJobData, type BlockResult, type FinishJobData, type FinishResult } from './queue.ts';

export const USAGE = 'Usage: seamtally batch work --redis URL [--concurrency N] [--lock-s S] [--idle-exit S] [--prefix P] [--quiet]';

/** A pool of sessions of one model: one per concurrent job. */
class SessionPool {
  private free: NodeModel[] = [];
  private all: NodeModel[] = [];
  private waiting: ((m: NodeModel) => void)[] = [];
  constructor(private readonly open: () => Promise<NodeModel>, private readonly size: number) {}
  async acquire(): Promise<NodeModel> {
    const m = this.free.pop();
    if (m) return m;
    if (this.all.length < this.size) {
      const opened = await this.open();
      this.all.push(opened);
      return opened;
    }
    return new Promise((resolve) => this.waiting.push(resolve));
  }
  release(m: NodeModel): void {
    const next = this.waiting.shift();
    if (next) next(m); else this.free.push(m);
  }
  async close(): Promise<void> {
    for (const m of this.all) await m.close();
    this.all = []; this.free = [];
  }
}

/** What a worker keeps per batch: its plan, its model's sessions and each date's opened scenes and pipelines. */
interface BatchCache {
  plan: BatchPlan;
  sidecar: ModelSidecar;
  sessions: SessionPool;
  /** Opened scenes and their pipelines by "dateIdx/sceneIdx". */
  scenes: Map<string, Promise<ScenePipeline>>;
}

export async function run(argv: string[]): Promise<number> {
  const { values, rest } = takeOptions(argv, ['redis', 'concurrency', 'lock-s', 'idle-exit', 'prefix'], USAGE);
  const url = values.get('redis');
  if (!url) throw new SeamtallyError('bad-argument', `--redis is required. ${USAGE}`);
  const quiet = rest.includes('--quiet');
  const unknown = rest.filter((a) => a !== '--quiet');
  if (unknown.length) throw new SeamtallyError('bad-argument', `Unknown argument "${unknown[0]}". ${USAGE}`);
  const concurrency = intArg(values.get('concurrency'), 'concurrency', 1, USAGE) ?? availableParallelism();
  const lockMs = (intArg(values.get('lock-s'), 'lock-s', 1, USAGE) ?? 30) * 1000;
  const idleExitMs = (intArg(values.get('idle-exit'), 'idle-exit', 1, USAGE) ?? 0) * 1000;
  const prefix = values.get('prefix') ?? DEFAULT_PREFIX;
  // fault drills (DEVELOPERS.md): hold each block job this long before its tiles run, so a test can kill it mid-job
  const holdMs = Number(process.env.SEAMTALLY_DRILL_HOLD_MS ?? 0);
  const log = (line: string) => { if (!quiet) process.stderr.write(`${new Date().toISOString().slice(11, 19)} ${line}\n`); };

  const data: Redis = await connect(url, true);
  const caches = new Map<string, BatchCache>();
  const cacheOf = async (batchId: string): Promise<BatchCache> => {
    let c = caches.get(batchId);
    if (!c) {
      const plan = await readPlan(data, prefix, batchId);
      const sidecar = parseSidecar(plan.sidecarText);
      const modelBytes = await data.getBuffer(keys(prefix).model(plan.modelSha256));
      if (!modelBytes) throw new Error(`The model of batch ${batchId} is missing from Redis: submit the batch again.`);
      const bytes = new Uint8Array(modelBytes.buffer, modelBytes.byteOffset, modelBytes.byteLength);
      const sessions = new SessionPool(() => openNodeModel(bytes, sidecar, { threads: plan.options.threads, tilePx: plan.options.tilePx }), concurrency);
      c = { plan, sidecar, sessions, scenes: new Map() };
      caches.set(batchId, c);
    }
    return c;
  };
  // a block's scene, planned as submit planned it (same file, options and frame → same tiles, same stretch)
  const sceneOf = (c: BatchCache, dateIdx: number, sceneIdx: number): Promise<ScenePipeline> => {
    const k = `${dateIdx}/${sceneIdx}`;
    let p = c.scenes.get(k);
    if (!p) {
      const d = c.plan.dates[dateIdx];
      p = (async () => {
        const src = await openScene(d.scenes[sceneIdx]);
        try {
          const o = c.plan.options;
          const q = await prepareScene(src, sceneIdx, c.sidecar, { tilePx: o.tilePx, overlapPx: o.overlapPx, bands: o.bands, minScore: o.minScore, frameEpsg: d.frameEpsg });
          checkTileCount(c.plan, dateIdx, sceneIdx, q.plan.tiles.length);
          return q;
        } catch (err) { await src.close(); throw err; }
      })();
      p.catch(() => c.scenes.delete(k)); // a failed open is tried again by the job's next try
      c.scenes.set(k, p);
    }
    return p;
  };
  const closeScenes = async (c: BatchCache, dateIdx?: number) => {
    for (const [k, p] of [...c.scenes]) {
      if (dateIdx !== undefined && !k.startsWith(`${dateIdx}/`)) continue;
      c.scenes.delete(k);
      await p.then((q) => q.source.close(), () => undefined);
    }
  };

  let lastActivity = Date.now();
  let active = 0;
  const processBlock = async (job: Job<BlockJobData>): Promise<BlockResult> => {
    lastActivity = Date.now();
    active++;
    const b = job.data;
    const id = blockJobId(b.batchId, b);
    log(`block ${id} started (try ${job.attemptsMade + 1})`);
    const c = await cacheOf(b.batchId);
    const p = await sceneOf(c, b.dateIdx, b.sceneIdx);
    if (holdMs > 0) await new Promise((r) => setTimeout(r, holdMs));
    const model = await c.sessions.acquire();
    try {
      const tiles: TileTable[] = [];
      const t0 = performance.now();
      const r = await runScene(p, model.infer, { tiles: p.plan.tiles.slice(b.firstTile, b.endTile), onTile: (t) => { if (t.table.count) tiles.push({ tileIndex: t.tile.index, table: t.table }); } });
      const key = keys(prefix).block(b.batchId, b);
      await data.set(key, Buffer.from(encodeBlock(tiles)));
      const ms = performance.now() - t0;
      const detections = tiles.reduce((a, t) => a + t.table.count, 0);
      log(`block ${id} done: ${b.endTile - b.firstTile} tiles, ${detections} detections, ${(ms / 1000).toFixed(1)} s`);
      return { tiles: b.endTile - b.firstTile, tilesSkipped: r.tilesSkipped, detections, ms, key };
    } catch (err) {
      const info = toErrorInfo(err);
      log(`block ${id} failed: ${info.message}`);
      throw new Error(info.message);
    } finally {
      c.sessions.release(model);
      active--;
      lastActivity = Date.now();
    }
  };
  const processFinish = async (job: Job<FinishJobData>): Promise<FinishResult> => {
    lastActivity = Date.now();
    active++;
    try { return await finishJob(job); } finally { active--; lastActivity = Date.now(); }
  };
  const finishJob = async (job: Job<FinishJobData>): Promise<FinishResult> => {
    const { batchId, dateIdx } = job.data;
    const plan = (await cacheOf(batchId)).plan;
    log(`date ${plan.dates[dateIdx].date} of batch ${batchId}: finishing`);
    const r = await finishDate(data, prefix, plan, dateIdx, { values: await job.getChildrenValues<BlockResult>(), failures: await job.getIgnoredChildrenFailures() });
    log(`date ${r.date} of batch ${batchId} finished: ${r.detections} detections, ${r.failedBlocks} failed blocks; ${r.writtenTo ? `written to ${r.writtenTo}` : 'kept on Redis (seamtally batch collect writes it)'}`);
    // a finished date's scenes are closed (planned again if a block of it ever comes back)
    const c = caches.get(batchId);
    if (c) await closeScenes(c, dateIdx);
    return r;
  };

  const connection = { ...redisOptions(url), maxRetriesPerRequest: null };
  // a job whose worker stops renewing its lock (killed, or its machine gone) is taken back after lockMs and run again
  const common = { connection, prefix, lockDuration: lockMs, stalledInterval: lockMs, maxStalledCount: 2 };
  const blocks = new Worker<BlockJobData, BlockResult>(BLOCK_QUEUE, processBlock, { ...common, concurrency });
  const finishing = new Worker<FinishJobData, FinishResult>(FINISH_QUEUE, processFinish, { ...common, concurrency: 1 });
  for (const w of [blocks, finishing]) w.on('error', (err) => log(`queue: ${err.message}`));
  log(`worker ready: ${concurrency} block job${concurrency === 1 ? '' : 's'} at once, Redis ${url}`);

  await new Promise<void>((resolve) => {
    const stop = () => resolve();
    process.once('SIGINT', stop);
    process.once('SIGTERM', stop);
    if (idleExitMs > 0) {
      const timer = setInterval(() => {
        if (active === 0 && Date.now() - lastActivity > idleExitMs) { clearInterval(timer); resolve(); }
      }, 500);
      timer.unref();
    }
  });
  log('worker stopping: finishing its current jobs');
  await Promise.all([blocks.close(), finishing.close()]);
  for (const c of caches.values()) {
    await c.sessions.close();
    await closeScenes(c);
  }
  data.disconnect();
  log('worker stopped');
  // a MessagePort left behind after the jobs (not ours to close) would keep the process alive: leave regardless
  setTimeout(() => process.exit(0), 500).unref();
  return 0;
}
