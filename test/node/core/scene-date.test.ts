// Dates suggested from file names; calendar validity per the Gregorian calendar (ISO 8601 dates, common practice).
import { describe, expect, it } from 'vitest';
import { dateFromFileName } from '../../../web/core/scene-date.ts';

describe('dateFromFileName', () => {
  it('reads YYYYMMDD, YYYY-MM-DD and YYYY_MM_DD', () => {
    expect(dateFromFileName('ortho_20230614_rgb.tif')).toBe('2023-06-14');
    expect(dateFromFileName('scene-2021-09-30.tif')).toBe('2021-09-30');
    expect(dateFromFileName('tile_2019_02_28_x.tif')).toBe('2019-02-28');
  });
  it('refuses impossible dates, mixed separators and digits that run on', () => {
    expect(dateFromFileName('x_20230230.tif')).toBeNull(); // 30 February
    expect(dateFromFileName('x_2023-06_14.tif')).toBeNull();
    expect(dateFromFileName('id_1202306141.tif')).toBeNull();
    expect(dateFromFileName('lv95_2600000_1200000.tif')).toBeNull();
    expect(dateFromFileName('x_20240229.tif')).toBe('2024-02-29'); // leap year
    expect(dateFromFileName('x_21000101.tif')).toBeNull();
  });
  it('skips a run that is not a date and takes the next one', () => {
    expect(dateFromFileName('a_20231340_b_20231201.tif')).toBe('2023-12-01');
  });
});

describe('an unconfirmed date gets no sun notes from the tally', () => {
  it('tallyDate with dateConfirmed false: noonSunDeg null, no low-sun notes; confirmed: the sun is computed', async () => {
    const { tallyDate } = await import('../../../web/core/tally.ts');
    const { createDetectionTable } = await import('../../../web/core/types.ts');
    const georef = { epsg: 32632, geoTransform: [500000, 0.3, 0, 5300000, 0, -0.3] as [number, number, number, number, number, number], widthPx: 100, heightPx: 100, gsdM: 0.3 };
    const sidecar = { classes: ['vehicle'], inputGsdM: 0.3, lowSun: { belowDeg: 32, countBiasPct: { vehicle: 8 }, source: 'test' } };
    const input = { detections: createDetectionTable('EPSG:32632', 0), aois: [], dateIso: '2024-12-21', scenes: [{ name: 's', georef }], sidecar };
    const confirmed = tallyDate(input, 0.4);
    expect(confirmed.noonSunDeg).not.toBeNull();
    expect(confirmed.lowSun.length).toBe(1); // winter solstice at 47.8° N: noon sun about 19° (below 32°)
    const guessed = tallyDate({ ...input, dateConfirmed: false }, 0.4);
    expect(guessed.noonSunDeg).toBeNull();
    expect(guessed.lowSun).toEqual([]);
    expect(guessed.dateConfirmed).toBe(false);
  });
});
