// The "Tally" tab: the score slider (all counts follow it) and the per area × date × class table with caveats.
import { setThreshold, type AppState } from './state.ts';
import { runFloor } from './run-plan.ts';
import { computeTally, type DateTally, type TallyRow } from './tally.ts';
import type { CoverageService } from './coverage-service.ts';
import { h, setChildren, fmt } from './dom.ts';
import { COUNTING_RULE } from '../core/point-in-polygon.ts';
import { TALLY_COLUMNS, estimateText, type TallyColumn } from '../core/tally-columns.ts';

/** The table's columns: the one column list (core/tally-columns.ts), less those shown in each date's head. */
const columns = TALLY_COLUMNS.filter((c) => c.inTable);
/** Columns a narrow panel leaves out until the analyst asks for all columns (styles.css: .sec). */
const SECONDARY = new Set<TallyColumn['id']>(['interval', 'detected', 'reviewed', 'hectares', 'density']);
const secClass = (c: TallyColumn) => (SECONDARY.has(c.id) ? '.sec' : '');

/** One cell of the table: the column's text, with the page's emphasis where it has one. */
function cell(c: TallyColumn, r: TallyRow, partial: boolean): HTMLElement {
  switch (c.id) {
    case 'area': return h('td.l', { title: c.text(r) }, c.text(r));
    case 'class': return h(`td.l.cls-${r.className}`, {}, c.text(r));
    case 'count': return h('td', partial ? { title: 'partial: the run has not finished' } : {}, h('b', {}, `${c.text(r)}${partial ? '…' : ''}`));
    case 'estimate': return estimateCell(r);
    case 'caveat': return r.caveat ? h(`td.l.${levelClass[r.caveat.level]}`, { title: r.caveat.reason }, levelWords[r.caveat.level]) : h('td.l.muted', {}, '–');
    default: return h(`td${secClass(c)}`, {}, c.text(r));
  }
}

/** The estimate cell: the estimated true count and its interval, or how far the sample is, or that there is none. */
function estimateCell(r: TallyRow): HTMLElement {
  if (r.estimate) {
    const e = r.estimate;
    const pr = e.precision === null ? '' : ` Estimated precision ${fmt(e.precision * 100, 0)} %, recall ${e.recall === null ? '–' : fmt(e.recall * 100, 0)} %.`;
    return h('td', { dataset: { testid: 'estimate', estimate: String(e.count), lo: String(e.ci95[0]), hi: String(e.ci95[1]) },
      title: `Estimated true count ${fmt(e.count, 1)} (SE ${fmt(e.se, 1)}), 95 % ${fmt(e.ci95[0], 1)}–${fmt(e.ci95[1], 1)}, from ${e.cellsChecked} checked cells of ${r.sample?.cellsInSample ?? e.cellsChecked} drawn.${pr} Method: ${e.method}.` },
    h('b', {}, fmt(e.count, 0)), h('span.muted', {}, ` ${fmt(e.ci95[0], 0)}–${fmt(e.ci95[1], 0)}`));
  }
  if (r.sample) return h('td.muted', { dataset: { testid: 'estimate' }, title: 'Check at least 2 cells in every stratum of the sample (Check tab) for an estimate.' }, estimateText(r));
  return h('td.muted', { dataset: { testid: 'estimate' }, title: 'No sample checked: draw one in the Check tab for an estimate that includes the detector\'s errors.' }, estimateText(r));
}

const levelClass = { reliable: 'lvl-reliable', 'use-with-care': 'lvl-care', 'not-reliable': 'lvl-unreliable' } as const;
const levelWords = { reliable: 'reliable', 'use-with-care': 'care', 'not-reliable': 'unreliable' } as const;

/** The latest tally, for the compare tab and the report. */
export interface TallySource {
  /** The tally of the current state: computed now if a change has not been rendered yet. */
  current(): DateTally[];
}

/**
 * Render the tally tab into `el`. A change (a tile result, the threshold, a review…) marks the tally stale and renders
 * it in a task of its own, coalescing the changes that arrive before it runs: the task that delivered a tile result
 * (and redraws the map) stays short, and the page stays responsive during a run. `current()` never returns a stale
 * tally.
 */
export function mountTallyPanel(state: AppState, el: HTMLElement, coverage: CoverageService): TallySource {
  const value = h('span', { dataset: { testid: 'threshold-value' } }, state.minScore.toFixed(2));
  const slider = h('input.slider', { type: 'range', min: String(runFloor(state)), max: '0.95', step: '0.01', value: String(state.minScore),
    'aria-label': 'Score threshold', dataset: { testid: 'threshold' },
    oninput: () => setThreshold(state, Number(slider.value)) });
  // the slider and its label only ever show the threshold in force (set from the model's default at load)
  const showThreshold = () => {
    slider.min = String(runFloor(state));
    slider.value = String(state.minScore);
    value.textContent = state.minScore.toFixed(2);
    slider.title = state.model?.sidecar.minScore !== undefined ? `The model's default is ${state.model.sidecar.minScore.toFixed(2)}; detections below ${runFloor(state).toFixed(2)} are not kept by a run.` : '';
  };
  state.events.on('threshold-changed', showThreshold);
  state.events.on('model-changed', showThreshold);
  const dateSel = h('select', { 'aria-label': 'Date shown on the map', onchange: () => {
    state.shownDate = dateSel.value || null; state.shownDateChosen = true; state.events.emit('shown-date-changed');
  } });
  const table = h('div', { dataset: { testid: 'tally' } });
  const allCols = h('input', { type: 'checkbox', dataset: { testid: 'all-columns' }, onchange: () => { stale = true; render(); } });
  const runNote = h('div');
  const notes = h('div.muted');
  el.append(
    h('div.row', {}, h('label', {}, 'Score ≥ ', slider, ' ', value)),
    h('div.row', {}, h('label', {}, 'Map shows ', dateSel), h('label.muted', { title: 'On a narrow screen the table shows its main columns; tick to see them all (the panel then scrolls sideways)' }, allCols, ' all columns')),
    runNote, table, notes,
    h('p.muted', {}, `Counting rule: ${COUNTING_RULE}`),
  );

  let shownDates = '';
  let latest: DateTally[] = [];
  let stale = true;
  let scheduled = false;
  const current = () => {
    if (stale) { latest = computeTally(state, coverage); stale = false; }
    return latest;
  };
  const render = () => {
    scheduled = false;
    const dates = [...new Set(state.scenes.map((s) => s.dateIso))].sort();
    const datesKey = `${state.shownDate}|${dates.join(',')}`;
    if (datesKey !== shownDates) { // not rebuilt on every result during a run
      shownDates = datesKey;
      setChildren(dateSel, h('option', { value: '' }, 'all dates'), ...dates.map((d) => h('option', { value: d, selected: state.shownDate === d }, d)));
    }
    const tally = current();
    // while a run goes, the counts so far are partial: say so above the table and on every count
    const pr = state.progress;
    const partial = pr.status === 'running' || pr.status === 'merging';
    setChildren(runNote, partial ? h('div.weak', { dataset: { testid: 'tally-partial' } }, `Counts so far: ${pr.tilesDone} of ${pr.tilesTotal} tiles done. They are partial until the run ends.`) : null);
    if (tally.length === 0) { setChildren(table, h('p.muted', {}, 'Run the detector to see counts.')); setChildren(notes); return; }
    if (state.aois.length === 0) { setChildren(table, h('p.muted', {}, 'Draw or import an area to count inside it.')); }
    else {
      setChildren(table, h(allCols.checked ? 'table.grid.allcols' : 'table.grid', {},
        h('thead', {}, h('tr', {}, ...columns.map((c) => h(c.id === 'area' || c.id === 'class' || c.id === 'caveat' ? 'th.l' : `th${secClass(c)}`, { title: c.title }, c.label)))),
        h('tbody', {}, ...tally.flatMap((d) => [
          h('tr.datehead', {}, h('td.l', { colSpan: columns.length }, `${d.dateIso} · ${fmt(d.gsdM, 2)} m GSD · ${d.sceneNames.length} scene${d.sceneNames.length > 1 ? 's' : ''}${d.noonSunDeg === null ? '' : ` · sun at most ${fmt(d.noonSunDeg, 0)}° (noon)`}`)),
          ...d.rows.map((r) => h('tr', { dataset: { aoi: r.aoiName, date: r.date, cls: r.className, count: String(r.count), detected: String(r.detectedCount), reviewed: String(r.reviewedCount), coverage: String(r.coverage) } },
            ...columns.map((c) => cell(c, r, partial)))),
        ]))));
    }
    setChildren(notes, ...tally.flatMap((d) => [
      ...d.caveats.map((c) => h('div', {}, h(`span.${levelClass[c.level]}`, {}, `${d.dateIso} ${c.className}: `), c.reason)),
      d.upsampling ? h('div.weak', {}, `${d.dateIso}: ${d.upsampling}`) : null,
      ...d.lowSun.map((n) => h('div.weak', { dataset: { lowSun: n.className } }, `${d.dateIso} ${n.className}: ${n.text}`)),
    ]));
  };
  const changed = () => {
    stale = true;
    if (!scheduled) { scheduled = true; setTimeout(render, 0); }
  };
  for (const ev of ['results-changed', 'threshold-changed', 'review-changed', 'aois-changed', 'scenes-changed', 'model-changed', 'coverage-changed', 'samples-changed'] as const) state.events.on(ev, changed);
  // progress alone changes no count: re-render (the partial note) without recomputing the tally
  state.events.on('run-progress', () => { if (!scheduled) { scheduled = true; setTimeout(render, 0); } });
  render();
  return { current };
}
