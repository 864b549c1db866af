// Page configuration, read once at start from the address: which demo manifest and which model to open.
import { readFaultPlan, type FaultPlan } from './faults.ts';

export interface PageConfig {
  /** Demo manifest URL (default /demo/manifest.json; `?manifest=` overrides, e.g. for test scenes). */
  manifestUrl: string;
  /** Sidecar URL of the model to load instead of the shipped one (`?model=`), or null. */
  modelUrl: string | null;
  /** Pause after each finished tile, ms (`?pace=`; default 0): slows a run down for demonstrations and tests. */
  paceMs: number;
  /** Worker count (`?workers=`), or null for navigator.hardwareConcurrency. */
  workers: number | null;
  /** The address asks for a demo: `?demo=open`, or a `?manifest=` of its own (then it opens without asking). */
  demoAsked: boolean;
  /** Test-only fault injection (`?fault=`, see faults.ts); null (no hooks) unless the flag is present. */
  faults: FaultPlan | null;
}

/** Same-origin paths only: anything else is ignored (nothing is fetched from elsewhere without the analyst asking). */
function localPath(v: string | null): string | null {
  return v && v.startsWith('/') && !v.startsWith('//') ? v : null;
}

export function readPageConfig(loc: Location): PageConfig {
  const q = new URLSearchParams(loc.search);
  const num = (k: string) => { const v = Number(q.get(k)); return q.has(k) && Number.isFinite(v) && v >= 0 ? v : null; };
  return {
    manifestUrl: localPath(q.get('manifest')) ?? '/demo/manifest.json',
    modelUrl: localPath(q.get('model')),
    paceMs: Math.min(num('pace') ?? 0, 10_000),
    workers: num('workers') !== null ? Math.max(1, Math.min(32, Math.floor(num('workers')!))) : null,
    faults: readFaultPlan(loc.search),
    demoAsked: q.get('demo') === 'open' || localPath(q.get('manifest')) !== null,
  };
}
