// SceneSource: the one interface every way of reading a scene (File, URL, Node path) goes through.
import type { PixelBox } from './types.ts';
import type { SceneGeoref } from './georef.ts';

/** Typed pixel array of one band, row-major. */
export type SampleArray =
  | Uint8Array
  | Int8Array
  | Uint16Array
  | Int16Array
  | Uint32Array
  | Int32Array
  | Float32Array
  | Float64Array;

export type SampleDtype = 'uint8' | 'int8' | 'uint16' | 'int16' | 'uint32' | 'int32' | 'float32' | 'float64';

/** Size of one resolution level (level 0 = full resolution, 1.. = overviews, coarsest last). */
export interface LevelSize {
  widthPx: number;
  heightPx: number;
}

/** What is known about a scene once its header is read; no pixels. */
export interface SceneInfo {
  /** Display name (file name or URL tail). */
  name: string;
  widthPx: number;
  heightPx: number;
  bandCount: number;
  dtype: SampleDtype;
  /** Bits per sample as stored (8, 16, 32, 64); `significantBits` may say 11 or 12 for 16-bit containers. */
  bitsPerSample: number;
  /** Meaningful bits, from metadata (e.g. NBITS=11) when the file says so; else equal to bitsPerSample. */
  significantBits: number;
  /**
   * The GDAL nodata value, or null when the file has none. With an alpha band or an internal mask (maskKind) the
   * pixels they mark not valid are read as this value: the file's nodata, or 0 when it declares none.
   */
  nodata: number | null;
  /** Where not-valid pixels are marked besides nodata: an alpha band, a GDAL internal mask, or nothing. */
  maskKind?: 'alpha' | 'internal-mask' | null;
  /** Internal tile (or strip block) size of the full-resolution level. */
  tileWidthPx: number;
  tileHeightPx: number;
  /** Sizes of the internal overviews, finest first (empty when none). */
  overviews: LevelSize[];
  /** Band descriptions from metadata (GDAL band DESCRIPTION, or colour interpretation), '' where unknown. */
  bandNames: string[];
  /** TIFF Photometric interpretation (1 = min-is-black, 2 = RGB, 6 = YCbCr), or null. */
  photometric: number | null;
  /** Acquisition date YYYY-MM-DD from TIFF DateTime / metadata, or null. */
  acquisitionDate: string | null;
  georef: SceneGeoref;
}

export interface ReadWindowOptions {
  /** 0 = full resolution (default); k = the k-th overview (SceneInfo.overviews[k - 1]). */
  overviewLevel?: number;
  signal?: AbortSignal;
}

/**
 * Pixels of one window at one level, band-separated. Pixels of the window outside the raster are filled with
 * `nodata` when the scene has one, else 0 (and `outsideFilled` tells whether any were).
 */
export interface RasterWindow {
  /** The requested window in the pixel grid of `level` (may extend past the raster edges). */
  windowPx: PixelBox;
  level: number;
  widthPx: number;
  heightPx: number;
  bandCount: number;
  bitsPerSample: number;
  dtype: SampleDtype;
  nodata: number | null;
  outsideFilled: boolean;
  /** One array per band, each widthPx * heightPx long, row-major. */
  bands: SampleArray[];
}

/** A readable scene. Implementations: web/io/geotiff-source.ts (File/Blob, URL, Node path). */
export interface SceneSource {
  readonly info: SceneInfo;
  readWindow(windowPx: PixelBox, opts?: ReadWindowOptions): Promise<RasterWindow>;
  /** Release file handles (Node) and caches. */
  close(): Promise<void>;
}

/** Width and height of a pixel box. */
export function boxSizePx(box: PixelBox): { widthPx: number; heightPx: number } {
  return { widthPx: box.maxXPx - box.minXPx, heightPx: box.maxYPx - box.minYPx };
}

/** Size of a level (0 = full resolution). Throws naming the level when it does not exist. */
export function levelSize(info: SceneInfo, level: number): LevelSize {
  if (level === 0) return { widthPx: info.widthPx, heightPx: info.heightPx };
  const ov = info.overviews[level - 1];
  if (!ov) throw new Error(`overview level ${level} does not exist (scene has ${info.overviews.length})`);
  return ov;
}

/** The coarsest level whose longer side is still >= minLongSidePx (used for the radiometric stretch). */
export function pickOverviewLevel(info: SceneInfo, minLongSidePx: number): number {
  let best = 0;
  for (let k = 0; k < info.overviews.length; k++) {
    const ov = info.overviews[k];
    if (Math.max(ov.widthPx, ov.heightPx) >= minLongSidePx) best = k + 1;
  }
  return best;
}

/** The typed-array constructor of each dtype: `new SAMPLE_ARRAY[dtype](lengthOrBuffer)`. */
export const SAMPLE_ARRAY: Record<SampleDtype, { new (lengthOrBuffer: number | ArrayBufferLike): SampleArray }> = {
  uint8: Uint8Array, int8: Int8Array, uint16: Uint16Array, int16: Int16Array,
  uint32: Uint32Array, int32: Int32Array, float32: Float32Array, float64: Float64Array,
};

/** Allocate a typed array of a dtype. */
export function allocSamples(dtype: SampleDtype, length: number): SampleArray {
  return new SAMPLE_ARRAY[dtype](length);
}
