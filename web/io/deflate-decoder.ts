// TIFF DEFLATE decoder registered with geotiff.js: the platform's native zlib (DecompressionStream, in browsers,
// workers and Node ≥ 18) instead of geotiff's JavaScript inflate; any stream the native path refuses goes to
// geotiff's own decoder, so damaged data fails exactly as before (geotiff-errors.ts classifies those messages).
import { addDecoder, BaseDecoder } from 'geotiff';
// @ts-expect-error pako ships no type declarations; it is the inflate geotiff's own decoder uses (same version)
import { inflate } from 'pako';

/** Inflate one zlib stream with DecompressionStream('deflate'); rejects on damaged or truncated data. */
export async function inflateNative(input: Uint8Array): Promise<Uint8Array> {
  const ds = new DecompressionStream('deflate');
  const writer = ds.writable.getWriter();
  writer.write(input as Uint8Array<ArrayBuffer>).catch(() => undefined);
  writer.close().catch(() => undefined);
  const reader = ds.readable.getReader();
  const chunks: Uint8Array[] = [];
  let n = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    chunks.push(value);
    n += value.length;
  }
  if (chunks.length === 1) return chunks[0];
  const out = new Uint8Array(n);
  let at = 0;
  for (const c of chunks) { out.set(c, at); at += c.length; }
  return out;
}

const hasNative = typeof DecompressionStream === 'function';

export class NativeDeflateDecoder extends BaseDecoder {
  override async decodeBlock(buffer: ArrayBuffer): Promise<ArrayBuffer> {
    if (hasNative) {
      try {
        const out = await inflateNative(new Uint8Array(buffer));
        return (out.byteOffset === 0 && out.byteLength === out.buffer.byteLength ? out.buffer : out.slice().buffer) as ArrayBuffer;
      } catch { /* damaged: let geotiff's decoder say what it says */ }
    }
    // exactly geotiff's DeflateDecoder.decodeBlock (geotiff 3.0.5 dist-module/compression/deflate.js)
    return (inflate as (b: Uint8Array) => Uint8Array)(new Uint8Array(buffer)).buffer as ArrayBuffer;
  }
}

// TIFF Compression = 8 (Deflate) and 32946 (old Adobe Deflate code). Imported by the scene source.
addDecoder([8, 32946], async () => NativeDeflateDecoder as unknown as typeof BaseDecoder, undefined, false);
