// The "Check" tab: step through detections with the keyboard (J/K or arrows), accept (A), reject (R), reset (U),
// and add a missed object by drawing its box (B); the map follows the current detection. A checked sample: draw one
// for an area on the shown date, walk its cells (N/P), check every object in each (the queue holds the cell's
// detections only) and mark the cell checked (C); the tally's estimate follows.
import Draw, { createBox } from 'ol/interaction/Draw.js';
import type Polygon from 'ol/geom/Polygon.js';
import { transform } from 'ol/proj.js';
import { liveSample, sampleKey, type AppState, type SampleRecord } from './state.ts';
import type { MapView } from './map-view.ts';
import type { DetectionsLayer } from './detections-layer.ts';
import type { Layout } from './layout.ts';
import { reviewedTable } from './date-table.ts';
import { setReview, addBox, removeAdded } from './review-actions.ts';
import { h, setChildren, fmt, renderWhenShown } from './dom.ts';
import type { SampleLayer } from './sample-layer.ts';
import { aoiInFrame, discardSample, drawSample, markCellChecked, newSeed, rowsInCell, unmarkCellChecked } from './sample-actions.ts';
import { sampleProgress } from '../core/sample-estimate.ts';
import type { DateTally } from '../core/tally.ts';

export interface ReviewServices { view: MapView; detections: DetectionsLayer; layout: Layout; samples: SampleLayer; getTally: () => DateTally[] }

/** Render the review tab and bind its keys (active while the tab is shown and no text field has focus). */
export function mountReviewPanel(state: AppState, el: HTMLElement, svc: ReviewServices): void {
  let pos = 0;
  let draw: Draw | null = null;
  const classSel = h('select', { 'aria-label': 'Class of an added object' });
  const card = h('div.reviewcard', { dataset: { testid: 'review-card' } });
  const summary = h('div', { dataset: { testid: 'review-summary' } });
  // the checked sample of one area on the shown date; `cellPos` (index into its drawn cells) while walking them
  let sampleAoiId: string | null = null;
  let cellPos: number | null = null;
  const aoiSel = h('select', { 'aria-label': 'Area to sample', dataset: { testid: 'sample-area' }, onchange: () => { sampleAoiId = aoiSel.value || null; cellPos = null; render(); } });
  const sampleInfo = h('div', { dataset: { testid: 'sample-info' } });
  // the seed of the next draw: empty draws a random one; either way the seed is kept with the sample and shown
  const seedIn = h('input', { type: 'number', min: '0', step: '1', placeholder: 'random', 'aria-label': 'Seed of the next sample', title: 'Give the seed of an earlier sample to draw the same cells again (same run, area and threshold)', dataset: { testid: 'sample-seed' }, style: 'width:8em' });
  const sampleButtons = h('div.row');
  const estimateLines = h('div', { dataset: { testid: 'sample-estimate' } });
  el.append(
    h('div.reviewcard', {},
      h('div', {}, h('b', {}, 'Checked sample'), h('span.muted', {}, ' · an estimated true count whose interval includes the detector\'s errors')),
      h('p.muted', {}, 'The tool lays square cells over the area (about 20 objects each, smaller in a small area), groups them by what the detector found and picks some at random. In each picked cell accept or reject every detection and draw every missed object (centre in the cell and in the area), then mark the cell checked. Keys: ',
        h('span.kbd', {}, 'N'), '/', h('span.kbd', {}, 'P'), ' next / previous cell · ', h('span.kbd', {}, 'C'), ' mark the cell checked · ', h('span.kbd', {}, 'Z'), ' show the whole cell.'),
      h('div.row', {}, 'Area ', aoiSel, ' seed ', seedIn), sampleInfo, sampleButtons, estimateLines),
    h('p.muted', {}, 'Keys: ', h('span.kbd', {}, 'J'), '/', h('span.kbd', {}, '→'), ' next · ', h('span.kbd', {}, 'K'), '/', h('span.kbd', {}, '←'), ' previous · ',
      h('span.kbd', {}, 'A'), ' accept · ', h('span.kbd', {}, 'R'), ' reject · ', h('span.kbd', {}, 'U'), ' reset · ', h('span.kbd', {}, 'B'), ' draw a missed object'),
    h('div.row', {}, h('button.small', { onclick: () => step(-1) }, '◀ Previous'), h('button.small', { onclick: () => step(1) }, 'Next ▶'),
      h('button.small', { dataset: { testid: 'accept' }, onclick: () => decide('accepted') }, 'Accept'),
      h('button.small', { dataset: { testid: 'reject' }, onclick: () => decide('rejected') }, 'Reject'),
      h('button.small', { onclick: () => decide('unreviewed') }, 'Reset')),
    h('div.row', {}, h('button.small', { dataset: { testid: 'add-box' }, onclick: () => startAdd() }, 'Draw missed object'), ' as ', classSel),
    card, summary);

  const dateOf = () => state.shownDate ?? state.results[0]?.dateIso ?? null;
  /** The shown area's sample on the shown date (drawn on this run's frame, for this shape of the area), or null. */
  const sampleNow = (): SampleRecord | null => {
    const d = state.results.find((r) => r.dateIso === dateOf());
    return d && sampleAoiId ? liveSample(state, sampleAoiId, d.dateIso, d.table.frameCrs) : null;
  };
  const cellNow = (): { rec: SampleRecord; cellId: string } | null => {
    const rec = sampleNow();
    return rec && cellPos !== null && cellPos < rec.design.sample.length ? { rec, cellId: rec.design.sample[cellPos] } : null;
  };
  /**
   * Rows to review: counted-or-candidate detections of the date (score ≥ slider, or decided), lowest score first;
   * while walking a sample, those of the current cell only.
   */
  const queue = () => {
    const d = state.results.find((r) => r.dateIso === dateOf());
    if (!d) return { rt: null, rows: [] as number[] };
    const rt = reviewedTable(state, d);
    const rows: number[] = [];
    const cell = cellNow();
    const candidates = cell ? rowsInCell(state, cell.rec, cell.cellId) : Array.from({ length: rt.table.count }, (_, i) => i);
    for (const i of candidates) if (rt.table.score[i] >= state.minScore || rt.review[i] !== 'unreviewed') rows.push(i);
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
  /** Go to cell `k` of the drawn sample (wrapping) and zoom the map to it. */
  const goCell = (k: number) => {
    const rec = sampleNow();
    if (!rec || rec.design.sample.length === 0) return;
    cellPos = ((k % rec.design.sample.length) + rec.design.sample.length) % rec.design.sample.length;
    pos = 0;
    const ext = svc.samples.extentOf(rec, rec.design.sample[cellPos]);
    // the whole cell with some context, never closer than 5 cm per screen pixel (closer shows nothing more)
    const v = svc.view.map.getView();
    if (ext) v.fit(ext, { padding: [60, 60, 60, 60], duration: 150, minResolution: 0.05 / (v.getProjection().getMetersPerUnit() ?? 1) });
    state.selection = null;
    state.events.emit('selection-changed');
    render();
  };
  const stepCell = (delta: number) => { if (sampleNow()) goCell((cellPos ?? -delta) + delta); };
  /** Mark the current cell checked and go to the next cell not yet checked. */
  const checkCell = async () => {
    const cell = cellNow();
    if (!cell) return;
    await markCellChecked(state, cell.rec.key, cell.cellId);
    const rec = sampleNow();
    if (!rec) return;
    const n = rec.design.sample.length;
    for (let j = 1; j <= n; j++) {
      const k = (cellPos! + j) % n;
      if (!rec.checked.includes(rec.design.sample[k])) { goCell(k); return; }
    }
    render();
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
      n: () => stepCell(1), p: () => stepCell(-1), c: () => void checkCell(), z: () => { if (cellPos !== null) goCell(cellPos); },
      escape: () => { if (draw) { svc.view.map.removeInteraction(draw); draw = null; } } };
    if (act[k]) { e.preventDefault(); act[k](); }
  });

  const renderSample = () => {
    if (!state.aois.some((a) => a.id === sampleAoiId)) { sampleAoiId = state.aois[0]?.id ?? null; cellPos = null; }
    if (aoiSel.options.length !== state.aois.length || state.aois.some((a, i) => aoiSel.options[i]?.value !== a.id || aoiSel.options[i]?.text !== a.name)) {
      setChildren(aoiSel, ...state.aois.map((a) => h('option', { value: a.id }, a.name)));
    }
    aoiSel.value = sampleAoiId ?? '';
    const dateIso = dateOf();
    const d = state.results.find((r) => r.dateIso === dateIso);
    const rec = sampleNow();
    svc.samples.render(rec, cellNow()?.cellId ?? null, rec && d ? aoiInFrame(state, rec.aoiId, d)?.polygons ?? null : null);
    if (!d || !sampleAoiId || !dateIso) {
      setChildren(sampleInfo, h('span.muted', {}, state.aois.length ? 'Run the detector first.' : 'Draw or import an area first.'));
      setChildren(sampleButtons); setChildren(estimateLines); return;
    }
    const draw = h('button.small', { dataset: { testid: 'draw-sample' }, onclick: async () => {
      if (rec && rec.checked.length && !confirm(`Draw a new sample? The ${rec.checked.length} cells checked in this one are dropped (your review decisions stay).`)) return;
      const typed = Number(seedIn.value);
      await drawSample(state, sampleAoiId!, dateIso, seedIn.value !== '' && Number.isInteger(typed) && typed >= 0 ? typed : newSeed());
      seedIn.value = '';
      goCell(0);
    } }, rec ? 'Draw a new sample' : 'Draw a sample');
    if (!rec) {
      const old = state.samples.find((x) => x.key === sampleKey(sampleAoiId!, dateIso));
      setChildren(sampleInfo, h('span.muted', {}, old
        ? 'The sample drawn earlier no longer fits: the area was edited or the run changed. Draw a new one.'
        : `No sample for this area on ${dateIso} yet.`));
      setChildren(sampleButtons, draw); setChildren(estimateLines); return;
    }
    const prog = sampleProgress(rec.design, new Set(rec.checked));
    const cell = cellNow();
    const c = cell ? rec.design.cells.find((x) => x.id === cell.cellId)! : null;
    const isChecked = cell ? rec.checked.includes(cell.cellId) : false;
    setChildren(sampleInfo,
      h('div', {}, `${rec.design.cells.length} cells of ${rec.design.cellSizeM} m in strata ${rec.design.strata.map((sn, hh) => `${sn} ${rec.design.cells.filter((x) => x.stratum === hh).length}`).join(', ')}; seed ${rec.design.seed}.`),
      h('div', { dataset: { testid: 'sample-progress', checked: String(prog.cellsChecked), total: String(prog.cellsInSample) } },
        h('b', {}, `${prog.cellsChecked} of ${prog.cellsInSample} cells checked`),
        prog.ready ? '' : h('span.muted', {}, ' · an estimate needs 2 checked cells in every stratum')),
      c ? h('div', { dataset: { testid: 'sample-cell', cell: cell!.cellId, checked: String(isChecked), x0M: String(c.x0M), y0M: String(c.y0M), x1M: String(c.x1M), y1M: String(c.y1M), frame: rec.frameCrs } },
        `Cell ${cellPos! + 1} of ${rec.design.sample.length} · stratum ${rec.design.strata[c.stratum]} · ${c.detected.reduce((a, b) => a + b, 0)} detected when drawn · `,
        h(isChecked ? 'b.lvl-reliable' : 'b', {}, isChecked ? 'checked' : 'not checked yet')) : null);
    setChildren(sampleButtons,
      h('button.small', { onclick: () => stepCell(-1) }, '◀ Cell'), h('button.small', { dataset: { testid: 'next-cell' }, onclick: () => stepCell(1) }, 'Cell ▶'),
      cell ? (isChecked
        ? h('button.small', { onclick: () => void unmarkCellChecked(state, rec.key, cell.cellId) }, 'Not checked after all')
        : h('button.small.primary', { dataset: { testid: 'mark-checked' }, title: 'Detections in the cell you have not rejected count as correct.', onclick: () => void checkCell() }, 'Mark cell checked')) : null,
      cell ? h('button.small', { onclick: () => { cellPos = null; render(); } }, 'All detections') : null,
      draw,
      h('button.small', { onclick: async () => { if (confirm('Discard this sample? Your review decisions stay.')) { cellPos = null; await discardSample(state, rec.key); } } }, 'Discard'));
    const rows = svc.getTally().find((t) => t.dateIso === dateIso)?.rows.filter((r) => r.aoiId === sampleAoiId) ?? [];
    setChildren(estimateLines, ...rows.map((r) => h('div', { dataset: { cls: r.className } }, h(`b.cls-${r.className}`, {}, r.className), `: detector ${r.detectedCount}`,
      r.estimate ? ` · estimated true count ${fmt(r.estimate.count, 1)} (95 % ${fmt(r.estimate.ci95[0], 1)}–${fmt(r.estimate.ci95[1], 1)})${r.estimate.precision === null ? '' : ` · precision ≈ ${fmt(r.estimate.precision * 100, 0)} %, recall ≈ ${fmt((r.estimate.recall ?? NaN) * 100, 0)} %`}`
        : ' · no estimate yet')));
  };

  const render = () => {
    renderSample();
    const classes = state.model?.sidecar.classes ?? [];
    if (classSel.options.length !== classes.length) setChildren(classSel, ...classes.map((c, i) => h('option', { value: String(i) }, c)));
    const { rt, rows } = queue();
    if (!rt || !rows.length) {
      setChildren(card, h('span.muted', {}, cellNow() ? 'No detections in this cell: draw any missed object (B), then mark the cell checked (C).' : 'Nothing to check yet: run the detector first.'));
      setChildren(summary); return;
    }
    pos = Math.min(pos, rows.length - 1);
    const row = rows[pos];
    const t = rt.table;
    const decided = rows.filter((r) => rt.review[r] !== 'unreviewed').length;
    // the detection's centre in the date's frame (data attributes, for scripted checks of the walk-through)
    setChildren(card,
      h('div', { dataset: { row: String(row), cxM: String(t.cxM[row]), cyM: String(t.cyM[row]), frame: t.frameCrs } }, `${pos + 1} of ${rows.length} · `, h(`b.cls-${classes[t.classIdx[row]]}`, {}, classes[t.classIdx[row]] ?? '?'),
        ` · score ${fmt(t.score[row], 2)} · `, h('b', { dataset: { testid: 'review-state' } }, rt.review[row])),
      h('div.muted', {}, `${fmt(t.lengthM[row], 1)} × ${fmt(t.widthM[row], 1)} m · ${rt.dateIso}`));
    setChildren(summary, h('span', { dataset: { testid: 'reviewed-count', value: String(decided), total: String(rows.length) } }, `${decided} of ${rows.length} checked`),
      h('span.muted', {}, ` · ${rt.addedIds.length} added by hand`));
  };
  // Only while the tab is shown (it sorts every candidate detection); shown later, it renders then.
  const update = renderWhenShown(el, render);
  for (const ev of ['results-changed', 'review-changed', 'threshold-changed', 'shown-date-changed', 'model-changed', 'samples-changed', 'aois-changed'] as const) state.events.on(ev, update);
  // the sample's cells are drawn in the view's projection: redraw them when the map changes CRS (the tally is unchanged)
  svc.view.map.on('change:view', update);
  update();
}
