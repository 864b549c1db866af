// Chart of counts over dates (chart.js): one line per area × class.
import { Chart, LineController, LineElement, PointElement, LinearScale, CategoryScale, Legend, Tooltip } from 'chart.js';
import type { DateTally } from './tally.ts';

Chart.register(LineController, LineElement, PointElement, LinearScale, CategoryScale, Legend, Tooltip);
const charts = new WeakMap<HTMLCanvasElement, Chart>();
const palette = ['#4fd1c5', '#f27f5b', '#f2b134', '#b39ddb', '#9ccc65', '#64b5f6', '#ff8a80', '#e0e0e0'];

/** Draw (or redraw) the counts chart into `canvas`. */
export function renderCountsChart(canvas: HTMLCanvasElement, tally: DateTally[], opts: { animate?: boolean } = {}): Chart {
  const labels = tally.map((t) => t.dateIso);
  const series = new Map<string, number[]>();
  tally.forEach((t, i) => {
    for (const r of t.rows) {
      const key = `${r.aoiName} · ${r.className}`;
      if (!series.has(key)) series.set(key, new Array(tally.length).fill(NaN));
      series.get(key)![i] = r.count;
    }
  });
  const datasets = [...series.entries()].map(([label, data], k) => ({
    label, data, borderColor: palette[k % palette.length], backgroundColor: palette[k % palette.length], tension: 0, pointRadius: 4,
  }));
  const old = charts.get(canvas);
  if (old) { old.data.labels = labels; old.data.datasets = datasets; old.update('none'); return old; }
  const chart = new Chart(canvas, {
    type: 'line',
    data: { labels, datasets },
    options: {
      animation: opts.animate ? undefined : false,
      responsive: true,
      plugins: { legend: { labels: { color: '#9aa5b4', boxWidth: 10 } } },
      scales: { x: { ticks: { color: '#9aa5b4' }, grid: { color: '#2c3541' } }, y: { beginAtZero: true, ticks: { color: '#9aa5b4' }, grid: { color: '#2c3541' }, title: { display: true, text: 'count', color: '#9aa5b4' } } },
    },
  });
  charts.set(canvas, chart);
  return chart;
}
