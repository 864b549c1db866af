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

export interface TakeawayServices {
  view: MapView;
  getTally: () => DateTally[];
  /** Test-only (`?fault=export`): building any export fails after its content is half made. */
  exportFails?: boolean;
}

/** Render the export tab into `el`. */
export function mountTakeawayPanel(state: AppState, el: HTMLElement, svc: TakeawayServices): void {
  const guarded = (fn: () => void | Promise<void>) => async () => {
    try { await fn(); } catch (err) { state.events.emit('notice', { level: 'error', text: toErrorInfo(err).message }); }
  };
  /**
   * An export is written whole or not at all: the whole text is built in memory first and only then handed to the
   * browser as one Blob download, so a failure while building (e.g. out of memory) leaves no partial file.
   */
  const whole = (fileName: string, type: string, build: () => string | Promise<string>) => async (): Promise<string | null> => {
    let text: string;
    try {
      text = await build();
      if (svc.exportFails) throw new Error('injected failure half-way through the export (?fault=export)');
    } catch (err) {
      state.events.emit('notice', { level: 'error', text: `${fileName} was not written, and no part of it was saved (${toErrorInfo(err).message.replace(/\.$/, '')}): close other tabs to free memory and export again.` });
      return null;
    }
    download(fileName, text, type);
    return text;
  };
  el.append(
    h('p.muted', {}, 'Every export carries the counting rule, the score threshold in force and each detection\'s review state.'),
    h('div.row', {}, h('button', { dataset: { testid: 'export-geojson' }, onclick: whole('detections.geojson', 'application/geo+json',
      () => JSON.stringify(detectionsGeoJson(state))) }, 'Detections (GeoJSON)')),
    h('div.row', {}, h('button', { dataset: { testid: 'export-csv' }, onclick: whole('counts.csv', 'text/csv', () => countsCsv(svc.getTally())) }, 'Counts (CSV)')),
    h('div.row', {}, h('button', { onclick: whole('areas.geojson', 'application/geo+json', () => exportAreas(state)) }, 'Areas (GeoJSON)')),
    h('div.row', {}, h('button.primary', { dataset: { testid: 'export-report' }, onclick: guarded(async () => {
      const html = await whole('seamtally-report.html', 'text/html', () => buildReport(state, svc.view, svc.getTally()))();
      if (html === null) return;
      const w = window.open(URL.createObjectURL(new Blob([html], { type: 'text/html' })), '_blank');
      if (!w) state.events.emit('notice', { level: 'info', text: 'The report was downloaded; open it and print it (one page).' });
    }) }, 'Printable report')),
    h('div.cautions', {}, h('b', {}, 'Before you share or act on these numbers'), h('ul', {}, ...cautionLines.map((c) => h('li', {}, c)))),
    h('div.row', {}, h('button.small', { onclick: guarded(async () => {
      if (!confirm('Forget kept runs, detections, review decisions and checked samples? Areas and scenes stay.')) return;
      await state.store?.clearWork();
      state.review.clear(); state.added = []; state.results = []; state.samples = []; state.reviewVersion++;
      state.events.emit('results-changed'); state.events.emit('review-changed'); state.events.emit('samples-changed');
    }) }, 'Forget kept work')),
  );
}
