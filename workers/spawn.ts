// The one bundler-specific place: starts the worker entries (Vite module workers) and wraps them with comlink.
import { wrap, releaseProxy, type Remote } from 'comlink';
import type { DetectorApi, TallyApi } from './contract.ts';

/** A started worker and its typed remote API. */
export interface WorkerHandle<T> {
  api: Remote<T>;
  terminate(): void;
}

function handle<T>(worker: Worker): WorkerHandle<T> {
  const api = wrap<T>(worker);
  return { api, terminate: () => { api[releaseProxy](); worker.terminate(); } };
}

/** Start one detector worker (`name` must not start with "em-pthread", which ORT reserves for its threads). */
export function spawnDetector(name: string): WorkerHandle<DetectorApi> {
  return handle<DetectorApi>(new Worker(new URL('./detector.worker.ts', import.meta.url), { type: 'module', name }));
}

/** Start the tally worker (merging off the main thread). */
export function spawnTally(): WorkerHandle<TallyApi> {
  return handle<TallyApi>(new Worker(new URL('./tally.worker.ts', import.meta.url), { type: 'module', name: 'seamtally-tally' }));
}
