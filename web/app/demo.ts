// The built-in demo: reads /demo/manifest.json (written by `seamtally demo`), opens its scenes by URL with their
// dates, and imports its areas the first time (later, the analyst's kept areas win).
import type { AppState } from './state.ts';
import { openScene, type SceneServices } from './scene-open.ts';
import { importAreas } from './aoi-actions.ts';

interface DemoScene { url: string; dateIso?: string }
export interface DemoManifest { name: string; scenes: DemoScene[]; aoisUrl: string | null; aoisInline: unknown; modelUrl: string | null }

type Obj = Record<string, unknown>;
const isObj = (v: unknown): v is Obj => typeof v === 'object' && v !== null && !Array.isArray(v);
const str = (...vs: unknown[]) => vs.find((v): v is string => typeof v === 'string' && v.length > 0);

function sceneOf(v: unknown, resolve: (p: string) => string, dateIso?: string): DemoScene | null {
  if (typeof v === 'string') return { url: resolve(v), dateIso };
  if (!isObj(v)) return null;
  const f = str(v.url, v.file, v.path, v.tif, v.name);
  const d = str(v.date, v.dateIso, v.acquisitionDate, v.acquired) ?? dateIso;
  return f ? { url: resolve(f), dateIso: d?.slice(0, 10) } : null;
}

/** Read the manifest leniently: scenes as a flat list or grouped by date; AOIs as a file name or inline GeoJSON. */
export function parseManifest(v: unknown, manifestUrl: string): DemoManifest {
  const base = manifestUrl.slice(0, manifestUrl.lastIndexOf('/') + 1);
  const resolve = (p: string) => (/^(https?:)?\//.test(p) ? p : base + p.replace(/^\.\//, ''));
  const m = isObj(v) ? v : {};
  const scenes: DemoScene[] = [];
  for (const s of Array.isArray(m.scenes) ? m.scenes : []) { const x = sceneOf(s, resolve); if (x) scenes.push(x); }
  for (const d of Array.isArray(m.dates) ? m.dates : []) {
    if (!isObj(d)) continue;
    const dateIso = str(d.date, d.dateIso);
    for (const s of Array.isArray(d.scenes) ? d.scenes : []) { const x = sceneOf(s, resolve, dateIso); if (x) scenes.push(x); }
  }
  const a = m.aois ?? m.aoi ?? m.aoiFile ?? m.areas;
  const model = str(m.model, isObj(m.model) ? m.model.sidecar : undefined);
  return {
    name: str(m.name, m.place, m.title, m.scenario) ?? 'demo',
    scenes,
    aoisUrl: typeof a === 'string' ? resolve(a) : null,
    aoisInline: isObj(a) ? a : null,
    modelUrl: model ? (model.startsWith('/') ? model : `/models/${model.split('/').pop()}`) : null,
  };
}

/** Fetch the manifest; null when there is no demo (the app then opens empty). */
export async function fetchManifest(manifestUrl: string): Promise<DemoManifest | null> {
  try {
    const res = await fetch(manifestUrl);
    if (!res.ok) return null;
    return parseManifest(await res.json(), manifestUrl);
  } catch { return null; }
}

/** The ids of the demo's areas (to put them away with the demo). */
export async function demoAreaIds(demo: DemoManifest): Promise<string[]> {
  let fc: unknown = demo.aoisInline;
  if (!fc && demo.aoisUrl) fc = await fetch(demo.aoisUrl).then((r) => (r.ok ? r.json() : null)).catch(() => null);
  const feats = (fc as { features?: Array<{ id?: unknown; properties?: { id?: unknown } }> } | null)?.features ?? [];
  return feats.map((f) => String(f.id ?? f.properties?.id ?? '')).filter((x) => x);
}

/** Open the demo's scenes and, when `withAreas` (the first time) and the analyst has no areas yet, its areas. */
export async function openDemo(state: AppState, svc: SceneServices, demo: DemoManifest, withAreas = true): Promise<void> {
  for (const s of demo.scenes) await openScene(state, svc, { kind: 'url', url: s.url }, { dateIso: s.dateIso });
  if (!withAreas || state.aois.length > 0) return;
  let text: string | null = null;
  if (demo.aoisInline) text = JSON.stringify(demo.aoisInline);
  else if (demo.aoisUrl) {
    const res = await fetch(demo.aoisUrl).catch(() => null);
    if (res?.ok) text = await res.text();
  }
  if (text) await importAreas(state, text);
}
