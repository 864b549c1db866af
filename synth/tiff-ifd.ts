// TIFF image file directory (IFD) encoding for classic TIFF and BigTIFF (TIFF 6.0 §2, BigTIFF design note).

/** TIFF field types used here (TIFF 6.0 §2 "Types"; LONG8 from the BigTIFF proposal). */
export const TiffType = { ASCII: 2, SHORT: 3, LONG: 4, DOUBLE: 12, LONG8: 16 } as const;
export type TiffTypeCode = (typeof TiffType)[keyof typeof TiffType];

const TYPE_SIZE_B: Record<number, number> = { 2: 1, 3: 2, 4: 4, 12: 8, 16: 8 };

/** One tag of an IFD: numeric values, or an ASCII string (NUL terminator added here). */
export interface TiffTag {
  tag: number;
  type: TiffTypeCode;
  values: readonly number[] | string;
}

/** Classic TIFF (32-bit offsets, 8-byte header) or BigTIFF (64-bit offsets, 16-byte header). */
export interface TiffFlavour {
  big: boolean;
}

export function headerSizeB(f: TiffFlavour): number {
  return f.big ? 16 : 8;
}

/** Little-endian TIFF header whose first-IFD offset points at `firstIfdB`. */
export function encodeHeader(f: TiffFlavour, firstIfdB: number): Uint8Array {
  const out = new Uint8Array(headerSizeB(f));
  const dv = new DataView(out.buffer);
  out[0] = 0x49; out[1] = 0x49; // "II": little-endian
  if (f.big) {
    dv.setUint16(2, 43, true);
    dv.setUint16(4, 8, true); // bytesize of offsets
    dv.setUint16(6, 0, true);
    dv.setBigUint64(8, BigInt(firstIfdB), true);
  } else {
    dv.setUint16(2, 42, true);
    dv.setUint32(4, firstIfdB, true);
  }
  return out;
}

function valueCount(t: TiffTag): number {
  return typeof t.values === 'string' ? t.values.length + 1 : t.values.length;
}

/** Bytes one IFD takes, entries plus out-of-line values (which follow the entries directly). */
export function ifdSizeB(f: TiffFlavour, tags: readonly TiffTag[]): number {
  const entryB = f.big ? 20 : 12;
  const inlineB = f.big ? 8 : 4;
  let size = (f.big ? 8 : 2) + tags.length * entryB + (f.big ? 8 : 4);
  for (const t of tags) {
    const n = valueCount(t) * TYPE_SIZE_B[t.type];
    if (n > inlineB) size += n + (n & 1); // keep word alignment
  }
  return size;
}

function writeValues(dv: DataView, at: number, t: TiffTag): void {
  if (typeof t.values === 'string') {
    for (let i = 0; i < t.values.length; i++) dv.setUint8(at + i, t.values.charCodeAt(i) & 0x7f);
    dv.setUint8(at + t.values.length, 0);
    return;
  }
  const sz = TYPE_SIZE_B[t.type];
  t.values.forEach((v, i) => {
    const o = at + i * sz;
    if (t.type === TiffType.SHORT) dv.setUint16(o, v, true);
    else if (t.type === TiffType.LONG) dv.setUint32(o, v, true);
    else if (t.type === TiffType.DOUBLE) dv.setFloat64(o, v, true);
    else if (t.type === TiffType.LONG8) dv.setBigUint64(o, BigInt(v), true);
  });
}

/**
 * Encode one IFD that will sit at byte `atB` of the file, with `nextIfdB` (0 = last) as its successor.
 * Tags are sorted by number as TIFF requires.
 */
export function encodeIfd(f: TiffFlavour, tags: readonly TiffTag[], atB: number, nextIfdB: number): Uint8Array {
  const sorted = [...tags].sort((a, b) => a.tag - b.tag);
  const out = new Uint8Array(ifdSizeB(f, sorted));
  const dv = new DataView(out.buffer);
  const entryB = f.big ? 20 : 12;
  const inlineB = f.big ? 8 : 4;
  let p = 0;
  if (f.big) { dv.setBigUint64(0, BigInt(sorted.length), true); p = 8; } else { dv.setUint16(0, sorted.length, true); p = 2; }
  let extra = p + sorted.length * entryB + (f.big ? 8 : 4);
  for (const t of sorted) {
    const count = valueCount(t);
    const n = count * TYPE_SIZE_B[t.type];
    dv.setUint16(p, t.tag, true);
    dv.setUint16(p + 2, t.type, true);
    if (f.big) dv.setBigUint64(p + 4, BigInt(count), true); else dv.setUint32(p + 4, count, true);
    const valueAt = p + (f.big ? 12 : 8);
    if (n <= inlineB) {
      writeValues(dv, valueAt, t);
    } else {
      if (f.big) dv.setBigUint64(valueAt, BigInt(atB + extra), true); else dv.setUint32(valueAt, atB + extra, true);
      writeValues(dv, extra, t);
      extra += n + (n & 1);
    }
    p += entryB;
  }
  if (f.big) dv.setBigUint64(p, BigInt(nextIfdB), true); else dv.setUint32(p, nextIfdB, true);
  return out;
}
