// The "Take away" tab: download detections GeoJSON, counts CSV, areas GeoJSON, and the one-page printable report.
import type { AppState } from './state.ts';
import type { DateTally } from './tally.ts';
import type { MapView } from './map-view.ts';
import { h } from './dom.ts';
import { download } from './download.ts';
import { detectionsGeoJson, countsCsv } from './exports.ts';
import { exportAreas } from './aoi-actions.ts';
import { buildReport } from './report.ts';
import { cautionLines } from './cautions.ts';
import { toErrorInfo } from '../core/errors.ts';

export interface TakeawayServices { view: MapView; getTally: () => DateTally[] }

/** Render the export tab into `el`. */
export function mountTakeawayPanel(state: AppState, el: HTMLElement, svc: TakeawayServices): void {
  const guarded = (fn: () => void | Promise<void>) => async () => {
    try { await fn(); } catch (err) { state.events.emit('notice', { level: 'error', text: toErrorInfo(err).message }); }
  };
  el.append(
    h('p.muted', {}, 'Every export carries the counting rule, the score threshold in force and each detection\'s review state.'),
    h('div.row', {}, h('button', { dataset: { testid: 'export-geojson' }, onclick: guarded(() =>
      download('detections.geojson', JSON.stringify(detectionsGeoJson(state)), 'application/geo+json')) }, 'Detections (GeoJSON)')),
    h('div.row', {}, h('button', { dataset: { testid: 'export-csv' }, onclick: guarded(() =>
      download('counts.csv', countsCsv(svc.getTally()), 'text/csv')) }, 'Counts (CSV)')),
    h('div.row', {}, h('button', { onclick: guarded(() => download('areas.geojson', exportAreas(state), 'application/geo+json')) }, 'Areas (GeoJSON)')),
    h('div.row', {}, h('button.primary', { dataset: { testid: 'export-report' }, onclick: guarded(async () => {
      const html = await buildReport(state, svc.view, svc.getTally());
      download('seamtally-report.html', html, 'text/html');
      const w = window.open(URL.createObjectURL(new Blob([html], { type: 'text/html' })), '_blank');
      if (!w) state.events.emit('notice', { level: 'info', text: 'The report was downloaded; open it and print it (one page).' });
    }) }, 'Printable report')),
    h('div.cautions', {}, h('b', {}, 'Before you share or act on these numbers'), h('ul', {}, ...cautionLines.map((c) => h('li', {}, c)))),
    h('div.row', {}, h('button.small', { onclick: guarded(async () => {
      if (!confirm('Forget kept runs, detections and review decisions? Areas and scenes stay.')) return;
      await state.store?.clearWork();
      state.review.clear(); state.added = []; state.results = []; state.reviewVersion++;
      state.events.emit('results-changed'); state.events.emit('review-changed');
    }) }, 'Forget kept work')),
  );
}
