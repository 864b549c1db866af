// Copying one decoded file block (tile or group of strips) into band-separated arrays, in one pass over its bytes:
// interleaved ("chunky", PlanarConfiguration 1) samples are split per band, and TIFF horizontal differencing
// (Predictor 2, TIFF 6.0 §14) can be undone on the way for unsigned 8- and 16-bit samples, so a block is read once
// instead of three times (predictor pass, then one strided pass per band). Band-separate blocks (PlanarConfiguration
// 2) are copied a row at a time.
import type { SampleArray } from '../core/scene-source.ts';

/** The part of a decoded block to copy and where it goes. */
export interface UnpackRegion {
  /** Pixels per row of the decoded block (a tile's width, or the image width for strips). */
  rowLenPx: number;
  /** Block-local columns [colPx0, colPx1) and rows [rowPx0, rowPx1) to copy. */
  colPx0: number; colPx1: number; rowPx0: number; rowPx1: number;
  /** Row length of the destination arrays and where block column colPx0 / row rowPx0 lands in them. */
  dstWidthPx: number; dstXPx: number; dstYPx: number;
}

/**
 * Split the interleaved samples of `src` (`spp` per pixel) into `dst[b]` for b < dst.length (extra samples, e.g.
 * alpha, are skipped). `accMask` 0xff or 0xffff undoes Predictor 2 on unsigned 8/16-bit samples while copying
 * (each stored sample is the difference to the same band's sample on its left, modulo 2^bits): accumulation starts
 * at the block's first column whatever `colPx0` is. `accMask` 0: samples are copied as they are.
 */
export function unpackChunky(src: SampleArray, spp: number, dst: SampleArray[], r: UnpackRegion, accMask: 0 | 0xff | 0xffff): void {
  const nb = Math.min(dst.length, spp);
  if (accMask !== 0 && !(src instanceof Uint8Array || src instanceof Uint16Array)) {
    throw new Error('unpackChunky: Predictor 2 is undone here only on unsigned 8/16-bit samples');
  }
  if (nb === 3 && spp === 3) {
    unpack3(src, dst[0], dst[1], dst[2], r, accMask);
    return;
  }
  for (let y = r.rowPx0; y < r.rowPx1; y++) {
    const rowS = y * r.rowLenPx * spp;
    const rowD = (r.dstYPx + y - r.rowPx0) * r.dstWidthPx + r.dstXPx - r.colPx0;
    for (let b = 0; b < nb; b++) unpackBandRow(src, spp, b, dst[b], rowS, rowD, r.colPx0, r.colPx1, accMask);
  }
}

/** Band b of one row of interleaved samples (any band count), a row per call as `unpack3`. */
function unpackBandRow(src: SampleArray, spp: number, b: number, out: SampleArray, rowS: number, rowD: number, colPx0: number, colPx1: number, accMask: number): void {
  if (accMask !== 0) {
    let acc = 0;
    for (let x = 0, s = rowS + b; x < colPx1; x++, s += spp) {
      acc = (acc + src[s]) & accMask;
      if (x >= colPx0) out[rowD + x] = acc;
    }
  } else {
    for (let x = colPx0, s = rowS + colPx0 * spp + b; x < colPx1; x++, s += spp) out[rowD + x] = src[s];
  }
}

/**
 * Three interleaved bands (RGB), the common case: one pass, three accumulators, a row per call (V8 optimises a function
 * called per row as a whole; a loop nest called once per block would run as an on-stack-replaced inner loop that
 * Chromium's V8 leaves at the end of every row, see core/fill-unit.ts `lutRowFirst`).
 */
function unpack3(src: SampleArray, d0: SampleArray, d1: SampleArray, d2: SampleArray, r: UnpackRegion, accMask: number): void {
  const { rowLenPx, colPx0, colPx1 } = r;
  for (let y = r.rowPx0; y < r.rowPx1; y++) {
    const s = y * rowLenPx * 3;
    const rowD = (r.dstYPx + y - r.rowPx0) * r.dstWidthPx + r.dstXPx - colPx0;
    if (accMask !== 0) unpack3RowPredictor(src, d0, d1, d2, s, rowD, colPx0, colPx1, accMask);
    else unpack3Row(src, d0, d1, d2, s + colPx0 * 3, rowD + colPx0, colPx1 - colPx0);
  }
}

/** One row of Predictor-2 samples: accumulate from the block's first column, store from colPx0. */
function unpack3RowPredictor(src: SampleArray, d0: SampleArray, d1: SampleArray, d2: SampleArray, s: number, rowD: number, colPx0: number, colPx1: number, accMask: number): void {
  let a0 = 0, a1 = 0, a2 = 0;
  for (let x = 0; x < colPx0; x++, s += 3) {
    a0 = (a0 + src[s]) & accMask; a1 = (a1 + src[s + 1]) & accMask; a2 = (a2 + src[s + 2]) & accMask;
  }
  for (let x = colPx0, d = rowD + colPx0; x < colPx1; x++, s += 3, d++) {
    a0 = (a0 + src[s]) & accMask; a1 = (a1 + src[s + 1]) & accMask; a2 = (a2 + src[s + 2]) & accMask;
    d0[d] = a0; d1[d] = a1; d2[d] = a2;
  }
}

/** One row of `n` pixels copied as they are, from interleaved sample s to destination index d. */
function unpack3Row(src: SampleArray, d0: SampleArray, d1: SampleArray, d2: SampleArray, s: number, d: number, n: number): void {
  for (let x = 0; x < n; x++, s += 3, d++) {
    d0[d] = src[s]; d1[d] = src[s + 1]; d2[d] = src[s + 2];
  }
}

/** One band of a band-separate block: a row at a time with typed-array set (same element type on both sides). */
export function unpackPlanar(src: SampleArray, dst: SampleArray, r: UnpackRegion): void {
  const n = r.colPx1 - r.colPx0;
  for (let y = r.rowPx0; y < r.rowPx1; y++) {
    const s = y * r.rowLenPx + r.colPx0;
    const d = (r.dstYPx + y - r.rowPx0) * r.dstWidthPx + r.dstXPx;
    if (src.constructor === dst.constructor) (dst as Uint8Array).set((src as Uint8Array).subarray(s, s + n), d);
    else for (let x = 0; x < n; x++) dst[d + x] = src[s + x];
  }
}
