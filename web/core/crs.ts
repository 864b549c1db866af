// CRS definitions: the EPSG registry (every 2D geographic and projected CRS, from the npm package epsg-index,
// generated into epsg-registry.generated.ts), definitions the user or a file supplies, cached transformers, and the
// metric ground frame.
import proj4 from 'proj4';
import { SeamtallyError } from './errors.ts';
import { EPSG_NEEDS_GRID, EPSG_PROJ4 } from './epsg-registry.generated.ts';
import { fnv1a32 } from './seeded-random.ts';
import type { LonLatDeg, MapXY } from './types.ts';

/** Extra CRS definitions supplied by the user or built from a file's GeoKeys: code → proj4 string or WKT. */
export type UserCrsDefs = Readonly<Record<number, string>>;

type XYFn = (xy: MapXY) => MapXY;

/** Codes from here up name CRSs a file defines itself (GeoKeys), not EPSG codes. */
const FILE_CRS_BASE = 1_000_000;
// Content-addressed: the code is a hash of the definition, so the page, its workers and the CLI give the same CRS the
// same code without talking to each other (a memo of pure values, not shared mutable state).
const fileDefinitions = new Map<number, string>();

/** The code under which a CRS defined by a file (proj4 string) is known; the same definition always gets the same code. */
export function defineFileCrs(proj4Def: string): number {
  const code = FILE_CRS_BASE + (fnv1a32(proj4Def) % 8_000_000);
  fileDefinitions.set(code, proj4Def);
  return code;
}

/** True for a code made by defineFileCrs (a CRS defined in a file's GeoKeys, not in the EPSG registry). */
export function isFileDefinedCrs(code: number): boolean {
  return code >= FILE_CRS_BASE;
}

/** The WGS 84 / ETRS89 / NAD83 UTM zones by formula, for zone codes the package lacks (e.g. EPSG:25838). */
function utmByFormula(epsg: number): string | undefined {
  if (epsg >= 32601 && epsg <= 32660) return `+proj=utm +zone=${epsg - 32600} +datum=WGS84 +units=m`;
  if (epsg >= 32701 && epsg <= 32760) return `+proj=utm +zone=${epsg - 32700} +south +datum=WGS84 +units=m`;
  if (epsg >= 25828 && epsg <= 25838) return `+proj=utm +zone=${epsg - 25800} +ellps=GRS80 +towgs84=0,0,0,0,0,0,0 +units=m`;
  if (epsg >= 26901 && epsg <= 26923) return `+proj=utm +zone=${epsg - 26900} +datum=NAD83 +units=m`;
  return undefined;
}

/** proj4 definition of an EPSG code from the registry (or of a file-defined CRS), or undefined. */
function builtInDefinition(epsg: number): string | undefined {
  return EPSG_PROJ4[epsg] ?? utmByFormula(epsg) ?? fileDefinitions.get(epsg);
}

/** The proj4 definition for `epsg` (user definitions win over the registry). Unknown code → 'unknown-crs'. */
export function crsDefinition(epsg: number, userDefs?: UserCrsDefs): string {
  const def = userDefs?.[epsg] ?? builtInDefinition(epsg);
  if (def === undefined) {
    const grid = EPSG_NEEDS_GRID[epsg];
    throw new SeamtallyError(
      'unknown-crs',
      grid
        ? `EPSG:${epsg} is defined through the datum grid ${grid}, which seamtally does not carry, so it cannot place this scene on the map accurately: reproject the scene with gdalwarp -t_srs EPSG:4326 or its UTM zone (GDAL applies the grid), or supply a proj4 definition for EPSG:${epsg} with a +towgs84 shift you trust.`
        : `seamtally has no definition for EPSG:${epsg}: it is not a 2D geographic or projected CRS of the EPSG registry. Reproject the scene with gdalwarp -t_srs EPSG:326NN (your UTM zone), or supply a proj4 definition for it (its text from "gdalsrsinfo -o proj4 EPSG:${epsg}").`,
      { epsg },
    );
  }
  return def;
}

/** True when `epsg` has a definition (built in or in `userDefs`). */
export function isCrsKnown(epsg: number, userDefs?: UserCrsDefs): boolean {
  return userDefs?.[epsg] !== undefined || builtInDefinition(epsg) !== undefined;
}

/** True when the CRS is geographic (longitude/latitude in degrees). */
export function isGeographicCrs(epsg: number, userDefs?: UserCrsDefs): boolean {
  const def = crsDefinition(epsg, userDefs);
  return /\+proj=(longlat|latlong|lonlat|latlon)\b/.test(def) || /^\s*GEOG(CS|CRS)\[/i.test(def);
}

// Cache of proj4 converters keyed by the two definition strings (a cache, not a registry: no behaviour depends on it).
const converterCache = new Map<string, XYFn>();

/** A function mapping (x, y) in `fromEpsg` to (x, y) in `toEpsg` (lon/lat order for geographic CRSs). */
export function createTransform(fromEpsg: number, toEpsg: number, userDefs?: UserCrsDefs): XYFn {
  if (fromEpsg === toEpsg && userDefs?.[fromEpsg] === undefined) return (xy) => xy;
  const fromDef = crsDefinition(fromEpsg, userDefs);
  const toDef = crsDefinition(toEpsg, userDefs);
  if (fromDef === toDef) return (xy) => xy;
  const key = `${fromDef}\n${toDef}`;
  let fn = converterCache.get(key);
  if (!fn) {
    let conv: proj4.Converter;
    try {
      conv = proj4(fromDef, toDef);
    } catch (err) {
      throw new SeamtallyError('unknown-crs', `The definition given for EPSG:${fromEpsg} or EPSG:${toEpsg} could not be read by proj4 (${String(err)}): check the proj4 string, e.g. from "gdalsrsinfo -o proj4".`);
    }
    fn = (xy) => {
      const out = conv.forward([xy[0], xy[1]]);
      return [out[0], out[1]];
    };
    converterCache.set(key, fn);
  }
  return fn;
}

/** WGS 84 lon/lat → coordinates in `epsg`. */
export function lonLatToCrs(epsg: number, lonLat: LonLatDeg, userDefs?: UserCrsDefs): MapXY {
  return createTransform(4326, epsg, userDefs)(lonLat);
}

/** Coordinates in `epsg` → WGS 84 lon/lat. */
export function crsToLonLat(epsg: number, xy: MapXY, userDefs?: UserCrsDefs): LonLatDeg {
  return createTransform(epsg, 4326, userDefs)(xy);
}

/**
 * WGS 84 UTM zone EPSG code (326zz north, 327zz south) for a position, with the Norway (32V) and Svalbard (31X–37X)
 * exceptions of the UTM grid. Longitude is wrapped into [-180, 180).
 */
export function utmEpsgForLonLat(lonDeg: number, latDeg: number): number {
  if (!Number.isFinite(lonDeg) || !Number.isFinite(latDeg) || Math.abs(latDeg) > 90) {
    throw new Error(`utmEpsgForLonLat: bad position lon=${lonDeg} lat=${latDeg}`);
  }
  const lon = ((((lonDeg + 180) % 360) + 360) % 360) - 180;
  let zone = Math.floor((lon + 180) / 6) + 1;
  if (zone > 60) zone = 60;
  if (latDeg >= 56 && latDeg < 64 && lon >= 3 && lon < 12) zone = 32;
  if (latDeg >= 72 && latDeg < 84) {
    if (lon >= 0 && lon < 9) zone = 31;
    else if (lon >= 9 && lon < 21) zone = 33;
    else if (lon >= 21 && lon < 33) zone = 35;
    else if (lon >= 33 && lon < 42) zone = 37;
  }
  return (latDeg >= 0 ? 32600 : 32700) + zone;
}

/** True when the CRS is projected with metre units and no large scale distortion (i.e. not Mercator). */
export function isMetricProjected(epsg: number, userDefs?: UserCrsDefs): boolean {
  const def = crsDefinition(epsg, userDefs);
  if (!def.includes('+proj=')) return false; // WKT: do not guess
  if (isGeographicCrs(epsg, userDefs)) return false;
  if (/\+proj=(merc|webmerc|geocent)\b/.test(def)) return false;
  const units = /\+units=(\S+)/.exec(def)?.[1];
  const toMeter = /\+to_meter=(\S+)/.exec(def)?.[1];
  if (toMeter !== undefined && Number(toMeter) !== 1) return false;
  return units === undefined || units === 'm';
}

/**
 * The metric ground frame in which detections of a scene are merged and measured: the scene's own CRS when it is
 * projected in metres and in the EPSG registry, otherwise the WGS 84 UTM zone of the scene centre (exports name
 * their frame by EPSG code, so a CRS defined only inside a file is never the frame).
 */
export function metricFrameEpsg(epsg: number, centreLonLat: LonLatDeg, userDefs?: UserCrsDefs): number {
  if (isMetricProjected(epsg, userDefs) && !isFileDefinedCrs(epsg)) return epsg;
  return utmEpsgForLonLat(centreLonLat[0], centreLonLat[1]);
}

/** "EPSG:32633" ↔ 32633 (the form `DetectionTable.frameCrs` uses). */
export function epsgName(epsg: number): string {
  return `EPSG:${epsg}`;
}

export function parseEpsgName(name: string): number {
  const m = /^EPSG:(\d+)$/i.exec(name.trim());
  if (!m) throw new SeamtallyError('unknown-crs', `"${name}" is not a CRS name of the form EPSG:NNNN: give the EPSG code, e.g. EPSG:32633.`);
  return Number(m[1]);
}
