// Comparing dates under different suns: the noon sun of a date's scenes and the weak-comparison flag it raises.
import { describe, it, expect } from 'vitest';
import { compareDates } from '../../../web/app/compare.ts';
import { type DateTally, type TallyRow } from '../../../web/app/tally.ts';
import { noonSunOverScenes } from '../../../web/core/sun-height.ts';
import type { SceneEntry } from '../../../web/app/state.ts';

// A scene centred on UTM zone 32N (EPSG:32632) easting 500 000 m, northing 5 316 000 m: on the zone's central
// meridian 9° E, at about 48.0° N (northing ≈ 0.9996 × meridian arc; proj4 does the real transform).
const scene = { info: { georef: { epsg: 32632, geoTransform: [499_700, 0.3, 0, 5_316_300, 0, -0.3], widthPx: 2000, heightPx: 2000, gsdM: 0.3 } } } as unknown as SceneEntry;

function row(date: string, count: number): TallyRow {
  return {
    aoiId: 'a', aoiName: 'Lot', date, className: 'vehicle', count, detectedCount: count, reviewedCount: 0, areaM2: 1e4, areaHa: 1,
    imagedAreaHa: 1, densityPerHa: count, coverage: 1, gsdM: 0.3, minScore: 0.4, countingRule: 'centre', interval: { lower: 0, upper: 0 }, caveat: null,
  } as TallyRow;
}
function tally(date: string, noonSunDeg: number | null, count: number): DateTally {
  return { dateIso: date, dateConfirmed: true, gsdM: 0.3, sceneNames: ['s'], rows: [row(date, count)], caveats: [], upsampling: null, noonSunDeg, lowSun: [] };
}

describe('the sun of a date', () => {
  it('is the noon sun at the scenes\' centre: 90° − |φ − δ| at 48° N on the solstices (spherical astronomy, common practice)', () => {
    expect(Math.abs(noonSunOverScenes('2024-12-21', [scene.info.georef])! - (90 - 48 - 23.44))).toBeLessThan(0.5);
    expect(Math.abs(noonSunOverScenes('2024-06-20', [scene.info.georef])! - (90 - 48 + 23.44))).toBeLessThan(0.5);
    expect(noonSunOverScenes('2024-06-20', [])).toBeNull();
  });
  it('flags a winter-against-summer comparison for a class the model shifts under a low sun, and says by how much', () => {
    const lowSun = { belowDeg: 32, countBiasPct: { vehicle: 7.7 } };
    const [c] = compareDates(tally('2024-01-10', 20.5, 110), tally('2024-07-10', 63.8, 100), lowSun);
    expect(c.weakReasons.join('; ')).toMatch(/sun height differs \(at most 21° vs 64° at noon\).*\+8 %/);
    const [same] = compareDates(tally('2024-06-10', 63, 110), tally('2024-07-10', 63.8, 100), lowSun);
    expect(same.weakReasons).toEqual([]);
    const [noModel] = compareDates(tally('2024-01-10', 20.5, 110), tally('2024-07-10', 63.8, 100));
    expect(noModel.weakReasons).toEqual([]);
  });
});
