// TIFF header check and translation of geotiff.js failures into typed SeamtallyErrors naming the file.
import { SeamtallyError } from '../core/errors.ts';

/** Throw 'not-tiff' unless the bytes start with a TIFF or BigTIFF header (TIFF 6.0 §2; BigTIFF: version 43). */
export async function checkMagic(head: Uint8Array, name: string): Promise<void> {
  const le = head[0] === 0x49 && head[1] === 0x49;
  const be = head[0] === 0x4d && head[1] === 0x4d;
  const version = le ? head[2] | (head[3] << 8) : be ? (head[2] << 8) | head[3] : -1;
  if (head.length < 8 || !(version === 42 || version === 43)) {
    throw new SeamtallyError('not-tiff', `"${name}" is not a TIFF file (it does not start with a TIFF header): choose a GeoTIFF or COG (.tif).`, { name });
  }
}

/** Largest scene seamtally opens: 10 gigapixels (e.g. 100 000 × 100 000 px, 30 km × 30 km at 0.3 m GSD). */
export const MAX_SCENE_PX = 10_000_000_000;
/** Largest decoded file block (one tile, or one group of strips, all bands): 256 MiB. */
export const MAX_BLOCK_BYTES = 256 * 1024 * 1024;

/** Header sizes checked before any pixel is read, so a file that claims a huge raster never causes a huge allocation. */
export interface RasterSizeClaim {
  widthPx: number;
  heightPx: number;
  bandCount: number;
  bytesPerSample: number;
  /** The file's own tile (or strip: width × rows per strip) size. */
  tileWidthPx: number;
  tileHeightPx: number;
  /** The block seamtally decodes at once: a tile, or the strips grouped into one block. */
  blockWidthPx: number;
  blockHeightPx: number;
}

/** Throw 'too-large' / 'unsupported-raster' when the header's sizes are beyond the documented limits or not sizes at all. */
export function checkRasterSize(c: RasterSizeClaim, name: string): void {
  const dims = [c.widthPx, c.heightPx, c.bandCount, c.tileWidthPx, c.tileHeightPx, c.blockWidthPx, c.blockHeightPx];
  if (!dims.every((v) => Number.isSafeInteger(v) && v > 0)) {
    throw new SeamtallyError('truncated', `"${name}" has a damaged header (its image, band or block sizes are not valid sizes): check it with gdalinfo, or copy the file again.`, { name, ...c });
  }
  if (c.widthPx * c.heightPx > MAX_SCENE_PX) {
    throw new SeamtallyError('too-large', `"${name}" claims ${c.widthPx} × ${c.heightPx} px, but seamtally reads scenes of at most ${MAX_SCENE_PX / 1e9} gigapixels: cut it into smaller scenes (for example gdal_translate -srcwin) and count them as one date.`, { name });
  }
  const blockBytes = c.blockWidthPx * c.blockHeightPx * c.bandCount * c.bytesPerSample;
  if (blockBytes > MAX_BLOCK_BYTES) {
    throw new SeamtallyError('too-large', `"${name}" stores its pixels in blocks of ${c.blockWidthPx} × ${c.blockHeightPx} px (${Math.round(blockBytes / 2 ** 20)} MiB each, at most ${MAX_BLOCK_BYTES / 2 ** 20} MiB are decoded at once): rewrite it tiled, for example gdal_translate -of COG in.tif out.tif.`, { name });
  }
}

const DAMAGED_DATA = /damaged (LZW|DEFLATE)|corrupted code|Invalid LZW|incorrect (header|data|length) check|unknown compression method|invalid (window size|block type|stored block|code lengths|bit length|literal|distance|code)|too many length/i;

/** A typed SeamtallyError (or the AbortError, untouched) for anything geotiff.js or a decoder threw. */
export function classify(err: unknown, name: string, stage: 'open' | 'read'): unknown {
  if (err instanceof SeamtallyError) {
    // name the file in sentences that come from the core (which does not know file names)
    return err.message.includes(`"${name}"`) ? err : new SeamtallyError(err.kind, `"${name}": ${err.message}`, { ...err.detail, name });
  }
  if (err instanceof Error && err.name === 'AbortError') return err;
  const msg = err instanceof Error ? err.message : String(err);
  if (/Invalid byte order|Invalid magic number/i.test(msg)) {
    return new SeamtallyError('not-tiff', `"${name}" is not a TIFF file: choose a GeoTIFF or COG (.tif).`, { name });
  }
  // damaged compressed data: our LZW decoder and bounded inflate (inflate.ts), pako's inflate messages (zlib's), geotiff's own LZW checks
  if (!/identifier/.test(msg) && DAMAGED_DATA.test(msg)) {
    return new SeamtallyError('truncated', `"${name}" is damaged (its compressed pixel data cannot be decoded): copy or download the file again, or check it with gdalinfo -checksum.`, { name });
  }
  if (/geoKey/i.test(msg)) {
    return new SeamtallyError('not-georeferenced', `"${name}" has damaged georeferencing (its GeoKey directory cannot be read): check it with gdalinfo, or georeference it again (for example gdal_translate -a_srs EPSG:32633).`, { name });
  }
  if (/compression|decoder/i.test(msg)) {
    return new SeamtallyError('unsupported-raster', `"${name}" uses a compression seamtally cannot decode (${msg}): rewrite it with gdal_translate -co COMPRESS=DEFLATE.`, { name });
  }
  if (err instanceof RangeError || /out of bounds|offset|ENOENT/i.test(msg)) {
    if (/ENOENT/.test(msg)) return new SeamtallyError('bad-argument', `"${name}" does not exist: check the path.`, { name });
    return new SeamtallyError('truncated', `"${name}" is cut short or damaged (${stage === 'open' ? 'its header' : 'its pixel data'} cannot be read): copy or download the file again.`, { name });
  }
  if (err instanceof TypeError) {
    // geotiff.js tripping over a tag of the wrong type or count: the header is damaged, and its message means nothing to people
    return new SeamtallyError('truncated', `"${name}" is damaged (${stage === 'open' ? 'its header' : 'its pixel data'} cannot be read): copy or download the file again, or check it with gdalinfo.`, { name, cause: msg });
  }
  return new SeamtallyError('unsupported-raster', `"${name}" could not be read as a GeoTIFF (${msg}): check it with gdalinfo, or rewrite it with gdal_translate.`, { name });
}
