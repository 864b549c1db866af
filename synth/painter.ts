// Rasterises primitives into a supersampled radiance buffer; all geometry is computed in scene-global sample
// coordinates so any window renders exactly the same values as any other window covering the same pixels.
import type { Prim } from './prims.ts';
/** Per-sample grain in [-0.5, 0.5): a cheap integer hash of the global sample position. */
function grainNoise(seed: number, x: number, y: number): number {
  let h = Math.imul(x, 0x27d4eb2d) ^ Math.imul(y, 0x165667b1) ^ seed;
  h = Math.imul(h ^ (h >>> 15), 0x85ebca6b);
  h = Math.imul(h ^ (h >>> 13), 0xc2b2ae35);
  return ((h ^ (h >>> 16)) >>> 0) / 4294967296 - 0.5;
}

export interface Canvas {
  /** Region size in samples and band count. */
  sw: number;
  sh: number;
  nb: number;
  /** Radiance, band-planar: band q of sample (i, j) at q*sw*sh + j*sw + i. */
  buf: Float32Array;
  /** Shadow mask (sw*sh) and the row range [first, end) it has marks in. */
  mask: Uint8Array;
  maskRows: [number, number];
  /** Global sample index of the region's first column / row. */
  gx0: number;
  gy0: number;
  /** Samples per output pixel, sample size (m), scene origin (top-left corner, m). */
  s: number;
  dsM: number;
  originXM: number;
  originYM: number;
  /** Low-frequency texture, one value per output pixel of the region, in [-0.5, 0.5]. */
  noise: Float32Array;
  noiseW: number;
  seed: number;
}

/** Call `span(row, i0, i1)` for each region row the primitive covers (sample centres inside; i1 exclusive). */
export function forSpans(c: Canvas, p: Prim, span: (j: number, i0: number, i1: number) => void): void {
  const ds = c.dsM;
  if (p.shape === 'circle') {
    const cx = (p.pts[0] - c.originXM) / ds;
    const cy = (c.originYM - p.pts[1]) / ds;
    const r = p.pts[2] / ds;
    const j0 = Math.max(0, Math.ceil(cy - r - 0.5) - c.gy0);
    const j1 = Math.min(c.sh, Math.floor(cy + r - 0.5) - c.gy0 + 1);
    for (let j = j0; j < j1; j++) {
      const dy = c.gy0 + j + 0.5 - cy;
      const h2 = r * r - dy * dy;
      if (h2 <= 0) continue;
      const h = Math.sqrt(h2);
      const i0 = Math.max(0, Math.ceil(cx - h - 0.5) - c.gx0);
      const i1 = Math.min(c.sw, Math.ceil(cx + h - 0.5) - c.gx0);
      if (i1 > i0) span(j, i0, i1);
    }
    return;
  }
  const n = p.pts.length / 2;
  const xs = new Float64Array(n);
  const ys = new Float64Array(n);
  let ymin = Infinity;
  let ymax = -Infinity;
  for (let k = 0; k < n; k++) {
    xs[k] = (p.pts[2 * k] - c.originXM) / ds;
    ys[k] = (c.originYM - p.pts[2 * k + 1]) / ds;
    if (ys[k] < ymin) ymin = ys[k];
    if (ys[k] > ymax) ymax = ys[k];
  }
  const j0 = Math.max(0, Math.ceil(ymin - 0.5) - c.gy0);
  const j1 = Math.min(c.sh, Math.ceil(ymax - 0.5) - c.gy0);
  for (let j = j0; j < j1; j++) {
    const yc = c.gy0 + j + 0.5;
    let xa = Infinity;
    let xb = -Infinity;
    for (let k = 0; k < n; k++) {
      const k2 = k + 1 === n ? 0 : k + 1;
      const y1 = ys[k];
      const y2 = ys[k2];
      if ((y1 <= yc && y2 > yc) || (y2 <= yc && y1 > yc)) {
        const x = xs[k] + ((yc - y1) * (xs[k2] - xs[k])) / (y2 - y1);
        if (x < xa) xa = x;
        if (x > xb) xb = x;
      }
    }
    if (xb <= xa) continue;
    const i0 = Math.max(0, Math.ceil(xa - 0.5) - c.gx0);
    const i1 = Math.min(c.sw, Math.ceil(xb - 0.5) - c.gx0);
    if (i1 > i0) span(j, i0, i1);
  }
}

/** Paint a coloured primitive: colour × light × texture × grain; PV patterns switch to the frame colour in gaps. */
export function paint(c: Canvas, p: Prim, col: Float32Array, frameCol: Float32Array | null): void {
  const { nb, buf, s, noise, noiseW, seed } = c;
  const plane = c.sw * c.sh;
  const tex = p.tex;
  const grain = p.grain;
  const pv = p.pv;
  let pa = 0, pb = 0, ma = 0, mb = 0, ax = 0, ay = 0, bx = 0, by = 0, ox = 0, oy = 0;
  const frameM = 0.035;
  if (pv) { pa = pv.pitchAM; pb = pv.pitchBM; ma = pv.moduleAM; mb = pv.moduleBM; ax = pv.ax; ay = pv.ay; bx = pv.bx; by = pv.by; ox = pv.oxM; oy = pv.oyM; }
  forSpans(c, p, (j, i0, i1) => {
    const gy = c.gy0 + j;
    const noiseRow = Math.floor(j / s) * noiseW;
    const yM = c.originYM - (gy + 0.5) * c.dsM;
    for (let i = i0; i < i1; i++) {
      let f = 1;
      if (tex !== 0) f *= 1 + tex * noise[noiseRow + Math.floor(i / s)];
      if (grain !== 0) f *= 1 + grain * grainNoise(seed, c.gx0 + i, gy);
      let cc = col;
      if (pv && frameCol) {
        const xM = c.originXM + (c.gx0 + i + 0.5) * c.dsM;
        const dx = xM - ox;
        const dy = yM - oy;
        const a = dx * ax + dy * ay;
        const b = dx * bx + dy * by;
        const fa = a - Math.floor(a / pa) * pa;
        const fb = b - Math.floor(b / pb) * pb;
        if (fa < frameM || fa > ma - frameM || fb < frameM * 0.8 || fb > mb - frameM * 0.8) cc = frameCol;
      }
      const k = j * c.sw + i;
      for (let q = 0; q < nb; q++) buf[k + q * plane] = cc[q] * f;
    }
  });
}

/** Mark a shadow primitive in the mask. */
export function markShadow(c: Canvas, p: Prim): void {
  forSpans(c, p, (j, i0, i1) => {
    c.mask.fill(1, j * c.sw + i0, j * c.sw + i1);
    if (j < c.maskRows[0]) c.maskRows[0] = j;
    if (j >= c.maskRows[1]) c.maskRows[1] = j + 1;
  });
}

/** Darken masked samples by per-band shadow factors (sky light only), then clear the mask. */
export function applyShadow(c: Canvas, factor: Float32Array): void {
  const { mask, buf, nb } = c;
  const plane = c.sw * c.sh;
  const end = c.maskRows[1] * c.sw;
  for (let k = c.maskRows[0] * c.sw; k < end; k++) {
    if (mask[k] === 0) continue;
    for (let q = 0; q < nb; q++) buf[k + q * plane] *= factor[q];
    mask[k] = 0;
  }
  c.maskRows[0] = c.sh;
  c.maskRows[1] = 0;
}
