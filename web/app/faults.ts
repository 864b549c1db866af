// Fault injection for the browser tests (issue 7), read from the address once: off unless `?fault=` is present.
// `?fault=kill:3,throw:5,crash:7,infercrash:4,quota,export` — numbers are the order in which tiles are first dispatched (1-based).

export interface FaultPlan {
  /** Terminate the worker running the Nth dispatched tile while it works on it (once). */
  killAt: Set<number>;
  /** The Nth dispatched tile throws inside its worker on its first attempt (an ordinary error, retried). */
  throwAt: Set<number>;
  /** The Nth dispatched tile crashes its worker (uncaught error, never answers) on every attempt. */
  crashAt: Set<number>;
  /** The Nth dispatched tile crashes its worker's inference worker on its first attempt (the worker is replaced). */
  inferCrashAt: Set<number>;
  /** IndexedDB refuses to keep finished tiles with a QuotaExceededError (the disk is full). */
  quota: boolean;
  /** Building an export fails half-way (as when the tab runs out of memory). */
  exportFails: boolean;
}

/** The plan of `?fault=`, or null (no hooks at all) when the address has none. */
export function readFaultPlan(search: string): FaultPlan | null {
  const spec = new URLSearchParams(search).get('fault');
  if (!spec) return null;
  const plan: FaultPlan = { killAt: new Set(), throwAt: new Set(), crashAt: new Set(), inferCrashAt: new Set(), quota: false, exportFails: false };
  for (const part of spec.split(',')) {
    const [name, n] = part.split(':');
    const at = Number(n);
    if (name === 'kill' && at > 0) plan.killAt.add(at);
    else if (name === 'throw' && at > 0) plan.throwAt.add(at);
    else if (name === 'crash' && at > 0) plan.crashAt.add(at);
    else if (name === 'infercrash' && at > 0) plan.inferCrashAt.add(at);
    else if (name === 'quota') plan.quota = true;
    else if (name === 'export') plan.exportFails = true;
  }
  return plan;
}

/** Make IndexedDB writes to object store `storeName` throw a QuotaExceededError, as a full disk does. */
export function installQuotaFault(storeName: string): void {
  const put = IDBObjectStore.prototype.put;
  IDBObjectStore.prototype.put = function (this: IDBObjectStore, ...args: Parameters<IDBObjectStore['put']>) {
    if (this.name === storeName) throw new DOMException('The quota has been exceeded (injected by ?fault=quota).', 'QuotaExceededError');
    return put.apply(this, args);
  };
}
