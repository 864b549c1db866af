// 2× box downsampling of one tile into a quadrant of its parent overview tile, ignoring nodata (0) pixels.
import type { TileSamples } from './cog-writer.ts';

/**
 * Average each 2×2 block of `child` (tilePx² pixels × nb interleaved bands) into `out` at pixel offset (oxPx, oyPx).
 * A pixel is nodata when its first band is 0 (the synthesizer never writes 0 in a valid pixel); blocks with some
 * valid pixels average those only, all-nodata blocks stay 0. Results are rounded half up, so never 0 when valid.
 */
export function downsampleInto(child: TileSamples, out: TileSamples, tilePx: number, nb: number, oxPx: number, oyPx: number): void {
  const half = tilePx >> 1;
  const rowLen = tilePx * nb;
  const sum = new Float64Array(nb);
  for (let y = 0; y < half; y++) {
    const r0 = 2 * y * rowLen;
    const r1 = r0 + rowLen;
    const o = ((oyPx + y) * tilePx + oxPx) * nb;
    for (let x = 0; x < half; x++) {
      const c = 2 * x * nb;
      let n = 0;
      sum.fill(0);
      for (let j = 0; j < 4; j++) {
        const p = (j < 2 ? r0 : r1) + c + (j & 1) * nb;
        if (child[p] === 0) continue;
        n++;
        for (let b = 0; b < nb; b++) sum[b] += child[p + b];
      }
      const q = o + x * nb;
      if (n === 0) {
        for (let b = 0; b < nb; b++) out[q + b] = 0;
      } else {
        for (let b = 0; b < nb; b++) out[q + b] = Math.floor(sum[b] / n + 0.5);
      }
    }
  }
}
