// The detector worker pool: N workers (default navigator.hardwareConcurrency), each with the model loaded, fed one
// tile at a time from its own contiguous band of the raster order (tile-queue.ts: neighbours share decoded file
// tiles, so each worker's cache serves them); a worker that dies or hangs is replaced and its tile retried
// (bounded), after which the tile is reported failed — every task ends in exactly one of done / failed.
import type { Remote } from 'comlink';
import type { DetectorApi, TileDetections, TileTask } from '../../workers/contract.ts';
import { threadsPerWorker } from './pool-threads.ts';
import { spawnDetector, type WorkerHandle } from '../../workers/spawn.ts';
import type { ModelEntry } from './state.ts';
import type { FaultPlan } from './faults.ts';
import { BandQueue } from './tile-queue.ts';
import { fromErrorInfo, SeamtallyError, type ErrorInfo, type Result } from '../core/errors.ts';

/** `threads`: the onnxruntime threads the slot's model was (or is being) loaded with; 0 before any load. */
interface Slot { handle: WorkerHandle<DetectorApi>; modelReady: Promise<void> | null; threads: number }
interface QueueItem { task: TileTask; attempts: number; ordinal: number }

/** Tries per tile: the first and two retries. */
export const MAX_TILE_ATTEMPTS = 3;
/** A worker that has not answered a tile in this long is taken as hung, replaced, and the tile retried. */
const TILE_TIMEOUT_MS = 120_000;

/** Outcome callbacks of `runTasks`. */
export interface PoolCallbacks {
  done(task: TileTask, result: TileDetections): void | Promise<void>;
  failed(task: TileTask, error: ErrorInfo): void;
}

export class DetectorPool {
  private slots: Slot[] = [];
  private model: ModelEntry | null = null;
  private seq = 0;
  /** Threads per worker reported by the last model load. */
  threadsPerWorker = 1;

  /** `faults`: test-only fault injection (null unless the page was opened with `?fault=`). */
  constructor(size: number, private faults: FaultPlan | null = null) { this.resize(size); }

  get size(): number { return this.slots.length; }

  /**
   * Grow or shrink the pool (workers beyond `size` are terminated). The cores are shared out again for the new size
   * (pool-threads.ts): new workers load the model with that thread count, and workers loaded with another count
   * reload it, so a pool grown from 1 to 2 workers on 2 cores runs 1 + 1 inference threads, not 2 + 1.
   */
  resize(size: number): void {
    const n = Math.max(1, Math.floor(size));
    while (this.slots.length > n) this.slots.pop()!.handle.terminate();
    while (this.slots.length < n) this.slots.push({ handle: spawnDetector(`seamtally-detector-${this.seq++}`), modelReady: null, threads: 0 });
    const model = this.model;
    if (model) for (const s of this.slots) if (s.threads !== this.threadsWanted()) s.modelReady = this.loadInto(s, model);
  }

  /** A fresh worker in place of a lost one, with the model loaded. */
  private newSlot(): Slot {
    const slot: Slot = { handle: spawnDetector(`seamtally-detector-${this.seq++}`), modelReady: null, threads: 0 };
    if (this.model) slot.modelReady = this.loadInto(slot, this.model);
    return slot;
  }

  private threadsWanted(): number {
    return threadsPerWorker(navigator.hardwareConcurrency || 1, this.slots.length, self.crossOriginIsolated);
  }

  /** Any worker, for one-off jobs (describe a scene, draw a preview). */
  any(): Remote<DetectorApi> { return this.slots[0].handle.api; }

  /** Load `model` into every worker; rejects with the first worker's validation error and keeps the previous model. */
  async setModel(model: ModelEntry): Promise<void> {
    const previous = this.model;
    this.model = model;
    for (const s of this.slots) s.modelReady = this.loadInto(s, model);
    try {
      await Promise.all(this.slots.map((s) => s.modelReady));
    } catch (err) {
      this.model = previous;
      for (const s of this.slots) s.modelReady = previous ? this.loadInto(s, previous) : null;
      throw err;
    }
  }

  private async loadInto(slot: Slot, model: ModelEntry): Promise<void> {
    const threads = this.threadsWanted();
    slot.threads = threads;
    const r = await Promise.race([slot.handle.api.loadModel(model.bytes.slice(0), model.sidecar, { numThreads: threads }), slot.handle.lost]);
    if (!r.ok) throw fromErrorInfo(r.error);
    this.threadsPerWorker = r.value.numThreads;
  }
  /**
   * The task as sent for this attempt: with the next tile of the worker's band as a read-ahead hint (same scene), and
   * test-only faults attached under `?fault=`.
   */
  private attemptOf(item: QueueItem, next: QueueItem | undefined): TileTask {
    const task = next && next.task.sceneKey === item.task.sceneKey ? { ...item.task, nextTileIndex: next.task.tileIndex } : item.task;
    const f = this.faults;
    if (!f) return task;
    if (f.crashAt.has(item.ordinal)) return { ...task, fault: 'crash' };
    if (f.throwAt.has(item.ordinal) && item.attempts === 1) return { ...task, fault: 'throw' };
    if (f.inferCrashAt.has(item.ordinal) && item.attempts === 1) return { ...task, fault: 'infer-crash' };
    return task;
  }

  /** One tile on one worker; rejects when the worker is lost, hangs, or the run is aborted. */
  private async callTile(slot: Slot, item: QueueItem, next: QueueItem | undefined, aborted: Promise<never>): Promise<Result<TileDetections>> {
    let timer: ReturnType<typeof setTimeout> | undefined;
    const hung = new Promise<never>((_, reject) => {
      timer = setTimeout(() => reject(new Error(`no answer within ${TILE_TIMEOUT_MS / 1000} s`)), TILE_TIMEOUT_MS);
    });
    try {
      await Promise.race([slot.modelReady, slot.handle.lost, hung, aborted]);
      const call = slot.handle.api.detectTile(this.attemptOf(item, next));
      if (this.faults?.killAt.has(item.ordinal) && item.attempts === 1) setTimeout(() => slot.handle.terminate(), 20);
      return await Promise.race([call, slot.handle.lost, hung, aborted]);
    } finally {
      clearTimeout(timer);
    }
  }

  /** Run tasks on all workers until the queue is empty or `signal` aborts. Each task ends in done or failed. */
  async runTasks(tasks: TileTask[], cb: PoolCallbacks, signal: AbortSignal): Promise<void> {
    if (!this.model) throw new SeamtallyError('model-invalid', 'No detector is loaded: load one before running.');
    const queue = new BandQueue<QueueItem>(tasks.map((task) => ({ task, attempts: 0, ordinal: 0 })), this.slots.length);
    let dispatched = 0;
    const aborted = new Promise<never>((_, reject) => signal.addEventListener('abort', () => reject(new Error('aborted')), { once: true }));
    aborted.catch(() => {});
    const runSlot = async (idx: number) => {
      while (!signal.aborted) {
        const item = queue.take(idx);
        if (!item) return;
        const slot = this.slots[idx];
        if (!slot) { queue.putFront(idx, item); return; }
        item.attempts++;
        if (item.attempts === 1) item.ordinal = ++dispatched;
        let r: Result<TileDetections>;
        try {
          r = await this.callTile(slot, item, queue.peek(idx), aborted);
        } catch (err) {
          // The worker itself broke (crash, killed, out of memory, hung): replace it and retry the tile, bounded.
          if (signal.aborted) return;
          slot.handle.terminate();
          this.slots[idx] = this.newSlot();
          if (item.attempts < MAX_TILE_ATTEMPTS) queue.putBack(idx, item);
          else cb.failed(item.task, { kind: 'internal', message: `its worker failed ${MAX_TILE_ATTEMPTS} times (last: ${err instanceof Error ? err.message : String(err)}), so this tile is counted as not imaged: its area is left out of coverage. Run again to retry it.`, detail: {} });
          continue;
        }
        if (r.ok) { await cb.done(item.task, r.value); continue; }
        if (r.error.kind === 'cancelled' && signal.aborted) return;
        if (r.error.kind === 'internal' && item.attempts < MAX_TILE_ATTEMPTS) { queue.putBack(idx, item); continue; }
        cb.failed(item.task, r.error);
      }
    };
    const onAbort = () => { for (const s of this.slots) void s.handle.api.cancel(tasks[0]?.runId ?? ''); };
    signal.addEventListener('abort', onAbort, { once: true });
    try {
      await Promise.all(this.slots.map((_, i) => runSlot(i)));
    } finally {
      signal.removeEventListener('abort', onAbort);
    }
  }

  terminate(): void { for (const s of this.slots) s.handle.terminate(); this.slots = []; }
}
