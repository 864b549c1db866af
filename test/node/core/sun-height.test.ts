// The noon sun behind the low-sun notes, checked against spherical astronomy, and the notes' rules.
import { describe, it, expect } from 'vitest';
import { lowSunNotes, noonSunElevationDeg, sunDiffers } from '../../../web/core/sun-height.ts';

// At local solar noon the sun's elevation is 90° − |φ − δ| (latitude φ, declination δ; spherical astronomy, common
// practice, no source). At the solstices δ = ± the obliquity of the ecliptic, 23.44° (IAU 2006 value at J2000,
// 23° 26′ 21″; from memory); near the March equinox δ ≈ 0. Refraction adds under 0.1° above 15° elevation, so
// 0.3° tolerance covers it and the hours between the solstice instant and that day's noon.
const OBLIQUITY_DEG = 23.44;
const noonRule = (latDeg: number, declDeg: number) => 90 - Math.abs(latDeg - declDeg);

describe('noonSunElevationDeg', () => {
  it('matches 90° − |φ − δ| at the solstices, north and south, east and west of Greenwich', () => {
    const cases: Array<[string, [number, number], number]> = [
      ['2024-12-21', [0, 51.4769], -OBLIQUITY_DEG], // Greenwich, December solstice: ~15.1°
      ['2024-06-20', [0, 51.4769], OBLIQUITY_DEG], // Greenwich, June solstice: ~62°
      ['2024-06-21', [147.33, -42.88], OBLIQUITY_DEG], // Hobart in its winter: ~23.7°
      ['2024-12-21', [-170, 45], -OBLIQUITY_DEG], // far west: the same calendar day's noon, not the next
      ['2024-12-21', [170, 45], -OBLIQUITY_DEG], // far east
    ];
    for (const [date, lonLat, decl] of cases) {
      expect(noonSunElevationDeg(date, lonLat), `${date} at ${lonLat}`).toBeCloseTo(noonRule(lonLat[1], decl), 0);
      expect(Math.abs(noonSunElevationDeg(date, lonLat) - noonRule(lonLat[1], decl)), `${date} at ${lonLat}`).toBeLessThan(0.3);
    }
  });
  it('puts the sun near the zenith at the equator on the March equinox', () => {
    expect(noonSunElevationDeg('2024-03-20', [0, 0])).toBeGreaterThan(89.5);
  });
  it('reads about 21° at 48° N in mid-January (δ ≈ −21.2° on 15 January, almanac value from memory)', () => {
    expect(Math.abs(noonSunElevationDeg('2024-01-15', [9, 48]) - noonRule(48, -21.2))).toBeLessThan(0.5);
  });
  it('refuses what is not a date or not a place', () => {
    expect(() => noonSunElevationDeg('15/01/2024', [9, 48])).toThrow(/YYYY-MM-DD/);
    expect(() => noonSunElevationDeg('2024-01-15', [500000, 5300000])).toThrow(/lon\/lat/);
  });
});

describe('low-sun notes', () => {
  const effect = { belowDeg: 32, countBiasPct: { vehicle: 7.7, solar_panel: 2.2 } };
  it('name only the classes the model measurably shifts, only below the line', () => {
    const n = lowSunNotes(18.4, effect);
    expect(n.map((x) => x.className)).toEqual(['vehicle']);
    expect(n[0].text).toMatch(/at most 18° at noon/);
    expect(n[0].text).toMatch(/\+8 % higher/);
    expect(lowSunNotes(40, effect)).toEqual([]);
    expect(lowSunNotes(null, effect)).toEqual([]);
    expect(lowSunNotes(10, undefined)).toEqual([]);
  });
  it('flag a comparison only when the two dates fall on either side of the line', () => {
    expect(sunDiffers(18, 55, effect, 'vehicle')).toBe(true);
    expect(sunDiffers(18, 25, effect, 'vehicle')).toBe(false);
    expect(sunDiffers(45, 55, effect, 'vehicle')).toBe(false);
    expect(sunDiffers(18, 55, effect, 'solar_panel')).toBe(false); // 2.2 % is under the 3 % floor
    expect(sunDiffers(null, 55, effect, 'vehicle')).toBe(false);
  });
});
