// A bounded TIFF LZW decoder registered with geotiff.js in place of its own, which loops forever (and then kills
// the process growing an array) on some damaged streams. Same codes as TIFF 6.0 §13 (9–12-bit MSB-first codes,
// ClearCode 256, EndOfInformation 257, the early width change geotiff.js and libtiff use); the output never exceeds
// the block's size and every bad code is an Error naming the damage (geotiff-errors.ts maps it to 'truncated').
import { addDecoder, BaseDecoder } from 'geotiff';

const CLEAR = 256;
const EOI = 257;
const FIRST_FREE = 258;
const MAX_CODES = 4096;
/** Cap when the decoder is not told the block's size (never the case through geotiff.js). */
const FALLBACK_MAX_BYTES = 256 * 1024 * 1024;

/** Decode one LZW block into at most `maxBytes` bytes. Throws Error('damaged LZW data: …') on any invalid code. */
export function decodeLzw(input: Uint8Array, maxBytes: number): Uint8Array {
  const prefix = new Int16Array(MAX_CODES);
  const suffix = new Uint8Array(MAX_CODES);
  const first = new Uint8Array(MAX_CODES);
  const length = new Int32Array(MAX_CODES);
  for (let i = 0; i < 256; i++) { prefix[i] = -1; suffix[i] = i; first[i] = i; length[i] = 1; }
  const out = new Uint8Array(maxBytes);
  const nBits = input.length * 8;
  let bitPos = 0, width = 9, next = FIRST_FREE, old = -1, pos = 0;
  const read = (): number => {
    if (bitPos + width > nBits) return EOI; // ran off the end without an EOI: keep what was decoded
    const a = bitPos >>> 3;
    const off = bitPos & 7; // off + width <= 19 bits: three bytes hold the code
    const word = (input[a] << 16) | ((input[a + 1] ?? 0) << 8) | (input[a + 2] ?? 0);
    bitPos += width;
    return (word >>> (24 - off - width)) & ((1 << width) - 1);
  };
  const emit = (code: number) => {
    const len = length[code];
    if (pos + len > maxBytes) throw new Error(`damaged LZW data: it decodes to more than the ${maxBytes} bytes of its block`);
    for (let i = len - 1, c = code; i >= 0; i--, c = prefix[c]) out[pos + i] = suffix[c];
    pos += len;
  };
  const add = (p: number, ch: number) => {
    if (next >= MAX_CODES) return;
    prefix[next] = p; suffix[next] = ch; first[next] = first[p]; length[next] = length[p] + 1;
    next++;
  };
  for (let code = read(); code !== EOI; code = read()) {
    if (code === CLEAR) {
      next = FIRST_FREE; width = 9;
      do code = read(); while (code === CLEAR);
      if (code === EOI) break;
      if (code > CLEAR) throw new Error(`damaged LZW data: code ${code} right after a clear code`);
      emit(code);
      old = code;
    } else if (code < next) {
      emit(code);
      if (old >= 0) add(old, first[code]);
      old = code;
    } else if (code === next && old >= 0) {
      // the code being defined right now: the previous string plus its own first byte
      const ch = first[old];
      emit(old);
      if (pos + 1 > maxBytes) throw new Error(`damaged LZW data: it decodes to more than the ${maxBytes} bytes of its block`);
      out[pos++] = ch;
      add(old, ch);
      old = code;
    } else {
      throw new Error(`damaged LZW data: code ${code} is not defined yet (next free code ${next})`);
    }
    if (next + 1 >= 1 << width) {
      if (width === 12) old = -1; else width++;
    }
  }
  return out.subarray(0, pos);
}

export interface DecoderBlockParams { tileWidth?: number; tileHeight?: number; planarConfiguration?: number; bitsPerSample?: number | ArrayLike<number> }

/** Bytes one decoded block (LZW or DEFLATE) can hold, from geotiff decoder parameters: row bytes (rounded up) × rows, for all samples (chunky) or one (planar). */
export function decodedBlockBytes(p: DecoderBlockParams): number {
  const bits = p.bitsPerSample === undefined ? [] : typeof p.bitsPerSample === 'number' ? [p.bitsPerSample] : Array.from(p.bitsPerSample);
  const pixelBits = p.planarConfiguration === 2 ? (bits[0] ?? 0) : bits.reduce((a, b) => a + b, 0);
  const w = Number(p.tileWidth), h = Number(p.tileHeight);
  if (!(w > 0 && h > 0 && pixelBits > 0)) return FALLBACK_MAX_BYTES;
  return Math.min(FALLBACK_MAX_BYTES, Math.ceil((w * pixelBits) / 8) * h);
}

export class BoundedLzwDecoder extends BaseDecoder {
  override decodeBlock(buffer: ArrayBuffer): ArrayBuffer {
    const out = decodeLzw(new Uint8Array(buffer), decodedBlockBytes((this as unknown as { parameters: DecoderBlockParams }).parameters));
    return out.buffer.slice(0, out.length) as ArrayBuffer;
  }
}

// TIFF Compression = 5 (LZW). geotiff.js keeps one registry per JS realm; this module is imported by the scene source.
addDecoder(5, async () => BoundedLzwDecoder as unknown as typeof BaseDecoder, undefined, false);
