// Running detection: dispatch the planned tiles to the pool, keep each finished tile in IndexedDB, report progress,
// merge per date in the tally worker (live every few seconds, and at the end); cancel, and resume what was kept.
import type { AppState, DateDetections } from './state.ts';
import type { DetectorPool } from './worker-pool.ts';
import type { TallyApi, TileDetections } from '../../workers/contract.ts';
import type { Remote } from 'comlink';
import { planRun, tileKey, type RunPlan } from './run-plan.ts';
import type { RunRecord, TileRecord } from './store.ts';
import type { TileTask } from '../../workers/contract.ts';
import { toErrorInfo, fromErrorInfo } from '../core/errors.ts';
import { tileCoreScenePx } from '../core/tiling.ts';

const LIVE_MERGE_MS = 2000;
/** Finished tiles are written to IndexedDB at most this long after they finish. */
const WRITE_BATCH_MS = 500;

export interface RunServices { pool: DetectorPool; tally: Remote<TallyApi> }

/** Drives one run at a time. */
export class RunController {
  private abort: AbortController | null = null;
  private tiles = new Map<string, TileDetections>();
  private plan: RunPlan | null = null;
  private lastMergeMs = 0;
  private merging: Promise<void> | null = null;

  constructor(private state: AppState, private svc: RunServices, private opts: { paceMs?: number } = {}) {}

  get running(): boolean { return this.abort !== null; }

  private progress(patch: Partial<AppState['progress']>): void {
    Object.assign(this.state.progress, patch);
    this.state.events.emit('run-progress');
  }

  /**
   * Keep something in IndexedDB without stopping the run when that fails (a full disk): the first failure of a run
   * is reported as a notice (the store's sentence says what to do), later ones are not repeated.
   */
  private storeFailed = false;
  private async keep(write: () => Promise<unknown> | undefined): Promise<void> {
    try { await write(); } catch (err) {
      if (this.storeFailed) return;
      this.storeFailed = true;
      this.state.events.emit('notice', { level: 'error', text: `${toErrorInfo(err).message} Until then this run goes on, but its results are not kept (a reload loses them).` });
    }
  }

  /** A tile that failed for good: its core (scene pixels) counts as not imaged, and the analyst is told which. */
  private tileFailed(task: TileTask, message: string): void {
    const state = this.state;
    const ps = this.plan?.dates.flatMap((d) => d.scenes).find((x) => x.scene.fingerprint === task.sceneKey);
    const tile = ps?.plan.tiles[task.tileIndex];
    if (ps && tile) {
      const box = tileCoreScenePx(ps.plan, tile);
      state.failedTilesPx.set(task.sceneKey, [...(state.failedTilesPx.get(task.sceneKey) ?? []), box]);
    }
    this.progress({ tilesFailed: state.progress.tilesFailed + 1 });
    const name = ps?.scene.name ?? task.sceneKey.slice(0, 8);
    state.events.emit('notice', { level: 'error', text: `Tile ${task.tileIndex + 1} of ${name} failed: ${message}` });
  }

  /** Start (or resume, when a kept run has the same key) a run of the current scenes, areas and model. */
  async start(): Promise<void> {
    if (this.abort) return;
    const state = this.state;
    const abort = new AbortController();
    this.abort = abort;
    this.storeFailed = false;
    this.progress({ status: 'running', tilesDone: 0, tilesTotal: 0, tilesFailed: 0, tilesPerS: 0, startedMs: Date.now(), message: 'Planning tiles…' });
    try {
      const plan = await planRun(state, this.svc.pool);
      this.plan = plan;
      for (const d of plan.dates) for (const ps of d.scenes) state.failedTilesPx.delete(ps.scene.fingerprint);
      let run = await state.store?.latestRun(plan.key);
      this.tiles.clear();
      if (run) {
        for (const t of (await state.store?.tilesOf(run.id)) ?? []) this.tiles.set(t.tileKey, t.result);
      } else {
        run = { id: `run-${Date.now().toString(36)}`, key: plan.key, status: 'running', tilesTotal: plan.tilesTotal, startedMs: Date.now() };
      }
      const runRec: RunRecord = { ...run, status: 'running', tilesTotal: plan.tilesTotal };
      await this.keep(() => state.store?.putRun(runRec));
      const todo = plan.tasks.filter((t) => !this.tiles.has(tileKey(t.sceneKey, t.tileIndex)));
      const resumed = plan.tilesTotal - todo.length;
      const t0 = performance.now();
      let doneHere = 0;
      // Finished tiles are kept in batches (one IndexedDB transaction each) so keeping work costs the page little.
      let pendingWrites: TileRecord[] = [];
      let lastWriteMs = performance.now();
      const flush = async () => {
        const batch = pendingWrites;
        pendingWrites = [];
        lastWriteMs = performance.now();
        await this.keep(() => state.store?.putTiles(batch));
      };
      const msg = `${plan.tilesTotal} tiles${plan.tileShare < 1 ? ` (${Math.round(plan.tileShare * 100)} % of the scenes: areas only)` : ''}` +
        `${resumed ? `, ${resumed} kept from before` : ''} on ${this.svc.pool.size} worker${this.svc.pool.size > 1 ? 's' : ''}`;
      this.progress({ tilesDone: resumed, tilesTotal: plan.tilesTotal, message: msg });
      if (resumed) await this.mergeNow();
      // Each start gets its own dispatch id: workers remember cancelled ids, and a resume must not look cancelled.
      const dispatchId = `${runRec.id}:${Date.now().toString(36)}`;
      await this.svc.pool.runTasks(todo.map((t) => ({ ...t, runId: dispatchId })), {
        done: async (task, result) => {
          const key = tileKey(task.sceneKey, task.tileIndex);
          this.tiles.set(key, result);
          pendingWrites.push({ runId: runRec.id, tileKey: key, result });
          if (performance.now() - lastWriteMs > WRITE_BATCH_MS) await flush();
          doneHere++;
          const elapsedS = (performance.now() - t0) / 1000;
          this.progress({ tilesDone: resumed + doneHere, tilesPerS: doneHere / Math.max(elapsedS, 1e-3) });
          if (performance.now() - this.lastMergeMs > LIVE_MERGE_MS && !this.merging) void this.mergeNow();
          if (this.opts.paceMs) await new Promise((r) => setTimeout(r, this.opts.paceMs));
        },
        failed: (task, error) => this.tileFailed(task, error.message),
      }, abort.signal);
      await flush();
      if (abort.signal.aborted) {
        await this.keep(() => state.store?.putRun({ ...runRec, status: 'cancelled' }));
        this.progress({ status: 'cancelled', message: `Stopped after ${this.state.progress.tilesDone} of ${plan.tilesTotal} tiles. Run again to resume.` });
        await this.mergeNow();
        return;
      }
      this.progress({ status: 'merging', message: 'Merging across tiles and scenes…' });
      await this.merging;
      await this.mergeNow();
      await this.keep(() => state.store?.putRun({ ...runRec, status: 'done' }));
      const s = (performance.now() - t0) / 1000;
      const failed = state.progress.tilesFailed;
      this.progress({ status: 'done', message: `Done: ${plan.tilesTotal} tiles${resumed ? ` (${resumed} kept from before)` : ''}, ${doneHere} run now in ${s.toFixed(1)} s.` +
        (failed ? ` ${failed} tile${failed > 1 ? 's' : ''} failed and ${failed > 1 ? 'are' : 'is'} left out of coverage: run again to retry.` : '') });
    } catch (err) {
      this.progress({ status: 'failed', message: '' });
      state.events.emit('notice', { level: 'error', text: toErrorInfo(err).message });
    } finally {
      this.abort = null;
    }
  }

  /** Stop dispatching tiles; finished tiles stay kept, so the next start resumes. */
  cancel(): void { this.abort?.abort(); }

  /** Merge the finished tiles of every date (in a fixed tile order, so results do not depend on worker timing). */
  async mergeNow(): Promise<void> {
    const plan = this.plan;
    if (!plan) return;
    const job = (async () => {
      const out: DateDetections[] = [];
      for (const d of plan.dates) {
        const tables = [];
        for (const ps of d.scenes) {
          for (const idx of ps.tileIndices) {
            const t = this.tiles.get(tileKey(ps.scene.fingerprint, idx));
            if (t && t.table.count > 0) tables.push(t.table);
          }
        }
        const r = await this.svc.tally.mergeDate(tables, {});
        if (!r.ok) throw fromErrorInfo(r.error);
        const table = r.value.frameCrs ? r.value : { ...r.value, frameCrs: `EPSG:${d.frameEpsg}` };
        out.push({ dateIso: d.dateIso, table });
      }
      this.state.results = out;
      this.state.events.emit('results-changed');
    })();
    this.merging = job;
    this.lastMergeMs = performance.now();
    try { await job; } finally { if (this.merging === job) this.merging = null; }
  }

  /** After a reload: if the last kept run matches the current setup, resume it (or show its results when done). */
  async restore(): Promise<void> {
    const last = await this.state.store?.lastRun();
    if (!last || !this.state.model || this.state.scenes.length === 0) return;
    let plan: RunPlan;
    try { plan = await planRun(this.state, this.svc.pool); } catch { return; }
    if (plan.key !== last.key) return;
    if (last.status === 'done') {
      this.plan = plan;
      this.tiles.clear();
      for (const t of (await this.state.store?.tilesOf(last.id)) ?? []) this.tiles.set(t.tileKey, t.result);
      await this.mergeNow();
      this.progress({ status: 'done', tilesDone: plan.tilesTotal, tilesTotal: plan.tilesTotal, message: 'Results restored from the kept run.' });
    } else if (last.status === 'running') {
      this.state.events.emit('notice', { level: 'info', text: 'Resuming the run that was interrupted.' });
      await this.start();
    }
  }
}
