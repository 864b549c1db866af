// GeoKey directory (GeoTIFF 1.1, OGC 19-008r4) → EPSG code, geographic or projected, raster type.
import { SeamtallyError } from './errors.ts';
import { defineFileCrs } from './crs.ts';
import { userDefinedProjection } from './geokeys-projection.ts';

/** How a pixel's tiepoint relates to the pixel: its corner (area) or its centre (point). GeoTIFF §7.1.2. */
export type RasterType = 'PixelIsArea' | 'PixelIsPoint';

/** GeoKey values by name, as geotiff.js `image.getGeoKeys()` returns them. */
export type GeoKeyValues = Readonly<Record<string, number | string | readonly number[] | ArrayLike<number> | undefined>>;

export interface GeoKeyInfo {
  epsg: number;
  isGeographic: boolean;
  rasterType: RasterType;
}

/** GeoKey ids of the keys seamtally reads or names (GeoTIFF 1.1 Annex). */
export const GEO_KEY_NAMES: Readonly<Record<number, string>> = {
  1024: 'GTModelTypeGeoKey',
  1025: 'GTRasterTypeGeoKey',
  1026: 'GTCitationGeoKey',
  2048: 'GeographicTypeGeoKey',
  2049: 'GeogCitationGeoKey',
  2050: 'GeogGeodeticDatumGeoKey',
  2054: 'GeogAngularUnitsGeoKey',
  3072: 'ProjectedCSTypeGeoKey',
  3073: 'PCSCitationGeoKey',
  3074: 'ProjectionGeoKey',
  3075: 'ProjCoordTransGeoKey',
  3076: 'ProjLinearUnitsGeoKey',
  4096: 'VerticalCSTypeGeoKey',
  // the parameters of a projection a file defines itself (GeoTIFF 1.0 §6.2.3; geokeys-projection.ts reads them)
  2051: 'GeogPrimeMeridianGeoKey', 2056: 'GeogEllipsoidGeoKey', 2057: 'GeogSemiMajorAxisGeoKey',
  2058: 'GeogSemiMinorAxisGeoKey', 2059: 'GeogInvFlatteningGeoKey', 2061: 'GeogPrimeMeridianLongGeoKey',
  2062: 'GeogTOWGS84GeoKey', 3077: 'ProjLinearUnitSizeGeoKey', 3078: 'ProjStdParallel1GeoKey',
  3079: 'ProjStdParallel2GeoKey', 3080: 'ProjNatOriginLongGeoKey', 3081: 'ProjNatOriginLatGeoKey',
  3082: 'ProjFalseEastingGeoKey', 3083: 'ProjFalseNorthingGeoKey', 3084: 'ProjFalseOriginLongGeoKey',
  3085: 'ProjFalseOriginLatGeoKey', 3086: 'ProjFalseOriginEastingGeoKey', 3087: 'ProjFalseOriginNorthingGeoKey',
  3088: 'ProjCenterLongGeoKey', 3089: 'ProjCenterLatGeoKey', 3090: 'ProjCenterEastingGeoKey',
  3091: 'ProjCenterNorthingGeoKey', 3092: 'ProjScaleAtNatOriginGeoKey', 3093: 'ProjScaleAtCenterGeoKey',
  3094: 'ProjAzimuthAngleGeoKey', 3095: 'ProjStraightVertPoleLongGeoKey',
};

const USER_DEFINED = 32767;
const TAG_DOUBLE_PARAMS = 34736;
const TAG_ASCII_PARAMS = 34737;

/**
 * Decode the raw GeoKeyDirectory SHORT array ([version, revision, minor, count, then count × (id, location, n, value)])
 * into named values. Keys stored in GeoDoubleParams / GeoAsciiParams are read from those arrays when given.
 */
export function decodeGeoKeyDirectory(
  directory: ArrayLike<number>,
  doubleParams?: ArrayLike<number>,
  asciiParams?: string,
): Record<string, number | string | number[]> {
  if (directory.length < 4) {
    throw new SeamtallyError('not-georeferenced', 'The GeoKeyDirectory of this file is too short to hold any key: re-export it with georeferencing (for example gdal_translate -a_srs EPSG:32633).');
  }
  const count = directory[3];
  const out: Record<string, number | string | number[]> = {};
  for (let k = 0; k < count; k++) {
    const at = 4 + 4 * k;
    if (at + 3 >= directory.length) break;
    const id = directory[at];
    const location = directory[at + 1];
    const n = directory[at + 2];
    const valueOrOffset = directory[at + 3];
    const name = GEO_KEY_NAMES[id] ?? `GeoKey${id}`;
    if (location === 0) {
      out[name] = valueOrOffset;
    } else if (location === TAG_DOUBLE_PARAMS && doubleParams) {
      const vals = Array.from({ length: n }, (_, i) => doubleParams[valueOrOffset + i]);
      out[name] = n === 1 ? vals[0] : vals;
    } else if (location === TAG_ASCII_PARAMS && asciiParams !== undefined) {
      out[name] = asciiParams.slice(valueOrOffset, valueOrOffset + n).replace(/\|$/, '');
    }
  }
  return out;
}

/** A GeoKey's number (the first, when the key holds an array). */
export function keyNumber(keys: GeoKeyValues, name: string): number | undefined {
  const v = keys[name];
  if (typeof v === 'number') return v;
  if (v && typeof v === 'object' && 'length' in v && v.length > 0 && typeof v[0] === 'number') return v[0];
  return undefined;
}

/** True when `x` looks like a raw GeoKeyDirectory array rather than a name → value map. */
function isRawDirectory(x: unknown): x is ArrayLike<number> {
  return Array.isArray(x) || ArrayBuffer.isView(x);
}

/**
 * Read EPSG code, model type and raster type from GeoKeys (a geotiff.js `getGeoKeys()` object or the raw
 * GeoKeyDirectory array). Missing keys → 'not-georeferenced'; a user-defined projected CRS gets the code of its
 * definition built from the keys (geokeys-projection.ts, crs.ts defineFileCrs); a user-defined geographic or a
 * geocentric CRS → 'unknown-crs'.
 * A missing GTRasterTypeGeoKey means PixelIsArea (GeoTIFF default, as GDAL reads it).
 */
export function readGeoKeys(geoKeys: GeoKeyValues | ArrayLike<number> | null | undefined): GeoKeyInfo {
  const keys: GeoKeyValues = geoKeys == null ? {} : isRawDirectory(geoKeys) ? decodeGeoKeyDirectory(geoKeys) : (geoKeys as GeoKeyValues);
  const modelType = keyNumber(keys, 'GTModelTypeGeoKey');
  const projected = keyNumber(keys, 'ProjectedCSTypeGeoKey');
  const geographic = keyNumber(keys, 'GeographicTypeGeoKey');
  const rasterCode = keyNumber(keys, 'GTRasterTypeGeoKey');
  const rasterType: RasterType = rasterCode === 2 ? 'PixelIsPoint' : 'PixelIsArea';

  if (modelType === undefined && projected === undefined && geographic === undefined) {
    throw new SeamtallyError(
      'not-georeferenced',
      'This file has no GeoKeys, so seamtally cannot tell where it lies on Earth: georeference it first (for example gdal_translate -a_srs EPSG:32633 -a_ullr ... or gdalwarp with ground control points).',
    );
  }
  if (modelType === 3) {
    throw new SeamtallyError('unknown-crs', 'This file uses a geocentric (Earth-centred XYZ) model, which seamtally does not read: reproject it to a map projection, for example gdalwarp -t_srs EPSG:32633 in.tif out.tif.', { modelType });
  }
  const isGeographic = modelType === 2 || (modelType === undefined && projected === undefined);
  const code = isGeographic ? geographic : projected;
  if (code === undefined || code === 0) {
    throw new SeamtallyError(
      'unknown-crs',
      `This file's GeoKeys name no EPSG code for its ${isGeographic ? 'geographic' : 'projected'} coordinate system: reproject it with gdalwarp -t_srs EPSG:32633 (or the UTM zone of your area), or supply a proj4 definition for its CRS.`,
      { modelType },
    );
  }
  if (code === USER_DEFINED && !isGeographic) {
    // a projection defined by its parameters in the file (no EPSG code): build it, or say why not
    return { epsg: defineFileCrs(userDefinedProjection(keys)), isGeographic, rasterType };
  }
  if (code === USER_DEFINED) {
    const citation = keys.GTCitationGeoKey ?? keys.PCSCitationGeoKey ?? keys.GeogCitationGeoKey;
    throw new SeamtallyError(
      'unknown-crs',
      `This file uses a user-defined coordinate system${typeof citation === 'string' ? ` ("${citation}")` : ''} without an EPSG code: reproject it with gdalwarp -t_srs EPSG:32633 (or the UTM zone of your area), or supply a proj4 definition for it.`,
      { modelType, citation },
    );
  }
  return { epsg: code, isGeographic, rasterType };
}
