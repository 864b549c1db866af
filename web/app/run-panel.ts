// The "Run" block: workers, areas-only, start/stop (stop keeps finished tiles; start again resumes), progress.
import type { AppState } from './state.ts';
import type { RunController } from './run-controller.ts';
import type { DetectorPool } from './worker-pool.ts';
import { h, fmt } from './dom.ts';

/** Render the run block into `el`. */
export function mountRunPanel(state: AppState, el: HTMLElement, runs: RunController, pool: DetectorPool): void {
  const workers = h('input', { type: 'number', min: 1, max: 32, value: String(state.poolSize), 'aria-label': 'Workers',
    onchange: () => { state.poolSize = Math.max(1, Math.min(32, Number(workers.value) || 1)); pool.resize(state.poolSize); } });
  const areasOnly = h('input', { type: 'checkbox', checked: state.areasOnly, id: 'areas-only',
    onchange: () => { state.areasOnly = areasOnly.checked; } });
  const go = h('button.primary', { dataset: { testid: 'run' }, onclick: () => void runs.start() }, 'Detect');
  const stop = h('button', { dataset: { testid: 'stop' }, onclick: () => runs.cancel(), disabled: true }, 'Stop');
  const bar = h('div');
  const stats = h('div.muted', { dataset: { testid: 'run-stats' } });
  const message = h('div.muted', { dataset: { testid: 'run-message' } });
  el.append(
    h('label', {}, 'Workers ', workers), h('label', { htmlFor: 'areas-only' }, areasOnly, ' areas only'), go, stop,
    h('div.runstatus', {}, h('div.progress', { role: 'progressbar', 'aria-label': 'Run progress' }, bar), stats, message),
  );
  const render = () => {
    const p = state.progress;
    const busy = p.status === 'running' || p.status === 'merging';
    // Detect waits for the model and for scenes still opening (a click then would find no imagery)
    go.disabled = busy || !state.model || state.opening > 0 || state.scenes.length === 0;
    go.title = state.scenes.length === 0 && state.opening === 0 ? 'Open a scene first (or the demo): there is nothing to run on yet.' : '';
    go.textContent = state.opening > 0 ? `Opening ${state.opening} scene${state.opening > 1 ? 's' : ''}…` : !state.model ? 'Loading detector…' : p.status === 'cancelled' ? 'Resume' : 'Detect';
    stop.disabled = !busy;
    const share = p.tilesTotal ? p.tilesDone / p.tilesTotal : 0;
    bar.style.transform = `scaleX(${share.toFixed(4)})`;
    const left = p.tilesPerS > 0 ? (p.tilesTotal - p.tilesDone) / p.tilesPerS : NaN;
    stats.textContent = p.tilesTotal
      ? `${p.tilesDone} / ${p.tilesTotal} tiles · ${fmt(p.tilesPerS, 1)} tiles/s · ${busy && Number.isFinite(left) ? `about ${fmt(left, 0)} s left` : p.status}`
      : '';
    stats.dataset.status = p.status;
    stats.dataset.done = String(p.tilesDone);
    stats.dataset.failed = String(p.tilesFailed);
    message.textContent = p.message;
  };
  state.events.on('run-progress', render);
  state.events.on('model-changed', render);
  state.events.on('scenes-changed', render);
  render();
}
