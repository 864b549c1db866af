// Changes to the analyst's areas: add, cut a hole, edit, rename, delete, import; each is kept and announced.
import type { AppState, AoiRecord } from './state.ts';
import { parseAois, validateAoi, aoisToGeoJson } from '../core/aoi.ts';
import { pointInRing, OUTSIDE } from '../core/point-in-polygon.ts';
import { polygonAreaM2 } from '../core/geodesic-area.ts';
import { toErrorInfo } from '../core/errors.ts';
import type { LonLatDeg } from '../core/types.ts';
import { aoisOutsideScenes } from './aoi-footprint.ts';

function report(state: AppState, err: unknown): void {
  state.events.emit('notice', { level: 'error', text: toErrorInfo(err).message });
}

async function keep(state: AppState, aoi: AoiRecord): Promise<void> {
  try { await state.store?.putAoi(aoi); } catch (err) { report(state, err); }
}

function nextName(state: AppState): string {
  for (let i = state.aois.length + 1; ; i++) {
    const name = `Area ${i}`;
    if (!state.aois.some((a) => a.name === name)) return name;
  }
}

/** Add a drawn area (one ring). Returns false (with a notice) when the ring is not a valid area. */
export async function addArea(state: AppState, ringLonLat: LonLatDeg[], name = nextName(state)): Promise<boolean> {
  const aoi: AoiRecord = { id: `aoi-${Date.now().toString(36)}-${Math.floor(Math.random() * 1e6).toString(36)}`, name, polygonsLonLat: [[ringLonLat]] };
  try { validateAoi(aoi); } catch (err) { report(state, err); return false; }
  state.aois = [...state.aois, aoi];
  await keep(state, aoi);
  state.events.emit('aois-changed');
  return true;
}

/** Cut a hole into the smallest area polygon whose outer ring holds the whole hole. */
export async function addHole(state: AppState, ringLonLat: LonLatDeg[]): Promise<void> {
  let best: { a: AoiRecord; k: number; areaM2: number } | null = null;
  for (const a of state.aois) {
    a.polygonsLonLat.forEach((poly, k) => {
      if (ringLonLat.some((q) => pointInRing(q[0], q[1], poly[0]) === OUTSIDE)) return;
      const areaM2 = polygonAreaM2(poly);
      if (!best || areaM2 < best.areaM2) best = { a, k, areaM2 };
    });
  }
  if (!best) {
    state.events.emit('notice', { level: 'error', text: 'A hole must be drawn inside an area: draw it wholly inside the area you want to cut.' });
    return;
  }
  const { a, k } = best as { a: AoiRecord; k: number };
  const next: AoiRecord = { ...a, polygonsLonLat: a.polygonsLonLat.map((poly, i) => (i === k ? [...poly, ringLonLat] : poly)) };
  try { validateAoi(next); } catch (err) { report(state, err); return; }
  await replace(state, next);
}

/** Replace an area's geometry (after vertex editing). */
export async function editArea(state: AppState, id: string, polygonsLonLat: LonLatDeg[][][]): Promise<void> {
  const a = state.aois.find((x) => x.id === id);
  if (!a) return;
  const next = { ...a, polygonsLonLat };
  try { validateAoi(next); } catch (err) { report(state, err); state.events.emit('aois-changed'); return; }
  await replace(state, next);
}

export async function renameArea(state: AppState, id: string, name: string): Promise<void> {
  const a = state.aois.find((x) => x.id === id);
  if (!a || !name.trim()) return;
  await replace(state, { ...a, name: name.trim() });
}

export async function deleteArea(state: AppState, id: string): Promise<void> {
  state.aois = state.aois.filter((a) => a.id !== id);
  await state.store?.deleteAoi(id);
  state.events.emit('aois-changed');
}

/** Import areas from GeoJSON text (ids made unique against existing areas). */
export async function importAreas(state: AppState, text: string): Promise<number> {
  let aois: AoiRecord[];
  try { aois = parseAois(text); } catch (err) { report(state, err); return 0; }
  const taken = new Set(state.aois.map((a) => a.id));
  for (const a of aois) {
    let id = a.id;
    for (let i = 2; taken.has(id); i++) id = `${a.id}-${i}`;
    taken.add(id);
    const rec = { ...a, id };
    state.aois = [...state.aois, rec];
    await keep(state, rec);
  }
  state.events.emit('aois-changed');
  for (const a of aoisOutsideScenes(aois, state.scenes)) {
    state.events.emit('notice', { level: 'error', text: `AOI "${a.name}" lies outside every scene open (${state.scenes.map((s) => s.name).join(', ')}): check that the AOI and the scenes show the same place.` });
  }
  return aois.length;
}

/** All areas as a GeoJSON text (RFC 7946, lon/lat). */
export function exportAreas(state: AppState): string {
  return JSON.stringify(aoisToGeoJson(state.aois), null, 1);
}

async function replace(state: AppState, next: AoiRecord): Promise<void> {
  state.aois = state.aois.map((a) => (a.id === next.id ? next : a));
  await keep(state, next);
  state.events.emit('aois-changed');
}
