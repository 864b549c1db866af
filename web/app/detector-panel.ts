// The "Detector" block: which model is loaded (shipped, fixture or the analyst's own), its classes and card metrics.
import type { AppState, ModelEntry } from './state.ts';
import { h, setChildren, fmt } from './dom.ts';
import { pickFiles } from './download.ts';
import { readModelFiles } from './model-load.ts';
import { toErrorInfo } from '../core/errors.ts';

/** Render the detector block; `useModel` loads a model into the pool (validating it) and sets it on the state. */
export function mountDetectorPanel(state: AppState, el: HTMLElement, useModel: (m: ModelEntry) => Promise<void>): void {
  const body = h('div', { dataset: { testid: 'model-info' } });
  const other = h('button.small', { dataset: { testid: 'other-model' }, onclick: async () => {
    const files = await pickFiles('.onnx,.json', true);
    if (files.length === 0) return;
    try { await useModel(await readModelFiles(files)); } catch (err) {
      state.events.emit('notice', { level: 'error', text: toErrorInfo(err).message });
    }
  } }, 'Use another detector (.onnx + .model.json)');
  el.append(body, h('div.row', {}, other));
  const render = () => {
    const m = state.model;
    if (!m) { setChildren(body, h('div.muted', {}, 'Loading the detector…')); return; }
    const sc = m.sidecar;
    const ap = sc.quality?.ap50;
    setChildren(body,
      h('div.name', {}, m.name, h('span.muted', {}, m.origin === 'shipped' ? ' · shipped' : m.origin === 'fixture' ? ' · test fixture (no shipped model found)' : ' · your model')),
      h('div.muted', {}, `${sc.classes.join(', ')} · input ${sc.inputGsdM} m/px, ${sc.tilePx} px tiles · ${sc.output.layout}`),
      ap ? h('div.muted', {}, 'AP@0.5 on its evaluation set: ', ...sc.classes.map((c) => (ap[c] !== undefined ? `${c} ${fmt(ap[c], 2)} ` : ''))) : null,
    );
  };
  state.events.on('model-changed', render);
  render();
}
