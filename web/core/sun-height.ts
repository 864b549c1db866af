// How high the sun stood on an acquisition date: its elevation at local solar noon, the highest it reached that day
// at that place (the sun position comes from the suncalc library). Scenes rarely say their acquisition time, so the
// app uses this upper bound: a scene taken that day had the sun at most this high, and long shadows when it is low.
import { getPosition, getTimes } from 'suncalc';
import { createTransform } from './crs.ts';
import { pixelToMap } from './geotransform.ts';
import type { SceneGeoref } from './georef.ts';
import type { LowSunEffect } from './model-contract.ts';

/** The sun's apparent elevation at local solar noon on a calendar date (YYYY-MM-DD) at a place, in degrees. */
export function noonSunElevationDeg(dateIso: string, lonLat: readonly [number, number]): number {
  const m = /^(\d{4})-(\d{2})-(\d{2})/.exec(dateIso);
  if (!m) throw new RangeError(`noonSunElevationDeg needs a date as YYYY-MM-DD, got "${dateIso}".`);
  const [lon, lat] = lonLat;
  if (!(Math.abs(lat) <= 90) || !(Math.abs(lon) <= 180)) throw new RangeError(`noonSunElevationDeg needs lon/lat in degrees, got ${lon}, ${lat}.`);
  // 12:00 local mean time of that calendar day at that longitude, so getTimes picks that day's noon
  const middayMs = Date.UTC(Number(m[1]), Number(m[2]) - 1, Number(m[3]), 12) - (lon / 15) * 3_600_000;
  const noon = getTimes(new Date(middayMs), lat, lon).solarNoon;
  return getPosition(noon, lat, lon).altitude;
}

/**
 * Noon sun elevation on a date at the mean centre of a date's scenes (lon/lat of each centre, averaged); null when
 * there are no scenes, a scene's CRS cannot be turned into lon/lat, or the date has no day (e.g. "unknown").
 */
export function noonSunOverScenes(dateIso: string, georefs: readonly Pick<SceneGeoref, 'epsg' | 'geoTransform' | 'widthPx' | 'heightPx'>[]): number | null {
  if (!georefs.length) return null;
  let lon = 0, lat = 0;
  try {
    for (const g of georefs) {
      const c = createTransform(g.epsg, 4326)(pixelToMap(g.geoTransform, g.widthPx / 2, g.heightPx / 2));
      lon += c[0] / georefs.length; lat += c[1] / georefs.length;
    }
    return noonSunElevationDeg(dateIso, [lon, lat]);
  } catch {
    return null; // a CRS proj4 does not know or a date without a day: no sun figure, no sun note
  }
}

/** What a low sun does to one class's counts, for a date whose noon sun is known. */
export interface LowSunNote {
  className: string;
  noonSunDeg: number;
  /** The model's measured mean signed count error under a low sun, minus that under a high sun, in percent. */
  countBiasPct: number;
  text: string;
}

/** Classes whose counts the model measurably shifts (|bias| ≥ minBiasPct) when the noon sun is below the model's line. */
export function lowSunNotes(noonSunDeg: number | null, effect: LowSunEffect | undefined, minBiasPct = 3): LowSunNote[] {
  if (noonSunDeg === null || !effect || !(noonSunDeg < effect.belowDeg)) return [];
  return Object.entries(effect.countBiasPct)
    .filter(([, b]) => Math.abs(b) >= minBiasPct)
    .map(([className, b]) => ({
      className, noonSunDeg, countBiasPct: b,
      text: `Low sun: at most ${Math.round(noonSunDeg)}° at noon on this date. On low-sun test scenes (below ${effect.belowDeg}°) `
        + `the detector counted ${className} ${b > 0 ? '+' : '−'}${Math.abs(b).toFixed(0)} % ${b > 0 ? 'higher' : 'lower'} than under a high sun`
        + (b > 0 ? ' (long shadows and shaded empty spaces beside objects taken for objects)' : '') + '. Review a sample.',
    }));
}

/** Whether two dates' noon suns fall on either side of the model's low-sun line, for a class it shifts. */
export function sunDiffers(a: number | null, b: number | null, effect: LowSunEffect | undefined, className: string, minBiasPct = 3): boolean {
  if (a === null || b === null || !effect) return false;
  const bias = effect.countBiasPct[className];
  if (bias === undefined || Math.abs(bias) < minBiasPct) return false;
  return (a < effect.belowDeg) !== (b < effect.belowDeg);
}
