// The batch's layout on Redis: BullMQ queue names, the job data each queue carries, our own keys (the batch's plan,
// its model, each block's detections, each date's outputs) and the connection. Shared by submit, work, status, collect.
import { Redis, type RedisOptions } from 'ioredis';
import { SeamtallyError } from '../../web/core/errors.ts';

/** The queue of block jobs (one block = a run of consecutive tiles of one scene). */
export const BLOCK_QUEUE = 'seamtally-blocks';
/** The queue of finishing jobs (one per date: a BullMQ flow parent whose children are that date's blocks). */
export const FINISH_QUEUE = 'seamtally-finish';
/** Key prefix of BullMQ's keys and ours (`--prefix` lets several teams share one Redis). */
export const DEFAULT_PREFIX = 'seamtally';

/** One block: tiles [firstTile, endTile) of scene `sceneIdx` of date `dateIdx`. */
export interface BlockRef {
  dateIdx: number;
  sceneIdx: number;
  firstTile: number;
  endTile: number;
}

export interface BlockJobData extends BlockRef {
  batchId: string;
}

export interface FinishJobData {
  batchId: string;
  dateIdx: number;
}

/** What a block job returns (kept by BullMQ with the job): the tiles it ran and how long they took. */
export interface BlockResult {
  tiles: number;
  tilesSkipped: number;
  detections: number;
  ms: number;
  /** The key holding the block's detection tables (block-codec.ts). */
  key: string;
}

/** What a finishing job returns. */
export interface FinishResult {
  date: string;
  detections: number;
  failedBlocks: number;
  /** Where the outputs were written, or null when this worker could not write there (collect writes them). */
  writtenTo: string | null;
}

/** One date of a batch as submit planned it. */
export interface BatchDate {
  date: string;
  scenes: string[];
  /** EPSG code of the date's metric frame (pipeline.ts runFrameEpsg over all its scenes), so a worker opens only its block's scene. */
  frameEpsg: number;
  /** Tiles per scene in the plan submit made; a worker that plans a different number refuses the block. */
  tilesPerScene: number[];
  blocks: BlockRef[];
}

/** The batch's plan and options, stored once at submit (`batchKey`). */
export interface BatchPlan {
  format: 'seamtally-batch/1';
  id: string;
  createdMs: number;
  out: string;
  aoiText: string;
  aoiFile: string;
  modelFile: string;
  /** sha256 of the model's bytes (kept under `modelKey`). */
  modelSha256: string;
  sidecarText: string;
  options: { tilePx?: number; overlapPx: number | 'auto'; minScore?: number; bands?: number[]; threads: number };
  tilesPerJob: number;
  attempts: number;
  dates: BatchDate[];
}

export const keys = (prefix: string) => ({
  batches: `${prefix}:batches`,
  batch: (id: string) => `${prefix}:batch:${id}`,
  model: (sha256: string) => `${prefix}:model:${sha256}`,
  block: (id: string, b: BlockRef) => `${prefix}:batch:${id}:block:${blockJobId(id, b)}`,
  outputs: (id: string, dateIdx: number) => `${prefix}:batch:${id}:out:${dateIdx}`,
});

/** BullMQ job ids (no ':' allowed): stable, so a block is one job however often it is retried. */
export function blockJobId(batchId: string, b: BlockRef): string {
  return `${batchId}.d${b.dateIdx}.s${b.sceneIdx}.t${b.firstTile}-${b.endTile}`;
}

export function finishJobId(batchId: string, dateIdx: number): string {
  return `${batchId}.d${dateIdx}.finish`;
}

/** The sentence for an unreachable Redis. */
export function unreachable(url: string, why: string): SeamtallyError {
  return new SeamtallyError('network', `Could not reach Redis at ${url} (${why}): start redis-server there or correct --redis (e.g. redis://127.0.0.1:6379).`, { url });
}

/** Parse a --redis URL into ioredis options (redis://[user:password@]host[:port][/db]). */
export function redisOptions(url: string): RedisOptions {
  let u: URL;
  try { u = new URL(url); } catch {
    throw new SeamtallyError('bad-argument', `--redis must be a URL such as redis://127.0.0.1:6379, not "${url}".`);
  }
  if (u.protocol !== 'redis:' && u.protocol !== 'rediss:') throw new SeamtallyError('bad-argument', `--redis must be a redis:// or rediss:// URL, not "${url}".`);
  const db = u.pathname.length > 1 ? Number(u.pathname.slice(1)) : 0;
  return {
    host: u.hostname || '127.0.0.1', port: u.port ? Number(u.port) : 6379, db: Number.isInteger(db) ? db : 0,
    username: u.username ? decodeURIComponent(u.username) : undefined, password: u.password ? decodeURIComponent(u.password) : undefined,
    tls: u.protocol === 'rediss:' ? {} : undefined,
  };
}

/**
 * A connection. `long` (workers): waits for Redis across restarts, as BullMQ workers require
 * (maxRetriesPerRequest null). Otherwise (submit, status, collect) it fails within a few seconds with a sentence.
 */
export async function connect(url: string, long: boolean): Promise<Redis> {
  const opts = redisOptions(url);
  const conn = long
    ? new Redis({ ...opts, maxRetriesPerRequest: null, retryStrategy: (n) => Math.min(200 * n, 2000) })
    : new Redis({ ...opts, maxRetriesPerRequest: 1, connectTimeout: 5000, retryStrategy: (n) => (n > 3 ? null : 300), lazyConnect: true });
  if (!long) {
    let last = '';
    conn.on('error', (err: Error) => { last = err.message; });
    try { await conn.connect(); await conn.ping(); } catch (err) {
      conn.disconnect();
      throw unreachable(url, last || (err as Error).message);
    }
  }
  return conn;
}

/** The stored plan of a batch, or a sentence when there is none. */
export async function readPlan(conn: Redis, prefix: string, id: string): Promise<BatchPlan> {
  const text = await conn.get(keys(prefix).batch(id));
  if (!text) throw new SeamtallyError('bad-argument', `No batch "${id}" on this Redis (prefix ${prefix}): check the id that batch submit printed, and --redis.`);
  return JSON.parse(text) as BatchPlan;
}
