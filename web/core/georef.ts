// SceneGeoref: size, CRS, GeoTransform, GSD and lon/lat footprint of one scene, from tag values alone.
import { crsDefinition, crsToLonLat, type UserCrsDefs } from './crs.ts';
import { SeamtallyError } from './errors.ts';
import { readGeoKeys, type GeoKeyValues, type RasterType } from './geokeys.ts';
import { geoTransformFromTags, pixelToMap, type GeoTiffTags, type GeoTransformOptions } from './geotransform.ts';
import { groundSampleDistance } from './gsd.ts';
import type { GeoTransform, LonLatDeg } from './types.ts';

export interface SceneGeoref {
  widthPx: number;
  heightPx: number;
  epsg: number;
  isGeographic: boolean;
  geoTransform: GeoTransform;
  rasterType: RasterType;
  /** Ground sampling distance at the scene centre, metres (see gsd.ts). */
  gsdM: number;
  centreLonLat: LonLatDeg;
  /** Closed, counter-clockwise lon/lat ring around the raster's outer edge (each side densified). */
  footprintLonLat: LonLatDeg[];
}

export interface GeorefInput {
  widthPx: number;
  heightPx: number;
  tags: GeoTiffTags;
  /** geotiff.js `image.getGeoKeys()` or the raw GeoKeyDirectory array. */
  geoKeys: GeoKeyValues | ArrayLike<number> | null | undefined;
}

export interface GeorefOptions extends GeoTransformOptions {
  userDefs?: UserCrsDefs;
  /** Points per footprint side (default 8), so curved edges in lon/lat stay right. */
  footprintPointsPerSide?: number;
}

/** Build the georeferencing of a scene. Throws SeamtallyError ('not-georeferenced', 'unknown-crs', …). */
export function sceneGeoref(input: GeorefInput, options: GeorefOptions = {}): SceneGeoref {
  const { widthPx, heightPx } = input;
  if (!(widthPx > 0 && heightPx > 0)) throw new Error(`sceneGeoref: bad raster size ${widthPx}×${heightPx}`);
  const noTags = !input.tags.modelTransformation && !input.tags.modelTiepoint;
  if (noTags) {
    throw new SeamtallyError(
      'not-georeferenced',
      'This file has no georeferencing, so seamtally cannot place it on a map or measure areas: georeference it first (for example gdal_translate -a_srs EPSG:32633 -a_ullr ULX ULY LRX LRY in.tif out.tif).',
    );
  }
  const keys = readGeoKeys(input.geoKeys);
  crsDefinition(keys.epsg, options.userDefs); // unknown code → 'unknown-crs' saying how to supply a definition
  const gt = geoTransformFromTags(input.tags, keys.rasterType, options);
  const toLonLat = (xPx: number, yPx: number): LonLatDeg => crsToLonLat(keys.epsg, pixelToMap(gt, xPx, yPx), options.userDefs);
  const centreLonLat = toLonLat(widthPx / 2, heightPx / 2);
  if (!Number.isFinite(centreLonLat[0]) || !Number.isFinite(centreLonLat[1])) {
    throw new SeamtallyError('not-georeferenced', `This scene's centre does not map to a valid longitude/latitude in EPSG:${keys.epsg}: check its CRS and georeferencing with gdalinfo.`);
  }
  const gsd = groundSampleDistance(gt, keys.epsg, widthPx / 2, heightPx / 2, options.userDefs);
  const n = Math.max(1, Math.floor(options.footprintPointsPerSide ?? 8));
  const ring: LonLatDeg[] = [];
  // Pixel space has y down, so walking top-left → bottom-left → bottom-right → top-right is counter-clockwise on a
  // north-up map; check with the shoelace sign below and reverse for mirrored transforms.
  const sides: [number, number, number, number][] = [
    [0, 0, 0, heightPx],
    [0, heightPx, widthPx, heightPx],
    [widthPx, heightPx, widthPx, 0],
    [widthPx, 0, 0, 0],
  ];
  for (const [x0, y0, x1, y1] of sides) {
    for (let i = 0; i < n; i++) ring.push(toLonLat(x0 + ((x1 - x0) * i) / n, y0 + ((y1 - y0) * i) / n));
  }
  let twice = 0;
  for (let i = 0; i < ring.length; i++) {
    const a = ring[i];
    const b = ring[(i + 1) % ring.length];
    twice += a[0] * b[1] - b[0] * a[1];
  }
  if (twice < 0) ring.reverse();
  ring.push(ring[0]);
  return {
    widthPx,
    heightPx,
    epsg: keys.epsg,
    isGeographic: keys.isGeographic,
    geoTransform: gt,
    rasterType: keys.rasterType,
    gsdM: gsd.gsdM,
    centreLonLat,
    footprintLonLat: ring,
  };
}
