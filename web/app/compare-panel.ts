// The "Then & now" tab: pick two dates; counts side by side with change, % change, exact test, weak flags; a chart.
import type { AppState } from './state.ts';
import type { DateTally } from './tally.ts';
import { compareDates } from './compare.ts';
import { h, setChildren, fmt, renderWhenShown } from './dom.ts';
import { renderCountsChart } from './counts-chart.ts';
import { formatPValue } from '../core/poisson-stats.ts';

/** One line per distinct reason why comparisons are weak (the table cells carry them as tooltips). */
function weakNotes(rows: ReturnType<typeof compareDates>): HTMLElement {
  const reasons = [...new Set(rows.flatMap((c) => c.weakReasons))];
  return h('div.weak', {}, ...reasons.map((r) => h('div', {}, `Weak comparison: ${r}.`)));
}

/** Render the compare tab; `getTally` returns the latest tally (computed by the tally tab). */
export function mountComparePanel(state: AppState, el: HTMLElement, getTally: () => DateTally[]): void {
  const selA = h('select', { 'aria-label': 'Earlier date', onchange: () => render() });
  const selB = h('select', { 'aria-label': 'Later date', onchange: () => render() });
  const table = h('div', { dataset: { testid: 'compare' } });
  const canvas = h('canvas.chart', { 'aria-label': 'Counts over dates' });
  el.append(h('div.row', {}, 'From ', selA, ' to ', selB), table, h('div', {}, canvas),
    h('p.muted', {}, 'Change, % and p compare the counts: p is the two-sided exact conditional test for two Poisson counts (Przyborowski & Wilenski), with each date\'s imaged area as exposure. A small p says the change in density is unlikely to be chance alone; it says nothing about detector errors. Estimated change compares the estimated true counts where both dates have a checked sample, with a 95 % interval from both samples\' standard errors: that one includes the detector\'s errors.'));

  const render = () => {
    const all = getTally();
    // a date the analyst has not confirmed is not compared (it may be today's date, not the acquisition's)
    const tally = all.filter((t) => t.dateConfirmed);
    const waiting = all.filter((t) => !t.dateConfirmed).map((t) => t.dateIso);
    const dates = tally.map((t) => t.dateIso);
    const keep = (sel: HTMLSelectElement, fallback: string | undefined) => {
      const cur = dates.includes(sel.value) ? sel.value : fallback ?? '';
      setChildren(sel, ...dates.map((d) => h('option', { value: d, selected: d === cur }, d)));
      sel.value = cur;
    };
    keep(selA, dates[0]);
    keep(selB, dates[dates.length - 1]);
    renderCountsChart(canvas, tally);
    const a = tally.find((t) => t.dateIso === selA.value);
    const b = tally.find((t) => t.dateIso === selB.value);
    const wait = waiting.length ? h('p.weak', { dataset: { testid: 'unconfirmed-dates' } }, `Not compared until you confirm ${waiting.length > 1 ? 'their dates' : 'its date'} in the Imagery list: ${waiting.join(', ')}.`) : null;
    if (!a || !b || a === b) { setChildren(table, h('p.muted', {}, 'Open scenes of two dates and run the detector to compare them.'), wait); return; }
    const rows = compareDates(a, b, state.model?.sidecar.lowSun);
    setChildren(table, h('table.grid', {},
      h('thead', {}, h('tr', {}, ...['Area', 'Class', a.dateIso, b.dateIso, 'Change', '%', 'p', 'Estimated change', 'Strength'].map((t, i) => h(i < 2 || i === 8 ? 'th.l' : 'th', {}, t)))),
      h('tbody', {}, ...rows.map((c) => h('tr', { dataset: { aoi: c.aoiName, cls: c.className, change: String(c.change), basis: c.basis } },
        h('td.l', {}, c.aoiName), h(`td.l.cls-${c.className}`, {}, c.className),
        h('td', {}, String(c.before.count)), h('td', {}, String(c.after.count)),
        h('td', {}, `${c.change > 0 ? '+' : ''}${c.change}`), h('td', {}, c.changePct === null ? '–' : `${c.changePct > 0 ? '+' : ''}${fmt(c.changePct, 0)}`),
        h('td', {}, c.test ? formatPValue(c.test.pValue) : '–'),
        c.estimated
          ? h('td', { dataset: { testid: 'estimated-change' }, title: `Estimated true counts ${fmt(c.before.estimate!.count, 1)} → ${fmt(c.after.estimate!.count, 1)}; SE of the change ${fmt(c.estimated.se, 1)}; 95 % t interval on ${fmt(c.estimated.df, 1)} degrees of freedom (Welch–Satterthwaite)` },
            h('b', {}, `${c.estimated.change > 0 ? '+' : ''}${fmt(c.estimated.change, 0)}`), h('span.muted', {}, ` ${fmt(c.estimated.ci95[0], 0)} to ${fmt(c.estimated.ci95[1], 0)}`))
          : h('td.muted', { title: 'Check a sample on both dates (Check tab) for a change that includes the detector\'s errors.' }, '–'),
        c.weakReasons.length ? h('td.l.weak', { title: c.weakReasons.join('; ') }, 'weak') : h('td.l.lvl-reliable', {}, 'like for like'))))),
      h('p', { dataset: { testid: 'compare-basis' } }, rows.some((c) => c.estimated)
        ? `Estimated change uses both dates' checked samples for ${rows.filter((c) => c.estimated).map((c) => `${c.aoiName} ${c.className}`).join(', ')}; the other rows compare detector counts only.`
        : 'No area has a checked sample on both dates: this comparison rests on the detector counts alone.'),
      weakNotes(rows), wait);
  };
  // Only while the tab is shown: updating the chart is the costliest part of a results change during a run.
  const update = renderWhenShown(el, render);
  for (const ev of ['results-changed', 'threshold-changed', 'review-changed', 'aois-changed', 'coverage-changed', 'samples-changed'] as const) state.events.on(ev, () => queueMicrotask(update));
  update();
}
