// Per-AOI counts as CSV (RFC 4180 quoting, formula-safe) and as JSON.
import type { CountRow } from './counts.ts';
import type { Interval } from './poisson-stats.ts';

/** A counts row as exported: the core tally's row (interval present) or a bare CountRow. */
export type ExportRow = CountRow & { interval?: Interval };

/** CSV columns, in order, with the CountRow field (or function of the row) each comes from. */
export const COUNT_COLUMNS: readonly (readonly [string, keyof CountRow | ((r: ExportRow) => string | number)])[] = [
  ['aoi_id', 'aoiId'],
  ['aoi', 'aoiName'],
  ['date', 'date'],
  ['class', 'className'],
  ['count', 'count'],
  // 95 % exact Poisson interval of the count (Garwood): counting noise only
  ['count_ci95_low', (r) => r.interval?.lower ?? ''],
  ['count_ci95_high', (r) => r.interval?.upper ?? ''],
  ['detected_count', 'detectedCount'],
  ['reviewed_count', 'reviewedCount'],
  ['area_ha', 'areaHa'],
  ['imaged_area_ha', 'imagedAreaHa'],
  ['density_per_ha', 'densityPerHa'],
  ['coverage', 'coverage'],
  ['gsd_m', 'gsdM'],
  ['min_score', 'minScore'],
  // from a checked sample (check-sample.ts, stratified-estimate.ts); empty until one is checked
  ['estimated_count', (r) => r.estimate?.count ?? ''],
  ['estimate_se', (r) => r.estimate?.se ?? ''],
  ['estimate_ci95_low', (r) => r.estimate?.ci95[0] ?? ''],
  ['estimate_ci95_high', (r) => r.estimate?.ci95[1] ?? ''],
  ['cells_checked', (r) => r.estimate?.cellsChecked ?? 0],
  ['estimate_method', (r) => r.estimate?.method ?? ''],
  ['counting_rule', 'countingRule'],
];

export interface CsvOptions {
  /** Prefix text cells starting with = + - @ (or tab/CR) with an apostrophe so spreadsheets do not run them (default true). */
  guardFormulas?: boolean;
  /** Line ending (default CRLF, as RFC 4180 specifies). */
  eol?: string;
}

/** Quote one CSV field when needed (RFC 4180 §2: fields with comma, quote, CR or LF are quoted, quotes doubled). */
export function csvField(value: string | number, options: CsvOptions = {}): string {
  let s: string;
  if (typeof value === 'number') {
    s = Number.isFinite(value) ? String(Math.round(value * 1e6) / 1e6) : '';
  } else {
    s = value;
    if ((options.guardFormulas ?? true) && /^[=+\-@\t\r]/.test(s)) s = `'${s}`;
  }
  return /[",\r\n]/.test(s) || s !== s.trim() ? `"${s.replace(/"/g, '""')}"` : s;
}

/** The counts table as CSV text with a header row. */
export function countsToCsv(rows: readonly ExportRow[], options: CsvOptions = {}): string {
  const eol = options.eol ?? '\r\n';
  const lines = [COUNT_COLUMNS.map(([h]) => h).join(',')];
  for (const r of rows) lines.push(COUNT_COLUMNS.map(([, k]) => csvField(typeof k === 'function' ? k(r) : (r[k] as string | number), options)).join(','));
  return lines.join(eol) + eol;
}

export interface CountsJson {
  format: 'seamtally-counts/1';
  countingRule: string;
  rows: Omit<CountRow, 'countingRule'>[];
  [extra: string]: unknown;
}

/** The counts as a JSON document (the counting rule stated once at the top). `meta` adds top-level members. */
export function countsToJson(rows: readonly CountRow[], countingRule: string, meta: Record<string, unknown> = {}): CountsJson {
  return {
    ...meta,
    format: 'seamtally-counts/1',
    countingRule,
    rows: rows.map(({ countingRule: _rule, ...rest }) => rest),
  };
}
