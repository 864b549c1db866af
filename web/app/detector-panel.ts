// The "Detector" block: which model is loaded (shipped, fixture or the analyst's own), its classes and card metrics.
import type { AppState, ModelEntry } from './state.ts';
import { h, setChildren, fmt } from './dom.ts';
import { pickFiles } from './download.ts';
import { fetchModel, listShippedModels, readModelFiles, type ShippedModel } from './model-load.ts';
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
  // a choice of the shipped detectors when there are several (e.g. full precision and int8)
  const choice = h('select', { 'aria-label': 'Shipped detector', dataset: { testid: 'model-choice' }, hidden: true, onchange: async () => {
    const url = choice.value;
    if (!url || url === state.model?.url) return;
    choice.disabled = true; // until the new model is in every worker
    try {
      await useModel(await fetchModel(url, 'shipped'));
      rememberShippedChoice(url);
    } catch (err) {
      state.events.emit('notice', { level: 'error', text: toErrorInfo(err).message });
    } finally {
      render();
    }
  } });
  let shipped: ShippedModel[] = [];
  const choiceHint = h('div.muted', { dataset: { testid: 'model-choice-summary' } });
  el.append(body, h('div.row', {}, choice), choiceHint, h('div.row', {}, other));
  const render = () => {
    const cur = state.model;
    choice.hidden = shipped.length < 2;
    // the detector is part of a run's key: it cannot change under a running one
    const busy = state.progress.status === 'running' || state.progress.status === 'merging';
    choice.disabled = busy;
    other.disabled = busy;
    if (shipped.length >= 2) {
      setChildren(choice, ...shipped.map((m) => h('option', { value: m.url }, m.version ? `${m.name} (version ${m.version})` : m.name)),
        ...(cur && cur.origin !== 'shipped' ? [h('option', { value: '' }, cur.origin === 'user' ? 'your model' : 'test fixture')] : []));
      choice.value = cur?.origin === 'shipped' && cur.url ? cur.url : '';
      const sel = shipped.find((m) => m.url === choice.value);
      choiceHint.textContent = sel?.summary ?? '';
    } else choiceHint.textContent = '';
    renderInfo();
  };
  const renderInfo = () => {
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
  state.events.on('run-progress', render);
  render();
  void listShippedModels().then((list) => { shipped = list; render(); });
}

/** The localStorage key that keeps the analyst's choice of shipped detector across reloads. */
export const DETECTOR_CHOICE_KEY = 'seamtally.detector';

function rememberShippedChoice(url: string): void {
  try { localStorage.setItem(DETECTOR_CHOICE_KEY, url); } catch { /* storage off: the choice lasts this session */ }
}

/** The shipped detector chosen in an earlier session, if any. */
export function rememberedShippedChoice(): string | undefined {
  try { return localStorage.getItem(DETECTOR_CHOICE_KEY) ?? undefined; } catch { return undefined; }
}
