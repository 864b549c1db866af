// Per-AOI counts as CSV (RFC 4180 quoting, formula-safe) and as JSON.
import type { CountRow } from './counts.ts';
import { TALLY_COLUMNS, type ColumnRow, type CsvValue } from './tally-columns.ts';

/** A counts row as exported: the core tally's row (interval, caveat, sample present) or a bare CountRow. */
export type ExportRow = ColumnRow;

/** CSV columns, in order, each with the function of the row it comes from (from the one column list, tally-columns.ts). */
export const COUNT_COLUMNS: readonly (readonly [string, (r: ExportRow) => CsvValue])[] = TALLY_COLUMNS.flatMap((c) => c.csv);

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
  for (const r of rows) lines.push(COUNT_COLUMNS.map(([, k]) => csvField(k(r), options)).join(','));
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
