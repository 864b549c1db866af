// Files the analyst opens, with their File System Access handles where the browser has them (Chromium): a handle
// is kept with the scene in IndexedDB, so after a reload one click re-grants read access and the scene, its run,
// review and samples come back. Elsewhere the page names the files to drop again.
import type { AppState } from './state.ts';
import { openScene, type SceneServices } from './scene-open.ts';
import { pickFiles } from './download.ts';

export interface PickedFile { file: File; handle?: FileSystemFileHandle }

interface PermissionHandle { queryPermission?(d: { mode: 'read' }): Promise<PermissionState>; requestPermission?(d: { mode: 'read' }): Promise<PermissionState> }
type OpenPicker = (opts: { multiple: boolean; types?: Array<{ description: string; accept: Record<string, string[]> }> }) => Promise<FileSystemFileHandle[]>;

/**
 * Ask for scene files: the File System Access picker where there is one (its handles can be kept), else the plain
 * file input. A picker that fails for any reason other than the analyst cancelling falls back to the plain input.
 */
export async function pickSceneFiles(): Promise<PickedFile[]> {
  const picker = (window as unknown as { showOpenFilePicker?: OpenPicker }).showOpenFilePicker;
  if (picker) {
    try {
      const handles = await picker({ multiple: true, types: [{ description: 'GeoTIFF / COG', accept: { 'image/tiff': ['.tif', '.tiff'] } }] });
      return Promise.all(handles.map(async (handle) => ({ file: await handle.getFile(), handle })));
    } catch (err) {
      if (err instanceof DOMException && err.name === 'AbortError' && /user/i.test(err.message)) return [];
    }
  }
  return (await pickFiles('.tif,.tiff,image/tiff', true)).map((file) => ({ file }));
}

/** Files of a drop, with their handles where the browser gives them (asked for before the event ends). */
export async function droppedSceneFiles(dt: DataTransfer | null): Promise<PickedFile[]> {
  if (!dt) return [];
  const items = [...dt.items].filter((i) => i.kind === 'file');
  const handles = items.map((i) => (i as DataTransferItem & { getAsFileSystemHandle?(): Promise<FileSystemHandle | null> }).getAsFileSystemHandle?.() ?? Promise.resolve(null));
  const files = [...dt.files];
  const got = await Promise.all(handles.map((p) => p.catch(() => null)));
  return files.map((file, k) => {
    const h = got[k];
    return h && h.kind === 'file' ? { file, handle: h as FileSystemFileHandle } : { file };
  });
}

/** Scenes listed from kept work whose file is not open in this session, split by whether a handle was kept. */
export function detachedScenes(state: AppState): { withHandle: string[]; withoutHandle: string[] } {
  const out = { withHandle: [] as string[], withoutHandle: [] as string[] };
  for (const s of state.scenes) {
    if (s.input || s.origin.kind !== 'file') continue;
    (s.origin.handle ? out.withHandle : out.withoutHandle).push(s.name);
  }
  return out;
}

/** Re-grant and reopen every detached scene that has a kept handle (call from a click: permission needs one). */
export async function reopenKeptFiles(state: AppState, svc: SceneServices): Promise<void> {
  for (const s of [...state.scenes]) {
    if (s.input || s.origin.kind !== 'file' || !s.origin.handle) continue;
    const handle = s.origin.handle;
    const p = handle as unknown as PermissionHandle;
    try {
      let perm = (await p.queryPermission?.({ mode: 'read' })) ?? 'granted';
      if (perm !== 'granted') perm = (await p.requestPermission?.({ mode: 'read' })) ?? 'denied';
      if (perm !== 'granted') { state.events.emit('notice', { level: 'info', text: `${s.name}: the browser was not allowed to read it again; drop the file to reopen it.` }); continue; }
      await openScene(state, svc, { kind: 'file', file: await handle.getFile() }, { handle });
    } catch {
      state.events.emit('notice', { level: 'info', text: `${s.name} could not be read again (moved or deleted?): drop the file to reopen it.` });
    }
  }
}
