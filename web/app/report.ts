// The one-page printable report: map snapshot, counts table, chart, caveats, counting rule, model and its card
// metrics, and the cautions, as one self-contained HTML document (no outside resources).
import type { AppState } from './state.ts';
import type { DateTally } from './tally.ts';
import { TALLY_COLUMNS } from '../core/tally-columns.ts';
import type { MapView } from './map-view.ts';
import { mapSnapshot } from './map-snapshot.ts';
import { renderCountsChart } from './counts-chart.ts';
import { compareDates } from './compare.ts';
import { cautionLines } from './cautions.ts';
import { COUNTING_RULE } from '../core/point-in-polygon.ts';
import { formatPValue } from '../core/poisson-stats.ts';
import { ESTIMATE_METHOD } from '../core/stratified-estimate.ts';

const esc = (s: string) => s.replace(/[&<>"]/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;' })[c]!);
const f = (x: number, d: number) => (Number.isFinite(x) ? x.toFixed(d) : '–');

async function chartPng(tally: DateTally[]): Promise<string> {
  const canvas = document.createElement('canvas');
  canvas.width = 900; canvas.height = 300;
  canvas.style.cssText = 'position:fixed;left:-10000px;width:900px;height:300px';
  document.body.append(canvas);
  const chart = renderCountsChart(canvas, tally, { theme: 'print' });
  chart.resize(900, 300);
  const url = chart.toBase64Image('image/png', 1);
  chart.destroy();
  canvas.remove();
  return url;
}

/** Build the report HTML for the current state. */
export async function buildReport(state: AppState, view: MapView, tally: DateTally[]): Promise<string> {
  const [mapPng, chart] = await Promise.all([mapSnapshot(view), chartPng(tally)]);
  const m = state.model;
  // the counts table from the one column list (core/tally-columns.ts), as the page's table and the CSV
  const cols = TALLY_COLUMNS.filter((c) => c.inReport);
  const rows = tally.flatMap((t) => t.rows).map((r) => `<tr>${cols.map((c) => `<td>${c.id === 'count' ? `<b>${esc(c.text(r))}</b>` : esc(c.text(r))}</td>`).join('')}</tr>`).join('');
  const comps = tally.length >= 2 ? compareDates(tally[0], tally[tally.length - 1], state.model?.sidecar.lowSun) : [];
  const compRows = comps.map((c) => `<tr><td>${esc(c.aoiName)}</td><td>${esc(c.className)}</td><td>${c.before.count}</td><td>${c.after.count}</td><td>${c.change > 0 ? '+' : ''}${c.change}</td><td>${c.test ? esc(formatPValue(c.test.pValue)) : '–'}</td><td>${c.estimated ? `${c.estimated.change > 0 ? '+' : ''}${f(c.estimated.change, 1)} (${f(c.estimated.ci95[0], 1)} to ${f(c.estimated.ci95[1], 1)})` : '–'}</td><td>${c.weakReasons.length ? esc(c.weakReasons.join('; ')) : 'like for like'}</td></tr>`).join('');
  const caveats = tally.flatMap((t) => [...t.caveats.map((c) => `<li>${t.dateIso} ${esc(c.className)}: ${esc(c.reason)}</li>`), t.upsampling ? `<li>${t.dateIso}: ${esc(t.upsampling)}</li>` : '', ...t.lowSun.map((n) => `<li>${t.dateIso} ${esc(n.className)}: ${esc(n.text)}</li>`)]).join('');
  const ap = m?.sidecar.quality?.ap50;
  const metrics = ap ? Object.entries(ap).map(([k, v]) => `${esc(k)} AP@0.5 ${f(v, 2)}`).join(', ') : 'no measured metrics in the sidecar';
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><title>seamtally report</title>
<style>@page{size:A4;margin:10mm}body{font:9.5px/1.3 system-ui,sans-serif;color:#111;margin:0}h1{font-size:15px;margin:0 0 2px}h2{font-size:11px;margin:6px 0 2px}
table{border-collapse:collapse;width:100%}td,th{border-bottom:1px solid #ccc;padding:1px 3px;text-align:left}img{max-width:100%;object-fit:contain}.map img{width:100%;max-height:125mm}.chart img{width:100%;max-height:60mm}
.two{display:flex;gap:8px}.two>*{flex:1}.caution{border:1px solid #b8860b;background:#fff8e1;padding:4px}.muted{color:#555}</style></head><body>
<h1>seamtally — object counts by area</h1><div class="muted">Generated ${new Date().toISOString().slice(0, 16).replace('T', ' ')} UTC · score ≥ ${state.minScore.toFixed(2)} · ${state.scenes.length} scene(s): ${esc(state.scenes.map((s) => `${s.name} (${s.dateIso})`).join(', '))}</div>
<div class="map"><h2>Map</h2><img alt="map" src="${mapPng}"></div><div class="chart"><h2>Counts over dates</h2><img alt="chart" src="${chart}"></div>
<h2>Counts per area, date and class</h2><table><tr>${cols.map((c) => `<th title="${esc(c.title)}">${esc(c.label)}</th>`).join('')}</tr>${rows}</table>
<p class="muted">${cols.filter((c) => c.id !== 'area' && c.id !== 'date' && c.id !== 'class').map((c) => `<b>${esc(c.label)}</b>: ${esc(c.title)}.`).join(' ')}</p>
${compRows ? `<h2>Change ${tally[0].dateIso} → ${tally[tally.length - 1].dateIso}</h2><table><tr><th>Area</th><th>Class</th><th>Before</th><th>After</th><th>Change</th><th>p (exact conditional test)</th><th>Estimated change (95 %)</th><th>Strength</th></tr>${compRows}</table>` : ''}
<h2>Estimates</h2><p>${tally.some((t) => t.rows.some((r) => r.estimate)) ? `Estimated true counts come from cells a person checked completely: ${esc(ESTIMATE_METHOD)}. Estimated changes use both dates' samples (t interval on Welch–Satterthwaite degrees of freedom).` : 'No checked sample: the counts above are the detector\'s (after review), and their Garwood intervals describe counting noise only, not the detector\'s misses and false detections.'}</p>
<h2>Resolution caveats</h2><ul>${caveats || '<li>none</li>'}</ul>
<h2>Counting rule</h2><p>${esc(COUNTING_RULE)}</p>
<h2>Model</h2><p>${esc(m?.name ?? 'none')} (${m?.origin ?? ''}) · classes ${esc(m?.sidecar.classes.join(', ') ?? '')} · input ${m?.sidecar.inputGsdM ?? ''} m/px · ${metrics}${m?.sidecar.quality?.evalSet ? ` · evaluated on: ${esc(m.sidecar.quality.evalSet)}` : ''}</p>
<div class="caution"><b>Cautions.</b> ${cautionLines.map(esc).join(' ')}</div>
</body></html>`;
}
