// The "Imagery" block: drop or pick GeoTIFF/COG files, or give a URL; scenes listed by date (editable dates).
import type { AppState } from './state.ts';
import { isDateConfirmed, scenesByDate } from './state.ts';
import { h, setChildren, fmt } from './dom.ts';
import { openScene, removeScene, setSceneDate, type SceneServices } from './scene-open.ts';
import { detachedScenes, droppedSceneFiles, pickSceneFiles, reopenKeptFiles, type PickedFile } from './file-handles.ts';
import { rememberRemovedScene } from './demo-choice.ts';

/** Render the imagery block into `el`; `dropTarget` (the map) also accepts dropped files. */
export function mountImageryPanel(state: AppState, el: HTMLElement, dropTarget: HTMLElement, svc: SceneServices): void {
  const openFiles = async (files: PickedFile[]) => { for (const f of files) await openScene(state, svc, { kind: 'file', file: f.file }, { handle: f.handle }); };
  const zone = h('div.dropzone', { dataset: { testid: 'dropzone' } }, 'Drop GeoTIFF / COG files here or ',
    h('button.small', { onclick: async () => openFiles(await pickSceneFiles()) }, 'choose files'));
  // kept work whose files are not open yet: one click where handles were kept, else the names to drop again
  const reopen = h('div', { dataset: { testid: 'reopen' } });
  const url = h('input', { type: 'url', placeholder: 'https://…/scene.tif', 'aria-label': 'Scene URL' });
  const urlRow = h('div.row', {}, url, h('button.small', { onclick: async () => {
    const v = url.value.trim();
    if (!v) return;
    if (await openScene(state, svc, { kind: 'url', url: v })) url.value = '';
  } }, 'Open URL'));
  const list = h('div', { dataset: { testid: 'scene-list' } });
  el.append(reopen, zone, urlRow, list);

  for (const target of [zone, dropTarget]) {
    target.addEventListener('dragover', (e) => { e.preventDefault(); zone.classList.add('hot'); });
    target.addEventListener('dragleave', () => zone.classList.remove('hot'));
    target.addEventListener('drop', (e) => {
      e.preventDefault();
      zone.classList.remove('hot');
      void droppedSceneFiles(e.dataTransfer).then(openFiles);
    });
  }

  const render = () => {
    const detached = detachedScenes(state);
    setChildren(reopen,
      detached.withHandle.length ? h('div.row', {}, h('button.small.primary', { dataset: { testid: 'reopen-kept' }, onclick: () => reopenKeptFiles(state, svc) },
        `Reopen ${detached.withHandle.length} kept file${detached.withHandle.length > 1 ? 's' : ''}`), h('span.muted', {}, 'your run, review and samples come back with them')) : null,
      detached.withoutHandle.length ? h('div.weak', { dataset: { testid: 'drop-again' } }, `To restore your work, drop ${detached.withoutHandle.length > 1 ? 'these files' : 'this file'} again: ${detached.withoutHandle.join(', ')}.`) : null);
    const groups = scenesByDate(state);
    setChildren(list, ...groups.map((g) => h('div', { dataset: { date: g.dateIso } },
      h('div.datehead', {}, g.dateIso, h('span.muted', {}, g.scenes.length > 1 ? ` · mosaic of ${g.scenes.length}` : '')),
      h('ul.list', {}, ...g.scenes.map((s) => {
        const date = h('input', { type: 'date', value: s.dateIso, 'aria-label': `Acquisition date of ${s.name}`,
          onchange: () => setSceneDate(state, s.fingerprint, date.value) });
        const info = s.info;
        return h('li', { dataset: { scene: s.name } },
          h('div.name', {}, s.name, s.input ? '' : h('span.weak', {}, ' (drop the file again to reopen it)')),
          h('div.muted', {}, `${info.widthPx} × ${info.heightPx} px · ${fmt(info.georef.gsdM, 2)} m GSD · EPSG:${info.georef.epsg} · ${info.bandCount} band${info.bandCount > 1 ? 's' : ''}, ${info.significantBits}-bit${info.maskKind === 'alpha' ? ' · alpha band as mask' : info.maskKind === 'internal-mask' ? ' · internal mask' : ''}`),
          h('div.row', {}, date,
            isDateConfirmed(s) ? null : h('button.small.primary', { dataset: { testid: 'confirm-date' }, title: 'The file carries no date: this one is a suggestion. Sun notes and comparisons wait for your confirmation.',
              onclick: () => setSceneDate(state, s.fingerprint, date.value) }, 'Confirm date'),
            h('button.small', { onclick: () => { if (s.origin.kind === 'url') rememberRemovedScene(s.origin.url); void removeScene(state, svc, s.fingerprint); } }, 'Remove')),
          isDateConfirmed(s) ? null : h('div.weak', { dataset: { testid: 'date-unconfirmed' } }, 'Date suggested, not confirmed.'));
      })))));
    if (groups.length === 0) list.append(h('div.muted', {}, 'No imagery yet.'));
  };
  state.events.on('scenes-changed', render);
  render();
}
