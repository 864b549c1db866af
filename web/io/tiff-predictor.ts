// Undoing the TIFF predictors in place on one decoded block, row by row as libtiff does: horizontal differencing
// (Predictor 2, TIFF 6.0 §14) and the floating-point predictor (Predictor 3, Adobe TIFF Technical Note 3).
// Samples are little-endian (the file's and the host's order; geotiff-blocks.ts takes no big-endian > 8-bit files).

/** Whether undoPredictor handles this predictor at this sample size (others go through geotiff.js). */
export function predictorSupported(predictor: number, bytesPerSample: number): boolean {
  if (predictor === 1) return true;
  if (predictor === 2) return bytesPerSample === 1 || bytesPerSample === 2 || bytesPerSample === 4;
  if (predictor === 3) return bytesPerSample === 2 || bytesPerSample === 4 || bytesPerSample === 8;
  return false;
}

/**
 * Undo `predictor` on `block` (rows × rowPx pixels of `samplesPerPixel` interleaved samples; 1 for band-separate
 * blocks). `block` must start at byte 0 of its buffer and hold at least rows × rowPx × samplesPerPixel samples.
 */
export function undoPredictor(block: Uint8Array, predictor: number, rowPx: number, rows: number, samplesPerPixel: number, bytesPerSample: number): void {
  if (predictor === 1) return;
  if (!predictorSupported(predictor, bytesPerSample)) throw new Error(`undoPredictor: predictor ${predictor} with ${bytesPerSample}-byte samples is not supported`);
  const rowSamples = rowPx * samplesPerPixel;
  if (block.length < rowSamples * rows * bytesPerSample) throw new Error(`undoPredictor: block of ${block.length} bytes is shorter than ${rows} rows of ${rowSamples * bytesPerSample} bytes`);
  if (predictor === 2) {
    const samples = bytesPerSample === 1 ? block
      : bytesPerSample === 2 ? new Uint16Array(block.buffer, block.byteOffset, rowSamples * rows)
      : new Uint32Array(block.buffer, block.byteOffset, rowSamples * rows);
    horizontalAcc(samples, rowSamples, rows, samplesPerPixel);
  } else {
    floatAcc(block, rowSamples, rows, samplesPerPixel, bytesPerSample);
  }
}

/** Predictor 2: each sample is stored as the difference to the same sample of the pixel on its left (modulo 2^bits). */
function horizontalAcc(a: Uint8Array | Uint16Array | Uint32Array, rowSamples: number, rows: number, stride: number): void {
  for (let r = 0, o = 0; r < rows; r++, o += rowSamples) {
    // typed-array stores wrap modulo 2^bits, as the C accumulation does
    for (let i = o + stride, end = o + rowSamples; i < end; i++) a[i] = a[i] + a[i - stride];
  }
}

/**
 * Predictor 3: a row's bytes are split into planes (most significant byte of every sample first) and each byte is
 * stored as the difference to the byte `stride` before it; accumulate, then put each sample's bytes back in
 * little-endian order (libtiff's fpAcc).
 */
function floatAcc(bytes: Uint8Array, rowSamples: number, rows: number, stride: number, bytesPerSample: number): void {
  const rowBytes = rowSamples * bytesPerSample;
  const tmp = new Uint8Array(rowBytes);
  for (let r = 0, o = 0; r < rows; r++, o += rowBytes) {
    for (let i = o + stride, end = o + rowBytes; i < end; i++) bytes[i] = bytes[i] + bytes[i - stride];
    tmp.set(bytes.subarray(o, o + rowBytes));
    for (let s = 0; s < rowSamples; s++) {
      for (let b = 0; b < bytesPerSample; b++) bytes[o + s * bytesPerSample + b] = tmp[(bytesPerSample - b - 1) * rowSamples + s];
    }
  }
}
