// Bounded zlib inflate (TIFF Compression 8 / 32946) for file tiles: the platform's DecompressionStream where it
// exists (pages, workers, Node ≥ 18), fflate otherwise; the output never exceeds the caller's bound, so a
// decompression bomb stops after at most one input piece instead of filling memory. Every failure is an
// Error('damaged DEFLATE data: …'), which geotiff-errors.ts maps to the typed 'truncated' error. Also registered
// with geotiff.js for DEFLATE blocks read through its general path.
import { Unzlib } from 'fflate';
import { addDecoder, BaseDecoder } from 'geotiff';
import { SeamtallyError } from '../core/errors.ts';
import { decodedBlockBytes, type DecoderBlockParams } from './lzw-decoder.ts';

/**
 * A synchronous inflate that returns at most `maxOutBytes` bytes and throws beyond that (e.g. Node's
 * `zlib.inflateSync(bytes, { maxOutputLength })`), registered by a host that has one (the CLI).
 */
export type SyncInflate = (bytes: Uint8Array, maxOutBytes: number) => Uint8Array;

/**
 * Compressed bytes handed to the inflater at a time. zlib expands at most ~1032:1, so output beyond the bound is
 * seen within ~16.5 MiB of it; later pieces are not handed over until the earlier ones are inflated.
 */
const IN_PIECE_BYTES = 16 * 1024;

let syncInflate: SyncInflate | null = null;

/** Use `fn` instead of DecompressionStream (null: back to the default). Hosts call this once at start-up. */
export function setSyncInflate(fn: SyncInflate | null): void {
  syncInflate = fn;
}

/**
 * Inflate a zlib stream (RFC 1950) into at most `maxOutBytes` bytes. Throws Error('damaged DEFLATE data: …') when the
 * stream is invalid or inflates to more than `maxOutBytes`, and SeamtallyError('cancelled') once `signal` aborts.
 * Bytes after the end of the stream are ignored (as zlib, libtiff and pako do).
 */
export async function inflateBounded(bytes: Uint8Array, maxOutBytes: number, signal?: AbortSignal): Promise<Uint8Array> {
  if (!(Number.isSafeInteger(maxOutBytes) && maxOutBytes > 0)) throw new Error(`inflateBounded needs a positive integer bound, got ${maxOutBytes}`);
  throwIfAborted(signal);
  if (syncInflate) {
    let out: Uint8Array;
    try {
      out = syncInflate(bytes, maxOutBytes);
    } catch (err) {
      throw damaged(isOverflow(err) ? overflowMessage(maxOutBytes) : errorText(err));
    }
    if (out.length > maxOutBytes) throw damaged(overflowMessage(maxOutBytes));
    return Object.getPrototypeOf(out) === Uint8Array.prototype ? out : new Uint8Array(out.buffer, out.byteOffset, out.length); // a Buffer: as a plain view
  }
  if (typeof DecompressionStream === 'function') {
    try {
      return await inflateStream(bytes, maxOutBytes, signal);
    } catch (err) {
      if (err instanceof SeamtallyError || (err instanceof Error && err.message.startsWith(DAMAGED))) throw err;
      // the native inflater refused the stream (Chromium rejects bytes after the stream's end, which zlib accepts):
      // fflate decides, with the same bound
    }
  }
  return inflateFflate(bytes, maxOutBytes, signal);
}

const DAMAGED = 'damaged DEFLATE data';
const damaged = (why: string) => new Error(`${DAMAGED}: ${why}`);
const overflowMessage = (maxOutBytes: number) => `it inflates to more than the ${maxOutBytes} bytes of its block`;
const errorText = (err: unknown) => (err instanceof Error ? err.message : String(err));
/** Node's zlib with maxOutputLength throws RangeError ERR_BUFFER_TOO_LARGE when the output would pass the bound. */
const isOverflow = (err: unknown) => err instanceof RangeError && (err as { code?: string }).code === 'ERR_BUFFER_TOO_LARGE';

function throwIfAborted(signal?: AbortSignal): void {
  if (signal?.aborted) throw new SeamtallyError('cancelled', 'The run was cancelled.');
}

async function inflateStream(bytes: Uint8Array, maxOutBytes: number, signal?: AbortSignal): Promise<Uint8Array> {
  // BufferSource excludes shared memory: copy a view of a SharedArrayBuffer
  const input = bytes.buffer instanceof ArrayBuffer ? (bytes as Uint8Array<ArrayBuffer>) : bytes.slice();
  const ds = new DecompressionStream('deflate');
  const writer = ds.writable.getWriter();
  const reader = ds.readable.getReader();
  // feed one piece at a time (a write settles once its piece is inflated), so a bomb is cut off before the rest of
  // its input is inflated: neither Node's nor Chromium's inflater holds back output of a piece it has accepted
  let stopped = false;
  const feeding = (async () => {
    for (let i = 0; i < input.length && !stopped; i += IN_PIECE_BYTES) await writer.write(input.subarray(i, i + IN_PIECE_BYTES));
    if (!stopped) await writer.close();
  })();
  feeding.catch(() => {}); // a failed write also errors the readable side, where it is reported
  const out = new Uint8Array(maxOutBytes);
  let pos = 0;
  try {
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      if (pos + value.length > maxOutBytes) throw damaged(overflowMessage(maxOutBytes));
      out.set(value, pos);
      pos += value.length;
      throwIfAborted(signal);
    }
  } catch (err) {
    stopped = true;
    reader.cancel().catch(() => {});
    writer.abort().catch(() => {});
    throw err;
  }
  return out.subarray(0, pos);
}

async function inflateFflate(bytes: Uint8Array, maxOutBytes: number, signal?: AbortSignal): Promise<Uint8Array> {
  throwIfAborted(signal);
  const out = new Uint8Array(maxOutBytes);
  let pos = 0;
  let overflow = false;
  const inflater = new Unzlib((chunk) => {
    if (overflow) return;
    if (pos + chunk.length > maxOutBytes) { overflow = true; return; }
    out.set(chunk, pos);
    pos += chunk.length;
  });
  try {
    for (let i = 0; i < bytes.length && !overflow; i += IN_PIECE_BYTES) {
      const end = Math.min(bytes.length, i + IN_PIECE_BYTES);
      inflater.push(bytes.subarray(i, end), end === bytes.length);
    }
  } catch (err) {
    // fflate: 'unexpected EOF', 'invalid block type', 'invalid zlib data', ...; data after the end: ignored (as zlib)
    if (!overflow && !/stream finished/.test(errorText(err))) throw damaged(errorText(err));
  }
  if (overflow) throw damaged(overflowMessage(maxOutBytes));
  return out.subarray(0, pos);
}

/**
 * geotiff.js's DEFLATE decoder (pako, unbounded) replaced for the layouts geotiff-blocks.ts leaves to readRasters /
 * readRGB (big-endian samples, palette and YCbCr images, unusual predictors): bounded by the block's size, as LZW is.
 */
export class BoundedDeflateDecoder extends BaseDecoder {
  override async decodeBlock(buffer: ArrayBuffer): Promise<ArrayBuffer> {
    const out = await inflateBounded(new Uint8Array(buffer), decodedBlockBytes((this as unknown as { parameters: DecoderBlockParams }).parameters));
    return out.buffer.slice(out.byteOffset, out.byteOffset + out.length) as ArrayBuffer;
  }
}

// TIFF Compression = 8 (Adobe Deflate) and 32946 (old Deflate). geotiff.js keeps one registry per JS realm.
addDecoder([8, 32946], async () => BoundedDeflateDecoder as unknown as typeof BaseDecoder, undefined, false);
