// Value types shared by every core module: transforms, pixel/map boxes, oriented boxes and detection tables.

/**
 * Affine pixel→map transform in GDAL order: [x0, dxPerCol, dxPerRow, y0, dyPerCol, dyPerRow].
 * (col, row) = (0, 0) is the top-left CORNER of the top-left pixel (PixelIsArea convention, as GDAL reports it).
 */
export type GeoTransform = readonly [number, number, number, number, number, number];

/** Axis-aligned box in pixel space of one raster (half-open: min inclusive, max exclusive for windows). */
export interface PixelBox {
  minXPx: number;
  minYPx: number;
  maxXPx: number;
  maxYPx: number;
}

/** Axis-aligned box in map units of a CRS (metres for projected CRSs, degrees for geographic). */
export interface MapBox {
  minX: number;
  minY: number;
  maxX: number;
  maxY: number;
}

/** [longitude, latitude] in degrees, WGS 84 (RFC 7946 order). */
export type LonLatDeg = readonly [number, number];

/** A point in the map units of a named CRS. */
export type MapXY = readonly [number, number];

/**
 * Oriented rectangle. `lengthM`/`widthM` in the frame's units (metres in ground frames, pixels in pixel frames
 * despite the suffix, see `OrientedBoxPx`), `angleRad` is the direction of the length axis, counter-clockwise
 * from the +x axis of that frame.
 */
export interface OrientedBoxM {
  cxM: number;
  cyM: number;
  lengthM: number;
  widthM: number;
  angleRad: number;
}

/** Oriented rectangle in pixel space (y grows downward; angle measured clockwise-visually from +x). */
export interface OrientedBoxPx {
  cxPx: number;
  cyPx: number;
  lengthPx: number;
  widthPx: number;
  angleRad: number;
}

/** Review state of one detection, carried into every export. */
export type ReviewState = 'unreviewed' | 'accepted' | 'rejected' | 'added';

/**
 * Detections as columns (struct of arrays), so they can cross the worker boundary as transferred buffers.
 * Centres and sizes are in a metric ground frame named by `frameCrs` (an EPSG code string, e.g. "EPSG:32633").
 */
export interface DetectionTable {
  frameCrs: string;
  count: number;
  cxM: Float64Array;
  cyM: Float64Array;
  lengthM: Float32Array;
  widthM: Float32Array;
  angleRad: Float32Array;
  score: Float32Array;
  classIdx: Uint8Array;
  /** Index of the scene (within the run's scene list) the detection came from. */
  sceneIdx: Uint16Array;
  /**
   * The model's feature vector at each detection's peak (row-major, `featureDim` per row), when the model has a
   * `features` output; NaN rows for objects without one (boxes the analyst added). Absent otherwise.
   */
  features?: Float32Array;
  featureDim?: number;
}

/** Allocate an empty table with room for `capacity` rows. */
export function createDetectionTable(frameCrs: string, capacity: number): DetectionTable {
  return {
    frameCrs,
    count: 0,
    cxM: new Float64Array(capacity),
    cyM: new Float64Array(capacity),
    lengthM: new Float32Array(capacity),
    widthM: new Float32Array(capacity),
    angleRad: new Float32Array(capacity),
    score: new Float32Array(capacity),
    classIdx: new Uint8Array(capacity),
    sceneIdx: new Uint16Array(capacity),
  };
}
