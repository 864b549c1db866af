// The one bundler-specific place: starts the worker entries (Vite module workers) and wraps them with comlink.
import { wrap, releaseProxy, type Remote } from 'comlink';
import type { DetectorApi, TallyApi } from './contract.ts';

/** A started worker and its typed remote API. */
export interface WorkerHandle<T> {
  api: Remote<T>;
  /**
   * Rejects when the worker is lost: an uncaught error inside it, a message that cannot be read, or `kill`. Calls
   * into a lost worker never answer (comlink has no way to know), so callers race their calls against this.
   */
  lost: Promise<never>;
  /** Stop the worker (calls in flight reject through `lost`). */
  terminate(): void;
}

function handle<T>(worker: Worker): WorkerHandle<T> {
  const api = wrap<T>(worker);
  let stopped = false;
  let reject: (err: Error) => void = () => {};
  const lost = new Promise<never>((_, rej) => { reject = rej; });
  lost.catch(() => {}); // observed by whoever races it; never an unhandled rejection
  worker.addEventListener('error', (e) => { e.preventDefault(); reject(new Error(`the worker stopped with an uncaught error (${e.message || 'no message'})`)); });
  worker.addEventListener('messageerror', () => reject(new Error('the worker sent a message that could not be read')));
  return {
    api,
    lost,
    terminate: () => {
      if (stopped) return;
      stopped = true;
      reject(new Error('the worker was stopped'));
      worker.terminate();
      try { api[releaseProxy](); } catch { /* already released */ }
    },
  };
}

/** Start one detector worker (`name` must not start with "em-pthread", which ORT reserves for its threads). */
export function spawnDetector(name: string): WorkerHandle<DetectorApi> {
  return handle<DetectorApi>(new Worker(new URL('./detector.worker.ts', import.meta.url), { type: 'module', name }));
}

/** Start the tally worker (merging off the main thread). */
export function spawnTally(): WorkerHandle<TallyApi> {
  return handle<TallyApi>(new Worker(new URL('./tally.worker.ts', import.meta.url), { type: 'module', name: 'seamtally-tally' }));
}
