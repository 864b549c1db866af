// The columns of a tally row, defined once: the page's table, the printable report and the CSV export all read this
// list (the JSON export carries the rows themselves). Each column has a short label, a sentence saying what it
// means, its plain text, and the CSV fields it becomes (in the order the CSV writes them).
import type { CountRow } from './counts.ts';
import type { Interval } from './poisson-stats.ts';
import type { ResolutionCaveat } from './caveats.ts';
import type { SampleProgress } from './sample-estimate.ts';

/** A row as the columns read it: the core tally's row, or a bare CountRow (seamtally estimate) without extras. */
export type ColumnRow = CountRow & { interval?: Interval; caveat?: ResolutionCaveat | null; sample?: SampleProgress | null };

export type CsvValue = string | number;

export interface TallyColumn {
  id: 'area' | 'date' | 'class' | 'count' | 'interval' | 'detected' | 'reviewed' | 'estimate' | 'hectares' | 'density' | 'imaged' | 'gsd' | 'caveat' | 'rule';
  /** Short header (page table, report); empty for CSV-only columns. */
  label: string;
  /** What the column means (the header's tooltip; the report's legend). */
  title: string;
  /** Plain text of a row's cell. */
  text(r: ColumnRow): string;
  /** CSV fields: [name, value] in order. */
  csv: readonly (readonly [string, (r: ColumnRow) => CsvValue])[];
  /** False where the page's table shows it elsewhere (the date and GSD head each date's rows) or not at all. */
  inTable: boolean;
  /** False where the report leaves it out. */
  inReport: boolean;
}

const f = (x: number | null | undefined, d: number) => (x === null || x === undefined || !Number.isFinite(x) ? '–' : x.toFixed(d));
const show = { inTable: true, inReport: true };

/** How the estimate column reads: the estimate and its interval, how far the sample is, or that there is none. */
export function estimateText(r: ColumnRow): string {
  if (r.estimate) return `${f(r.estimate.count, 0)} (${f(r.estimate.ci95[0], 0)}–${f(r.estimate.ci95[1], 0)})`;
  return r.sample ? `${r.sample.cellsChecked}/${r.sample.cellsInSample} cells` : 'no sample';
}

export const TALLY_COLUMNS: readonly TallyColumn[] = [
  { id: 'area', label: 'Area', title: 'Area of interest', text: (r) => r.aoiName, csv: [['aoi_id', (r) => r.aoiId], ['aoi', (r) => r.aoiName]], ...show },
  { id: 'date', label: 'Date', title: 'Acquisition date', text: (r) => r.date, csv: [['date', (r) => r.date]], inTable: false, inReport: true },
  { id: 'class', label: 'Class', title: 'Object class', text: (r) => r.className, csv: [['class', (r) => r.className]], ...show },
  { id: 'count', label: 'Count', title: 'Counted under the rule, after review', text: (r) => String(r.count), csv: [['count', (r) => r.count]], ...show },
  { id: 'interval', label: '95 %', title: '95 % exact Poisson interval of the count (Garwood): counting noise only, not the detector\'s errors',
    text: (r) => (r.interval ? `${f(r.interval.lower, 1)}–${f(r.interval.upper, 1)}` : '–'),
    csv: [['count_ci95_low', (r) => r.interval?.lower ?? ''], ['count_ci95_high', (r) => r.interval?.upper ?? '']], ...show },
  { id: 'detected', label: 'Det.', title: 'What the detector alone found at this score', text: (r) => String(r.detectedCount), csv: [['detected_count', (r) => r.detectedCount]], ...show },
  { id: 'reviewed', label: 'Rev.', title: 'Detections a person has checked (accepted, rejected or added)', text: (r) => String(r.reviewedCount), csv: [['reviewed_count', (r) => r.reviewedCount]], ...show },
  { id: 'estimate', label: 'Estimated', title: 'Estimated true count from a checked sample of cells (stratified difference estimator) with its 95 % interval: it includes the detector\'s misses and false detections',
    text: estimateText,
    csv: [
      ['estimated_count', (r) => r.estimate?.count ?? ''], ['estimate_se', (r) => r.estimate?.se ?? ''],
      ['estimate_ci95_low', (r) => r.estimate?.ci95[0] ?? ''], ['estimate_ci95_high', (r) => r.estimate?.ci95[1] ?? ''],
      ['cells_checked', (r) => r.estimate?.cellsChecked ?? r.sample?.cellsChecked ?? 0],
      ['estimated_precision', (r) => r.estimate?.precision ?? ''], ['estimated_recall', (r) => r.estimate?.recall ?? ''],
      ['estimate_method', (r) => r.estimate?.method ?? ''],
    ], ...show },
  { id: 'hectares', label: 'ha', title: 'Area (geodesic), hectares', text: (r) => f(r.areaHa, 2), csv: [['area_ha', (r) => r.areaHa], ['imaged_area_ha', (r) => r.imagedAreaHa]], ...show },
  { id: 'density', label: '/ha', title: 'Count per hectare', text: (r) => f(r.densityPerHa, 2), csv: [['density_per_ha', (r) => r.densityPerHa]], ...show },
  { id: 'imaged', label: 'Imaged', title: 'Share of the area covered by valid pixels on this date', text: (r) => (Number.isNaN(r.coverage) ? '…' : `${f(r.coverage * 100, 0)} %`), csv: [['coverage', (r) => r.coverage]], ...show },
  { id: 'gsd', label: 'GSD m', title: 'Ground sampling distance of the date\'s scenes (the coarsest)', text: (r) => f(r.gsdM, 2), csv: [['gsd_m', (r) => r.gsdM]], inTable: false, inReport: true },
  { id: 'caveat', label: 'Res.', title: 'Resolution caveat (hover for the reason)', text: (r) => r.caveat?.level ?? '–', csv: [['resolution_caveat', (r) => r.caveat?.level ?? '']], ...show },
  { id: 'rule', label: '', title: 'Counting threshold and rule', text: (r) => r.countingRule, csv: [['min_score', (r) => r.minScore], ['counting_rule', (r) => r.countingRule]], inTable: false, inReport: false },
];

/** The CSV header names, in order. */
export const CSV_FIELDS: readonly string[] = TALLY_COLUMNS.flatMap((c) => c.csv.map(([name]) => name));
