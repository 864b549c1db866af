// Opening scenes (File or URL): fingerprint, describe in a worker, keep, and draw on the map.
import type { AppState, SceneEntry, SceneOrigin } from './state.ts';
import type { SceneInput } from '../../workers/contract.ts';
import type { DetectorPool } from './worker-pool.ts';
import type { SceneLayers } from './scene-layers.ts';
import { fingerprintScene } from './fingerprint.ts';
import { toErrorInfo, fromErrorInfo } from '../core/errors.ts';
import { checkImageryUrl } from './egress.ts';
import { adoptSceneCrs } from './scene-crs.ts';
import { dateFromFileName } from '../core/scene-date.ts';

/** Longest side of the overview picture drawn on the map. */
const PREVIEW_LONG_SIDE_PX = 2048;

export interface SceneServices { pool: DetectorPool; layers: SceneLayers }

function originOf(input: SceneInput, handle?: FileSystemFileHandle): SceneOrigin {
  return input.kind === 'url' ? { kind: 'url', url: input.url }
    : { kind: 'file', name: input.file.name, sizeB: input.file.size, lastModifiedMs: input.file.lastModified, ...(handle ? { handle } : {}) };
}

function nameOf(input: SceneInput): string {
  return input.kind === 'file' ? input.file.name : decodeURIComponent(new URL(input.url, location.href).pathname.split('/').pop() || input.url);
}

/**
 * Open one scene. Errors become a notice naming the file ("x.png: This file is not a TIFF…") and return null.
 * Reopening a known scene (same fingerprint) re-attaches the file and keeps its date.
 */
export async function openScene(state: AppState, svc: SceneServices, input: SceneInput, opts: { dateIso?: string; handle?: FileSystemFileHandle } = {}): Promise<SceneEntry | null> {
  let name = input.kind === 'file' ? input.file.name : input.url;
  state.opening++;
  state.events.emit('scenes-changed');
  try {
    if (input.kind === 'url') checkImageryUrl(input.url);
    name = nameOf(input);
    const fingerprint = await fingerprintScene(input);
    const known = state.scenes.find((s) => s.fingerprint === fingerprint);
    if (known) {
      const wasClosed = known.input === null;
      known.input = input;
      if (opts.handle && known.origin.kind === 'file' && !known.origin.handle) {
        known.origin = { ...known.origin, handle: opts.handle };
        const { input: _live, ...record } = known;
        await state.store?.putScene(record).catch(() => undefined);
      }
      state.events.emit('scenes-changed');
      if (wasClosed) void drawScene(state, svc, known);
      return known;
    }
    const r = await svc.pool.any().describeScene(input);
    if (!r.ok) throw fromErrorInfo(r.error);
    adoptSceneCrs(r.value);
    // The overview picture is made before the scene is listed: a scene whose pixels cannot be decoded (an unknown
    // compression, tiles cut off) is refused with its sentence instead of being listed and failing at run time.
    const preview = await svc.pool.any().previewScene(input, { maxLongSidePx: PREVIEW_LONG_SIDE_PX });
    if (!preview.ok) throw fromErrorInfo(preview.error);
    const info = { ...r.value.info, name };
    const kept = (await state.store?.allScenes())?.find((s) => s.fingerprint === fingerprint);
    let dateIso = kept?.dateIso ?? opts.dateIso ?? info.acquisitionDate ?? null;
    let dateConfirmed = kept ? kept.dateConfirmed !== false : true;
    if (!dateIso) {
      // no date in the file: suggest one (file name, else the file's modification date), never act on it unconfirmed
      const fromName = dateFromFileName(name);
      dateIso = fromName ?? new Date(input.kind === 'file' ? input.file.lastModified : Date.now()).toISOString().slice(0, 10);
      dateConfirmed = false;
      state.events.emit('notice', { level: 'info', text: `${name} carries no acquisition date; ${dateIso} is suggested from its ${fromName ? 'file name' : 'modification date'}. Confirm or correct it in the Imagery list: until then no sun notes or comparisons use it.` });
    }
    const entry: SceneEntry = {
      fingerprint, name, dateIso, dateConfirmed, origin: originOf(input, opts.handle), info, description: { ...r.value, info }, addedMs: Date.now(), input,
    };
    state.scenes = [...state.scenes, entry];
    const { input: _live, ...record } = entry;
    // A scene that cannot be kept (full disk) is still usable now: say so, and go on.
    await state.store?.putScene(record).catch((err) => state.events.emit('notice', { level: 'error', text: toErrorInfo(err).message }));
    state.events.emit('scenes-changed');
    void svc.layers.show(entry, preview.value, entry.description.proj4Def);
    return entry;
  } catch (err) {
    const message = toErrorInfo(err).message;
    state.events.emit('notice', { level: 'error', text: message.includes(name) ? message : `${name}: ${message}` });
    return null;
  } finally {
    state.opening--;
    state.events.emit('scenes-changed');
  }
}

/** Draw (or redraw) a scene's overview picture on the map. */
export async function drawScene(state: AppState, svc: SceneServices, entry: SceneEntry): Promise<void> {
  if (!entry.input) return;
  const r = await svc.pool.any().previewScene(entry.input, { maxLongSidePx: PREVIEW_LONG_SIDE_PX });
  if (!r.ok) { state.events.emit('notice', { level: 'error', text: `${entry.name}: ${r.error.message}` }); return; }
  await svc.layers.show(entry, r.value, entry.description.proj4Def);
}

/** Change a scene's acquisition date (scenes of one date form one mosaic). */
export async function setSceneDate(state: AppState, fingerprint: string, dateIso: string): Promise<void> {
  const s = state.scenes.find((x) => x.fingerprint === fingerprint);
  if (!s || !/^\d{4}-\d{2}-\d{2}$/.test(dateIso)) return;
  s.dateIso = dateIso;
  s.dateConfirmed = true; // set or kept by the analyst: confirmed
  const { input: _live, ...record } = s;
  await state.store?.putScene(record);
  state.events.emit('scenes-changed');
}

/** Remove a scene from the session (and from what is kept). */
export async function removeScene(state: AppState, svc: SceneServices, fingerprint: string): Promise<void> {
  state.scenes = state.scenes.filter((s) => s.fingerprint !== fingerprint);
  svc.layers.remove(fingerprint);
  await svc.pool.any().forgetScene(fingerprint);
  await state.store?.deleteScene(fingerprint);
  state.events.emit('scenes-changed');
}
