// GeoTIFF tags → GDAL-order GeoTransform (with GDAL's half-pixel shift for PixelIsPoint), and pixel ↔ map.
import { SeamtallyError } from './errors.ts';
import type { RasterType } from './geokeys.ts';
import type { GeoTransform, MapBox, MapXY, PixelBox } from './types.ts';

/** The three georeferencing tags of a GeoTIFF (values as geotiff.js `fileDirectory.getValue(name)` returns them). */
export interface GeoTiffTags {
  /** ModelPixelScaleTag (33550): [scaleX, scaleY, scaleZ]. */
  modelPixelScale?: ArrayLike<number> | null;
  /** ModelTiepointTag (33922): [I, J, K, X, Y, Z] × n. */
  modelTiepoint?: ArrayLike<number> | null;
  /** ModelTransformationTag (34264): 4 × 4 row-major matrix. */
  modelTransformation?: ArrayLike<number> | null;
}

export interface GeoTransformOptions {
  /**
   * Like GDAL's GTIFF_POINT_GEO_IGNORE=TRUE: do not shift PixelIsPoint rasters by half a pixel.
   * Default false (GDAL's default: the tiepoint is the pixel centre, so the corner is half a pixel up-left).
   */
  pointGeoIgnore?: boolean;
}

/**
 * Build the GeoTransform from the tags: ModelTransformation if present, else one tiepoint + pixel scale.
 * Several tiepoints without a scale are ground control points, which seamtally does not fit: the user must warp.
 */
export function geoTransformFromTags(tags: GeoTiffTags, rasterType: RasterType, options: GeoTransformOptions = {}): GeoTransform {
  const m = tags.modelTransformation;
  const tie = tags.modelTiepoint;
  const scale = tags.modelPixelScale;
  let gt: [number, number, number, number, number, number];
  if (m && m.length >= 16) {
    gt = [m[3], m[0], m[1], m[7], m[4], m[5]];
  } else if (tie && tie.length >= 6 && scale && scale.length >= 2) {
    if (tie.length > 6) {
      throw new SeamtallyError('unsupported-raster', 'This file has a pixel scale and several tiepoints; seamtally reads only one: rewrite it with gdalwarp -t_srs EPSG:32633 (or your UTM zone).');
    }
    const sx = scale[0];
    const sy = scale[1];
    gt = [tie[3] - tie[0] * sx, sx, 0, tie[4] + tie[1] * sy, 0, -sy];
  } else if (tie && tie.length >= 6) {
    throw new SeamtallyError(
      'unsupported-raster',
      'This file is georeferenced by ground control points only, which seamtally does not fit: warp it first, for example gdalwarp -t_srs EPSG:32633 -r bilinear in.tif out.tif.',
    );
  } else {
    throw new SeamtallyError(
      'not-georeferenced',
      'This file has no georeferencing tags (ModelPixelScale + ModelTiepoint or ModelTransformation): georeference it first, for example gdal_translate -a_srs EPSG:32633 -a_ullr ULX ULY LRX LRY in.tif out.tif.',
    );
  }
  if (!gt.every(Number.isFinite) || gt[1] * gt[5] - gt[2] * gt[4] === 0) {
    throw new SeamtallyError('not-georeferenced', `This file's georeferencing is degenerate (GeoTransform ${gt.join(', ')}): fix or re-export it with gdal_translate -a_ullr.`);
  }
  if (rasterType === 'PixelIsPoint' && !options.pointGeoIgnore) {
    gt[0] -= 0.5 * gt[1] + 0.5 * gt[2];
    gt[3] -= 0.5 * gt[4] + 0.5 * gt[5];
  }
  return gt;
}

/** Map coordinates of pixel position (xPx, yPx); (0, 0) is the top-left corner of the top-left pixel. */
export function pixelToMap(gt: GeoTransform, xPx: number, yPx: number): MapXY {
  return [gt[0] + xPx * gt[1] + yPx * gt[2], gt[3] + xPx * gt[4] + yPx * gt[5]];
}

/** Inverse GeoTransform (map → pixel), like GDALInvGeoTransform. Throws on a singular transform. */
export function invertGeoTransform(gt: GeoTransform): GeoTransform {
  const det = gt[1] * gt[5] - gt[2] * gt[4];
  if (det === 0 || !Number.isFinite(det)) throw new Error(`GeoTransform ${gt.join(',')} is not invertible`);
  const inv = 1 / det;
  return [
    (gt[2] * gt[3] - gt[0] * gt[5]) * inv,
    gt[5] * inv,
    -gt[2] * inv,
    (-gt[1] * gt[3] + gt[0] * gt[4]) * inv,
    -gt[4] * inv,
    gt[1] * inv,
  ];
}

/** Pixel position (xPx, yPx) of map coordinates (x, y). Pass a precomputed inverse for speed in loops. */
export function mapToPixel(gt: GeoTransform, x: number, y: number, inverse: GeoTransform = invertGeoTransform(gt)): readonly [number, number] {
  return [inverse[0] + x * inverse[1] + y * inverse[2], inverse[3] + x * inverse[4] + y * inverse[5]];
}

/** Corners and centre of a raster, named as `gdalinfo -json` cornerCoordinates names them. */
export interface CornerCoordinates {
  upperLeft: MapXY;
  lowerLeft: MapXY;
  lowerRight: MapXY;
  upperRight: MapXY;
  center: MapXY;
}

export function cornerCoordinates(gt: GeoTransform, widthPx: number, heightPx: number): CornerCoordinates {
  return {
    upperLeft: pixelToMap(gt, 0, 0),
    lowerLeft: pixelToMap(gt, 0, heightPx),
    lowerRight: pixelToMap(gt, widthPx, heightPx),
    upperRight: pixelToMap(gt, widthPx, 0),
    center: pixelToMap(gt, widthPx / 2, heightPx / 2),
  };
}

/** Map-space bounding box of a pixel box (exact for rotated transforms: box of the four mapped corners). */
export function pixelBoxToMapBox(gt: GeoTransform, box: PixelBox): MapBox {
  const pts = [
    pixelToMap(gt, box.minXPx, box.minYPx),
    pixelToMap(gt, box.maxXPx, box.minYPx),
    pixelToMap(gt, box.maxXPx, box.maxYPx),
    pixelToMap(gt, box.minXPx, box.maxYPx),
  ];
  return {
    minX: Math.min(...pts.map((p) => p[0])),
    minY: Math.min(...pts.map((p) => p[1])),
    maxX: Math.max(...pts.map((p) => p[0])),
    maxY: Math.max(...pts.map((p) => p[1])),
  };
}

/** Pixel-space bounding box (fractional) of a map box. */
export function mapBoxToPixelBox(gt: GeoTransform, box: MapBox): PixelBox {
  const inv = invertGeoTransform(gt);
  const pts = [
    mapToPixel(gt, box.minX, box.minY, inv),
    mapToPixel(gt, box.maxX, box.minY, inv),
    mapToPixel(gt, box.maxX, box.maxY, inv),
    mapToPixel(gt, box.minX, box.maxY, inv),
  ];
  return {
    minXPx: Math.min(...pts.map((p) => p[0])),
    minYPx: Math.min(...pts.map((p) => p[1])),
    maxXPx: Math.max(...pts.map((p) => p[0])),
    maxYPx: Math.max(...pts.map((p) => p[1])),
  };
}
