// The one column list: unique CSV names in the order the CSV writes them, every CSV value read from the row it
// describes (a bare CountRow from seamtally estimate as well as a full tally row), and the estimate's three states.
import { describe, expect, it } from 'vitest';
import { CSV_FIELDS, TALLY_COLUMNS, estimateText, type ColumnRow } from '../../../web/core/tally-columns.ts';
import { countsToCsv } from '../../../web/core/export-csv.ts';

const base: ColumnRow = { aoiId: 'a1', aoiName: 'Lot', date: '2026-06-01', className: 'vehicle', count: 12, detectedCount: 14, reviewedCount: 3,
  areaM2: 20000, areaHa: 2, imagedAreaHa: 1.5, densityPerHa: 6, coverage: 0.75, gsdM: 0.3, minScore: 0.4, countingRule: 'centre in the AOI' };
const estimate = { count: 13.5, se: 1.2, ci95: [10.9, 16.1] as [number, number], df: 5, cellsChecked: 8, detected: 14, precision: 0.8, recall: 0.9, method: 'stratified difference' };

describe('TALLY_COLUMNS', () => {
  it('CSV names are unique and start with the row identity', () => {
    expect(new Set(CSV_FIELDS).size).toBe(CSV_FIELDS.length);
    expect(CSV_FIELDS.slice(0, 5)).toEqual(['aoi_id', 'aoi', 'date', 'class', 'count']);
  });
  it('a bare CountRow: values from the row, empty estimate fields', () => {
    const line = countsToCsv([base]).split('\r\n')[1].split(',');
    const at = (k: string) => line[CSV_FIELDS.indexOf(k)];
    expect([at('count'), at('detected_count'), at('area_ha'), at('imaged_area_ha'), at('coverage'), at('min_score')]).toEqual(['12', '14', '2', '1.5', '0.75', '0.4']);
    expect([at('estimated_count'), at('count_ci95_low'), at('cells_checked')]).toEqual(['', '', '0']);
  });
  it('a tally row with an estimate: the estimate\'s figures and method', () => {
    const line = countsToCsv([{ ...base, estimate, interval: { lower: 6.2, upper: 21 } }]).split('\r\n')[1].split(',');
    const at = (k: string) => line[CSV_FIELDS.indexOf(k)];
    expect([at('estimated_count'), at('estimate_se'), at('estimate_ci95_low'), at('estimate_ci95_high'), at('cells_checked'), at('estimated_precision'), at('estimate_method')])
      .toEqual(['13.5', '1.2', '10.9', '16.1', '8', '0.8', 'stratified difference']);
    expect([at('count_ci95_low'), at('count_ci95_high')]).toEqual(['6.2', '21']);
  });
  it('estimate text: estimate with interval, progress, or none', () => {
    expect(estimateText({ ...base, estimate })).toBe('14 (11–16)');
    expect(estimateText({ ...base, sample: { seed: 1, cellsInSample: 10, cellsChecked: 3, ready: false } })).toBe('3/10 cells');
    expect(estimateText(base)).toBe('no sample');
  });
  it('every shown column has a label and a sentence', () => {
    for (const c of TALLY_COLUMNS.filter((x) => x.inTable || x.inReport)) { expect(c.label.length).toBeGreaterThan(0); expect(c.title.length).toBeGreaterThan(8); }
  });
});
