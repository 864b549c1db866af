// Chart of counts over dates (chart.js): one line per area × class.
import { Chart, LineController, LineElement, PointElement, LinearScale, CategoryScale, Legend, Tooltip } from 'chart.js';
import type { DateTally } from './tally.ts';

Chart.register(LineController, LineElement, PointElement, LinearScale, CategoryScale, Legend, Tooltip);
const charts = new WeakMap<HTMLCanvasElement, Chart>();
const palette = ['#4fd1c5', '#f27f5b', '#f2b134', '#b39ddb', '#9ccc65', '#64b5f6', '#ff8a80', '#e0e0e0'];
// for the printed report: dark, distinct colours on white (ColorBrewer Dark2, Harrower & Brewer 2003, from memory)
const printPalette = ['#1b9e77', '#d95f02', '#7570b3', '#e7298a', '#66a61e', '#e6ab02', '#a6761d', '#444444'];
// beyond the palette, series differ by dash pattern too, so no two series ever look alike
const dashes: number[][] = [[], [6, 3], [2, 3], [8, 3, 2, 3]];

/** Draw (or redraw) the counts chart into `canvas`. */
export function renderCountsChart(canvas: HTMLCanvasElement, tally: DateTally[], opts: { animate?: boolean; theme?: 'app' | 'print' } = {}): Chart {
  const print = opts.theme === 'print';
  const colours = print ? printPalette : palette;
  const ink = print ? '#222222' : '#9aa5b4';
  const grid = print ? '#cccccc' : '#2c3541';
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
    label, data, borderColor: colours[k % colours.length], backgroundColor: colours[k % colours.length], tension: 0, pointRadius: 4,
    borderDash: dashes[Math.floor(k / colours.length) % dashes.length],
  }));
  const old = charts.get(canvas);
  if (old) { old.data.labels = labels; old.data.datasets = datasets; old.update('none'); return old; }
  const chart = new Chart(canvas, {
    type: 'line',
    data: { labels, datasets },
    options: {
      animation: opts.animate ? undefined : false,
      responsive: true,
      plugins: { legend: { labels: { color: ink, boxWidth: 10 } } },
      scales: { x: { ticks: { color: ink }, grid: { color: grid } }, y: { beginAtZero: true, ticks: { color: ink }, grid: { color: grid }, title: { display: true, text: 'count', color: ink } } },
    },
  });
  charts.set(canvas, chart);
  return chart;
}
