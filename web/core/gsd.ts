// Ground sampling distance in metres for any supported CRS (geodesic at the scene centre when not metric).
import { WGS84_GEODESIC } from './wgs84-geodesic.ts';
import { crsToLonLat, isMetricProjected, type UserCrsDefs } from './crs.ts';
import { pixelToMap } from './geotransform.ts';
import type { GeoTransform } from './types.ts';

export interface Gsd {
  /** Ground length of one pixel step along a row (column direction), metres. */
  gsdXM: number;
  /** Ground length of one pixel step down a column (row direction), metres. */
  gsdYM: number;
  /** Geometric mean of the two: the single GSD figure seamtally reports. */
  gsdM: number;
}

/**
 * GSD of a raster at pixel position (atXPx, atYPx) (normally the scene centre).
 * Projected CRSs in metres (e.g. UTM): the pixel size of the GeoTransform, as the trade quotes GSD
 * (no scale-factor correction). Geographic or Mercator CRSs: geodesic length on WGS 84 of one pixel step at that
 * position, i.e. metres per degree at the scene centre times degrees per pixel.
 */
export function groundSampleDistance(gt: GeoTransform, epsg: number, atXPx: number, atYPx: number, userDefs?: UserCrsDefs): Gsd {
  let gsdXM: number;
  let gsdYM: number;
  if (isMetricProjected(epsg, userDefs)) {
    gsdXM = Math.hypot(gt[1], gt[4]);
    gsdYM = Math.hypot(gt[2], gt[5]);
  } else {
    const geod = WGS84_GEODESIC;
    const toLonLat = (xPx: number, yPx: number) => crsToLonLat(epsg, pixelToMap(gt, xPx, yPx), userDefs);
    const stepM = (a: readonly [number, number], b: readonly [number, number]) => {
      const pa = toLonLat(a[0], a[1]);
      const pb = toLonLat(b[0], b[1]);
      return geod.Inverse(pa[1], pa[0], pb[1], pb[0]).s12 ?? NaN;
    };
    gsdXM = stepM([atXPx - 0.5, atYPx], [atXPx + 0.5, atYPx]);
    gsdYM = stepM([atXPx, atYPx - 0.5], [atXPx, atYPx + 0.5]);
  }
  return { gsdXM, gsdYM, gsdM: Math.sqrt(gsdXM * gsdYM) };
}
