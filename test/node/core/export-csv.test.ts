// Counts CSV read back by Python's csv module (an independent RFC 4180 reader) and counts JSON.
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import type { CountRow } from '../../../web/core/counts.ts';
import { COUNT_COLUMNS, countsToCsv, countsToJson, csvField } from '../../../web/core/export-csv.ts';
import { COUNTING_RULE } from '../../../web/core/point-in-polygon.ts';

const row = (aoiName: string, count: number): CountRow => ({
  aoiId: `id-${count}`, aoiName, date: '2024-05-01', className: 'vehicle', count, detectedCount: count + 2, reviewedCount: 1,
  areaM2: 12345.678, areaHa: 1.2345678, imagedAreaHa: 1.11, densityPerHa: count / 1.2345678, coverage: 0.9, gsdM: 0.3, minScore: 0.5,
  countingRule: COUNTING_RULE,
});

describe('countsToCsv', () => {
  it('round-trips awkward names through Python csv.reader (source: Python standard library csv, RFC 4180 dialect)', () => {
    const names = ['Car park A', 'North, east', 'He said "hi"', 'two\nlines', ' padded ', '=HYPERLINK("x")', 'Ünïcode ✓'];
    const rows = names.map((n, i) => row(n, i));
    const csv = countsToCsv(rows);
    const py = "import csv,sys,json; print(json.dumps(list(csv.reader(sys.stdin, strict=True))))";
    const parsed = JSON.parse(execFileSync('python3', ['-c', py], { input: csv }).toString()) as string[][];
    expect(parsed[0]).toEqual(COUNT_COLUMNS.map(([h]) => h));
    expect(parsed).toHaveLength(names.length + 1);
    names.forEach((n, i) => {
      const r = parsed[i + 1];
      expect(r[1]).toBe(n.startsWith('=') ? `'${n}` : n); // formulas are defused
      const col = (h: string) => r[COUNT_COLUMNS.findIndex(([name]) => name === h)];
      expect(Number(col('count'))).toBe(i);
      expect(Number(col('detected_count'))).toBe(i + 2);
      expect(Number(col('area_ha'))).toBeCloseTo(1.2345678, 6);
      expect(r[r.length - 1]).toBe(COUNTING_RULE);
    });
    expect(csv.endsWith('\r\n')).toBe(true);
  });
  it('quotes only when needed', () => {
    expect(csvField('plain')).toBe('plain');
    expect(csvField('a,b')).toBe('"a,b"');
    expect(csvField('say "x"')).toBe('"say ""x"""');
    expect(csvField(-3)).toBe('-3');
    expect(csvField('-3', { guardFormulas: false })).toBe('-3');
    expect(csvField(NaN)).toBe('');
  });
});

describe('countsToJson', () => {
  it('states the rule once and keeps every figure', () => {
    const j = countsToJson([row('A', 3)], COUNTING_RULE, { model: 'x' });
    expect(j.format).toBe('seamtally-counts/1');
    expect(j.countingRule).toBe(COUNTING_RULE);
    expect(j.model).toBe('x');
    expect(j.rows[0]).not.toHaveProperty('countingRule');
    expect(j.rows[0].count).toBe(3);
    expect(JSON.parse(JSON.stringify(j))).toEqual(j);
  });
});
