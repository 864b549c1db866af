// Random mutations of a TIFF's first KB for the fuzz test: bit flips, random bytes, interesting values written into
// IFD entry fields (type, count, value/offset) or anywhere, a cut, a zeroed run. Deterministic for a given PRNG.
import { ifdEntries } from '../../fixtures/bad-input-assets.ts';
import type { Rng } from './harness.ts';

const HEAD_BYTES = 4096;
const INTERESTING = [0, 1, 2, 3, 7, 8, 16, 255, 256, 0x7fff, 0x8000, 0xffff, 0x10000, 0x7fffffff, 0x80000000, 0xffffffff];

/** One mutated copy: 1–3 of bit flips, random bytes, interesting values in IFD fields or anywhere, a cut, a zeroed run. */
export function mutateTiff(src: Uint8Array, rng: Rng): { bytes: Uint8Array<ArrayBuffer>; what: string[] } {
  let b = new Uint8Array(src); // a copy: Buffer.slice would share memory
  const what: string[] = [];
  const head = Math.min(b.length, HEAD_BYTES);
  const { entries, le } = ifdEntries(src);
  const put = (at: number, v: number, size: 2 | 4) => {
    if (at + size > b.length) return;
    const dv = new DataView(b.buffer);
    if (size === 2) dv.setUint16(at, v & 0xffff, le); else dv.setUint32(at, v >>> 0, le);
  };
  for (let n = 1 + rng.int(3); n > 0; n--) {
    const op = rng.int(6);
    if (op === 0) { const at = rng.int(head); b[at] ^= 1 << rng.int(8); what.push(`flip@${at}`); }
    else if (op === 1) { const at = rng.int(head); b[at] = rng.int(256); what.push(`byte@${at}`); }
    else if (op === 2) {
      const e = rng.pick(entries);
      const field = rng.pick(['type', 'count', 'value'] as const);
      const v = rng.pick(INTERESTING);
      if (field === 'type') put(e.at + 2, rng.int(20), 2); else put(e.at + (field === 'count' ? 4 : 8), v, e.type === 3 && field === 'value' ? 2 : 4);
      what.push(`tag${e.tag}.${field}=${v}`);
    } else if (op === 3) { const at = rng.int(head); const v = rng.pick(INTERESTING); put(at, v, rng.chance(0.5) ? 2 : 4); what.push(`int@${at}=${v}`); }
    else if (op === 4) { const len = 8 + rng.int(b.length - 8); b = b.slice(0, len); what.push(`cut@${len}`); }
    else { const at = rng.int(head); const len = 1 + rng.int(64); b.fill(0, at, Math.min(b.length, at + len)); what.push(`zero@${at}+${len}`); }
  }
  return { bytes: b, what };
}

