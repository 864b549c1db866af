// The detector worker pool: N workers (default navigator.hardwareConcurrency), each with the model loaded,
// fed one tile at a time from a shared queue; a worker that dies is replaced and its tile retried.
import type { Remote } from 'comlink';
import type { DetectorApi, TileDetections, TileTask } from '../../workers/contract.ts';
import { spawnDetector, type WorkerHandle } from '../../workers/spawn.ts';
import type { ModelEntry } from './state.ts';
import { fromErrorInfo, SeamtallyError, type ErrorInfo } from '../core/errors.ts';

interface Slot { handle: WorkerHandle<DetectorApi>; modelReady: Promise<void> | null }

const MAX_TILE_ATTEMPTS = 3;

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

  constructor(size: number) { this.resize(size); }

  get size(): number { return this.slots.length; }

  /** Grow or shrink the pool (workers beyond `size` are terminated). */
  resize(size: number): void {
    const n = Math.max(1, Math.floor(size));
    while (this.slots.length > n) this.slots.pop()!.handle.terminate();
    while (this.slots.length < n) this.slots.push({ handle: spawnDetector(`seamtally-detector-${this.seq++}`), modelReady: null });
    if (this.model) for (const s of this.slots) if (!s.modelReady) s.modelReady = this.loadInto(s, this.model);
  }

  /** Any worker, for one-off jobs (describe a scene, draw a preview). */
  any(): Remote<DetectorApi> { return this.slots[0].handle.api; }

  /** Load `model` into every worker; rejects with the first worker's validation error. */
  async setModel(model: ModelEntry): Promise<void> {
    this.model = model;
    for (const s of this.slots) s.modelReady = this.loadInto(s, model);
    await Promise.all(this.slots.map((s) => s.modelReady));
  }

  private async loadInto(slot: Slot, model: ModelEntry): Promise<void> {
    const threads = self.crossOriginIsolated ? Math.max(1, Math.floor((navigator.hardwareConcurrency || 1) / this.slots.length)) : 1;
    const r = await slot.handle.api.loadModel(model.bytes.slice(0), model.sidecar, { numThreads: threads });
    if (!r.ok) throw fromErrorInfo(r.error);
    this.threadsPerWorker = r.value.numThreads;
  }

  /** Run tasks on all workers until the queue is empty or `signal` aborts. Each task ends in done or failed. */
  async runTasks(tasks: TileTask[], cb: PoolCallbacks, signal: AbortSignal): Promise<void> {
    if (!this.model) throw new SeamtallyError('model-invalid', 'No detector is loaded: load one before running.');
    const queue = tasks.map((task) => ({ task, attempts: 0 }));
    const runSlot = async (idx: number) => {
      while (queue.length > 0 && !signal.aborted) {
        const item = queue.shift()!;
        const slot = this.slots[idx];
        if (!slot) { queue.unshift(item); return; }
        item.attempts++;
        try {
          await slot.modelReady;
          const r = await slot.handle.api.detectTile(item.task);
          if (r.ok) { await cb.done(item.task, r.value); continue; }
          if (r.error.kind === 'cancelled') return;
          if (r.error.kind === 'internal' && item.attempts < MAX_TILE_ATTEMPTS) { queue.push(item); continue; }
          cb.failed(item.task, r.error);
        } catch (err) {
          // The worker itself broke (crash, out of memory): replace it and retry the tile a bounded number of times.
          if (signal.aborted) return;
          slot.handle.terminate();
          this.slots[idx] = { handle: spawnDetector(`seamtally-detector-${this.seq++}`), modelReady: null };
          this.slots[idx].modelReady = this.model ? this.loadInto(this.slots[idx], this.model) : null;
          if (item.attempts < MAX_TILE_ATTEMPTS) queue.push(item);
          else cb.failed(item.task, { kind: 'internal', message: `A tile failed ${MAX_TILE_ATTEMPTS} times (${String(err)}); its area is left out of coverage.`, detail: {} });
        }
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
