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
  if (/compression|decoder/i.test(msg)) {
    return new SeamtallyError('unsupported-raster', `"${name}" uses a compression seamtally cannot decode (${msg}): rewrite it with gdal_translate -co COMPRESS=DEFLATE.`, { name });
  }
  if (err instanceof RangeError || /out of bounds|offset|ENOENT/i.test(msg)) {
    if (/ENOENT/.test(msg)) return new SeamtallyError('bad-argument', `"${name}" does not exist: check the path.`, { name });
    return new SeamtallyError('truncated', `"${name}" is cut short or damaged (${stage === 'open' ? 'its header' : 'its pixel data'} cannot be read): copy or download the file again.`, { name });
  }
  return new SeamtallyError('unsupported-raster', `"${name}" could not be read as a GeoTIFF (${msg}): check it with gdalinfo, or rewrite it with gdal_translate.`, { name });
}
