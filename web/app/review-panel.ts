// The "Check" tab: step through detections with the keyboard (J/K or arrows), accept (A), reject (R), reset (U),
// and add a missed object by drawing its box (B); the map follows the current detection.
import Draw, { createBox } from 'ol/interaction/Draw.js';
import type Polygon from 'ol/geom/Polygon.js';
import { transform } from 'ol/proj.js';
import type { AppState } from './state.ts';
import type { MapView } from './map-view.ts';
import type { DetectionsLayer } from './detections-layer.ts';
import type { Layout } from './layout.ts';
import { reviewedTable } from './date-table.ts';
import { setReview, addBox, removeAdded } from './review-actions.ts';
import { h, setChildren, fmt, renderWhenShown } from './dom.ts';

export interface ReviewServices { view: MapView; detections: DetectionsLayer; layout: Layout }

/** Render the review tab and bind its keys (active while the tab is shown and no text field has focus). */
export function mountReviewPanel(state: AppState, el: HTMLElement, svc: ReviewServices): void {
  let pos = 0;
  let draw: Draw | null = null;
  const classSel = h('select', { 'aria-label': 'Class of an added object' });
  const card = h('div.reviewcard', { dataset: { testid: 'review-card' } });
  const summary = h('div', { dataset: { testid: 'review-summary' } });
  el.append(
    h('p.muted', {}, 'Keys: ', h('span.kbd', {}, 'J'), '/', h('span.kbd', {}, '→'), ' next · ', h('span.kbd', {}, 'K'), '/', h('span.kbd', {}, '←'), ' previous · ',
      h('span.kbd', {}, 'A'), ' accept · ', h('span.kbd', {}, 'R'), ' reject · ', h('span.kbd', {}, 'U'), ' reset · ', h('span.kbd', {}, 'B'), ' draw a missed object'),
    h('div.row', {}, h('button.small', { onclick: () => step(-1) }, '◀ Previous'), h('button.small', { onclick: () => step(1) }, 'Next ▶'),
      h('button.small', { dataset: { testid: 'accept' }, onclick: () => decide('accepted') }, 'Accept'),
      h('button.small', { dataset: { testid: 'reject' }, onclick: () => decide('rejected') }, 'Reject'),
      h('button.small', { onclick: () => decide('unreviewed') }, 'Reset')),
    h('div.row', {}, h('button.small', { dataset: { testid: 'add-box' }, onclick: () => startAdd() }, 'Draw missed object'), ' as ', classSel),
    card, summary);

  const dateOf = () => state.shownDate ?? state.results[0]?.dateIso ?? null;
  /** Rows to review: counted-or-candidate detections of the date (score ≥ slider, or decided), lowest score first. */
  const queue = () => {
    const d = state.results.find((r) => r.dateIso === dateOf());
    if (!d) return { rt: null, rows: [] as number[] };
    const rt = reviewedTable(state, d);
    const rows: number[] = [];
    for (let i = 0; i < rt.table.count; i++) if (rt.table.score[i] >= state.minScore || rt.review[i] !== 'unreviewed') rows.push(i);
    rows.sort((a, b) => rt.table.score[a] - rt.table.score[b] || a - b);
    return { rt, rows };
  };
  const select = (row: number | null, dateIso: string | null) => {
    state.selection = row === null || dateIso === null ? null : { dateIso, row };
    state.events.emit('selection-changed');
    if (state.selection) {
      const c = svc.detections.centreOf(state.selection.dateIso, state.selection.row);
      if (c) svc.view.map.getView().animate({ center: c, resolution: Math.min(svc.view.map.getView().getResolution() ?? 0.3, 0.15), duration: 150 });
    }
  };
  const step = (delta: number) => {
    const { rows } = queue();
    if (!rows.length) return;
    pos = (pos + delta + rows.length) % rows.length;
    select(rows[pos], dateOf());
    render();
  };
  const decide = async (review: 'accepted' | 'rejected' | 'unreviewed') => {
    const { rt, rows } = queue();
    const dateIso = dateOf();
    if (!rt || !rows.length || !dateIso) return;
    const row = rows[Math.min(pos, rows.length - 1)];
    if (row >= rt.detectorRows) {
      if (review === 'rejected') await removeAdded(state, rt.addedIds[row - rt.detectorRows]);
      return;
    }
    await setReview(state, dateIso, row, review);
    if (review !== 'unreviewed') step(1);
  };
  const startAdd = () => {
    const dateIso = dateOf();
    if (!dateIso || draw) return;
    draw = new Draw({ type: 'Circle', geometryFunction: createBox() });
    draw.on('drawend', (e) => {
      const ring = (e.feature.getGeometry() as Polygon).getCoordinates()[0]
        .map((c) => transform(c, svc.view.projectionCode(), 'EPSG:4326') as [number, number]);
      svc.view.map.removeInteraction(draw!);
      draw = null;
      void addBox(state, dateIso, Number(classSel.value) || 0, ring);
    });
    svc.view.map.addInteraction(draw);
  };

  document.addEventListener('keydown', (e) => {
    if (!el.classList.contains('active') || e.ctrlKey || e.metaKey || e.altKey) return;
    if ((e.target as HTMLElement | null)?.closest('input, select, textarea')) return;
    const k = e.key.toLowerCase();
    const act: Record<string, () => void> = { j: () => step(1), arrowright: () => step(1), k: () => step(-1), arrowleft: () => step(-1),
      a: () => void decide('accepted'), r: () => void decide('rejected'), u: () => void decide('unreviewed'), b: startAdd,
      escape: () => { if (draw) { svc.view.map.removeInteraction(draw); draw = null; } } };
    if (act[k]) { e.preventDefault(); act[k](); }
  });

  const render = () => {
    const classes = state.model?.sidecar.classes ?? [];
    if (classSel.options.length !== classes.length) setChildren(classSel, ...classes.map((c, i) => h('option', { value: String(i) }, c)));
    const { rt, rows } = queue();
    if (!rt || !rows.length) { setChildren(card, h('span.muted', {}, 'Nothing to check yet: run the detector first.')); setChildren(summary); return; }
    pos = Math.min(pos, rows.length - 1);
    const row = rows[pos];
    const t = rt.table;
    const decided = rows.filter((r) => rt.review[r] !== 'unreviewed').length;
    setChildren(card,
      h('div', {}, `${pos + 1} of ${rows.length} · `, h(`b.cls-${classes[t.classIdx[row]]}`, {}, classes[t.classIdx[row]] ?? '?'),
        ` · score ${fmt(t.score[row], 2)} · `, h('b', { dataset: { testid: 'review-state' } }, rt.review[row])),
      h('div.muted', {}, `${fmt(t.lengthM[row], 1)} × ${fmt(t.widthM[row], 1)} m · ${rt.dateIso}`));
    setChildren(summary, h('span', { dataset: { testid: 'reviewed-count', value: String(decided), total: String(rows.length) } }, `${decided} of ${rows.length} checked`),
      h('span.muted', {}, ` · ${rt.addedIds.length} added by hand`));
  };
  // Only while the tab is shown (it sorts every candidate detection); shown later, it renders then.
  const update = renderWhenShown(el, render);
  for (const ev of ['results-changed', 'review-changed', 'threshold-changed', 'shown-date-changed', 'model-changed'] as const) state.events.on(ev, update);
  update();
}
