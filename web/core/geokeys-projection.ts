// A projected CRS defined in a file's own GeoKeys (ProjectedCSTypeGeoKey = 32767, "user-defined") → a proj4 string.
// Key names, coordinate-transformation codes and unit codes: GeoTIFF 1.0 §6.3.3 / OGC 19-008r4 Annex (from memory;
// the test builds such files with GDAL and checks the result against gdaltransform).
import { SeamtallyError } from './errors.ts';
import { EPSG_PROJ4 } from './epsg-registry.generated.ts';
import { keyNumber as num, type GeoKeyValues } from './geokeys.ts';

/** EPSG ellipsoid codes → proj4 ellipsoid names (EPSG registry; the common ones). */
const ELLIPSOIDS: Readonly<Record<number, string>> = {
  7030: 'WGS84', 7019: 'GRS80', 7004: 'bessel', 7001: 'airy', 7002: 'mod_airy', 7008: 'clrk66', 7012: 'clrk80',
  7022: 'intl', 7024: 'krass', 7043: 'WGS72',
};
/** Geodetic datums that coincide with WGS 84 at the metre level (WGS 84, ETRS89, NAD83, GDA94, GDA2020, NZGD2000). */
const WGS84_LIKE_DATUMS = new Set([6326, 6258, 6269, 6283, 7844, 6167]);

const USER_DEFINED = 32767;


/** The +datum / +ellps / +towgs84 part of the definition from the geographic keys. */
function geodeticPart(keys: GeoKeyValues): string {
  const geog = num(keys, 'GeographicTypeGeoKey');
  if (geog !== undefined && geog !== USER_DEFINED) {
    const def = EPSG_PROJ4[geog];
    if (def) return def.split(/\s+/).filter((t) => /^\+(datum|ellps|towgs84|a|b|rf|pm)=/.test(t)).join(' ');
  }
  const towgs = keys.GeogTOWGS84GeoKey;
  const shift = towgs && typeof towgs === 'object' && 'length' in towgs ? ` +towgs84=${Array.from(towgs as ArrayLike<number>).join(',')}` : '';
  const datum = num(keys, 'GeogGeodeticDatumGeoKey');
  const ell = num(keys, 'GeogEllipsoidGeoKey');
  const a = num(keys, 'GeogSemiMajorAxisGeoKey');
  const b = num(keys, 'GeogSemiMinorAxisGeoKey');
  const rf = num(keys, 'GeogInvFlatteningGeoKey');
  const toWgs = shift || (datum !== undefined && WGS84_LIKE_DATUMS.has(datum) ? ' +towgs84=0,0,0,0,0,0,0' : '');
  if (ell !== undefined && ELLIPSOIDS[ell]) return `+ellps=${ELLIPSOIDS[ell]}${toWgs}`;
  if (a !== undefined && rf !== undefined) return `+a=${a} +rf=${rf}${toWgs}`;
  if (a !== undefined && b !== undefined) return `+a=${a} +b=${b}${toWgs}`;
  if (datum !== undefined && WGS84_LIKE_DATUMS.has(datum)) return '+datum=WGS84';
  throw new SeamtallyError('unknown-crs', 'This file defines its own map projection but not the ellipsoid it rests on: reproject it with gdalwarp -t_srs EPSG:32633 (or the UTM zone of your area), or supply a proj4 definition for it.');
}

/**
 * The +units / +to_meter part from ProjLinearUnitsGeoKey (9001 metre, 9002 international foot, 9003 US survey foot)
 * and metres per unit (GeoKeys give false eastings in the projection's unit; proj4's +x_0 is in metres).
 */
function unitPart(keys: GeoKeyValues): { text: string; metresPerUnit: number } {
  const u = num(keys, 'ProjLinearUnitsGeoKey');
  if (u === undefined || u === 9001) return { text: '+units=m', metresPerUnit: 1 };
  if (u === 9002) return { text: '+units=ft', metresPerUnit: 0.3048 };
  if (u === 9003) return { text: '+units=us-ft', metresPerUnit: 1200 / 3937 };
  const size = num(keys, 'ProjLinearUnitSizeGeoKey');
  if (u === USER_DEFINED && size !== undefined && size > 0) return { text: `+to_meter=${size}`, metresPerUnit: size };
  throw new SeamtallyError('unknown-crs', `This file's map projection uses linear unit code ${u}, which seamtally does not know: reproject it to metres with gdalwarp -t_srs EPSG:32633 (or the UTM zone of your area).`);
}

/**
 * proj4 definition of a user-defined projected CRS from GeoKeys: Transverse Mercator, Lambert conformal conic (1 and
 * 2 standard parallels), Lambert azimuthal equal-area, Albers equal-area, Mercator, oblique stereographic. Anything
 * else → 'unknown-crs' with what to do.
 */
export function userDefinedProjection(keys: GeoKeyValues): string {
  const ct = num(keys, 'ProjCoordTransGeoKey');
  const g = (name: string, fallback?: number): number => {
    const v = num(keys, name) ?? fallback;
    if (v === undefined) throw new SeamtallyError('unknown-crs', `This file defines its own map projection but lacks ${name}: reproject it with gdalwarp -t_srs EPSG:32633 (or the UTM zone of your area).`);
    return v;
  };
  const fe = () => num(keys, 'ProjFalseEastingGeoKey') ?? num(keys, 'ProjFalseOriginEastingGeoKey') ?? num(keys, 'ProjCenterEastingGeoKey') ?? 0;
  const fn = () => num(keys, 'ProjFalseNorthingGeoKey') ?? num(keys, 'ProjFalseOriginNorthingGeoKey') ?? num(keys, 'ProjCenterNorthingGeoKey') ?? 0;
  const lat0 = () => num(keys, 'ProjNatOriginLatGeoKey') ?? num(keys, 'ProjFalseOriginLatGeoKey') ?? num(keys, 'ProjCenterLatGeoKey') ?? 0;
  const lon0 = () => num(keys, 'ProjNatOriginLongGeoKey') ?? num(keys, 'ProjFalseOriginLongGeoKey') ?? num(keys, 'ProjCenterLongGeoKey') ?? 0;
  const k0 = () => num(keys, 'ProjScaleAtNatOriginGeoKey') ?? num(keys, 'ProjScaleAtCenterGeoKey') ?? 1;
  let proj: string;
  switch (ct) {
    case 1: proj = `+proj=tmerc +lat_0=${lat0()} +lon_0=${lon0()} +k=${k0()}`; break;
    case 7: proj = `+proj=merc +lon_0=${lon0()} +k=${k0()}`; break;
    case 8: proj = `+proj=lcc +lat_1=${g('ProjStdParallel1GeoKey')} +lat_2=${g('ProjStdParallel2GeoKey')} +lat_0=${lat0()} +lon_0=${lon0()}`; break;
    case 9: proj = `+proj=lcc +lat_1=${lat0()} +lat_0=${lat0()} +lon_0=${lon0()} +k_0=${k0()}`; break;
    case 10: proj = `+proj=laea +lat_0=${lat0()} +lon_0=${lon0()}`; break;
    case 11: proj = `+proj=aea +lat_1=${g('ProjStdParallel1GeoKey')} +lat_2=${g('ProjStdParallel2GeoKey')} +lat_0=${lat0()} +lon_0=${lon0()}`; break;
    case 16: proj = `+proj=sterea +lat_0=${lat0()} +lon_0=${lon0()} +k=${k0()}`; break;
    default:
      throw new SeamtallyError('unknown-crs', `This file defines its own map projection${typeof keys.GTCitationGeoKey === 'string' ? ` ("${keys.GTCitationGeoKey}")` : ''} (GeoTIFF coordinate transformation code ${ct ?? 'missing'}), which seamtally does not build: reproject it with gdalwarp -t_srs EPSG:32633 (or the UTM zone of your area), or supply a proj4 definition for it.`, { coordTrans: ct ?? null });
  }
  const unit = unitPart(keys);
  const m = (v: number) => Math.round(v * unit.metresPerUnit * 1e6) / 1e6;
  return `${proj} +x_0=${m(fe())} +y_0=${m(fn())} ${geodeticPart(keys)} ${unit.text}`;
}
