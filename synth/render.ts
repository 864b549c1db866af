// Renders any pixel window of a scene: supersampled painting, PSF + pixel aggregation, sensor noise, quantisation.
import type { SceneParams } from './scene-params.ts';
import { World, worldOf } from './world.ts';
import { LAYER_COUNT, Layer, primBounds, type Prim } from './prims.ts';
import { applyShadow, markShadow, paint, type Canvas } from './painter.ts';
import { bandMatrix, toBands, MATERIALS, type Refl } from './spectra.ts';
import { hash4, valueNoise } from './rng.ts';
import { footprintTest } from './footprint.ts';

export interface WindowPx { x0Px: number; y0Px: number; wPx: number; hPx: number }

/** Samples per output pixel along each axis: about 0.1 m sample spacing, 2–5 samples. */
export function supersampleFactor(gsdM: number): number {
  return Math.max(2, Math.min(5, Math.ceil(gsdM / 0.11 - 1e-9)));
}

/** Largest DN and DN per unit reflectance for a bit depth (16-bit stores reflectance × 10 000, common practice, no source). */
export function radiometry(bits: number): { maxDn: number; dnPerRefl: number } {
  if (bits === 16) return { maxDn: 65535, dnPerRefl: 10000 };
  const maxDn = (1 << bits) - 1;
  return { maxDn, dnPerRefl: maxDn / 0.7 }; // reflectance 0.7 (a white car in sun) reaches full scale
}

/** Discrete Gaussian PSF weights at output-pixel spacing, radius ceil(2.5σ), normalised to 1. */
function psfWeights(sigmaPx: number): Float32Array {
  const r = Math.max(1, Math.ceil(2.5 * sigmaPx));
  const w: number[] = [];
  for (let t = -r; t <= r; t++) w.push(Math.exp((-t * t) / (2 * Math.max(1e-3, sigmaPx) ** 2)));
  const sum = w.reduce((x, y) => x + y, 0);
  return Float32Array.from(w.map((x) => x / sum));
}

/** Per-scene state reused across windows (world block cache, colours). */
export class SceneRenderer {
  readonly world: World;
  readonly nb: number;
  readonly s: number;
  private readonly m: number[][];
  // Keyed weakly by the reflectance arrays of live primitives: evicted blocks take their entries with them.
  private readonly colourCache = new WeakMap<Refl, Float32Array>();
  private readonly psf: Float32Array;
  private scratch = new Float32Array(0);
  private scratchMask = new Uint8Array(0);
  private sensorScratch = new Float32Array(0);
  private noiseBuf = new Float32Array(0);
  private noiseScratch(n: number): Float32Array {
    if (this.noiseBuf.length < n) this.noiseBuf = new Float32Array(n);
    return this.noiseBuf.subarray(0, n);
  }
  private readonly marginPx: number;
  readonly inFootprint: (xPx: number, yPx: number) => boolean;
  /** `o.blockCache`: world blocks kept between windows (default 128). */
  constructor(readonly p: SceneParams, o: { blockCache?: number } = {}) {
    this.world = worldOf(p, o.blockCache);
    this.m = bandMatrix(p.bands);
    this.nb = this.m.length;
    this.s = supersampleFactor(p.gsdM);
    this.psf = psfWeights(p.psfSigmaPx);
    this.marginPx = (this.psf.length - 1) / 2 + 1;
    this.inFootprint = footprintTest(p);
  }

  private colour(r: Refl, light: number): Float32Array {
    let c = this.colourCache.get(r);
    if (!c) { c = toBands(r, this.m); this.colourCache.set(r, c); }
    if (light === 1) return c;
    return c.map((v) => v * light);
  }

  /**
   * Render a window of the scene as band-interleaved DNs (Uint8Array for 8 bits, else Uint16Array). `into`, when
   * given, must hold at least w*h*bands samples of the right type and is filled and returned (no allocation).
   */
  render(win: WindowPx, into?: Uint8Array | Uint16Array): Uint8Array | Uint16Array {
    const p = this.p;
    const { s, nb } = this;
    const mg = this.marginPx;
    const rw = win.wPx + 2 * mg;
    const rh = win.hPx + 2 * mg;
    const sw = rw * s;
    const sh = rh * s;
    const ds = p.gsdM / s;
    if (this.scratch.length < sw * sh * nb) this.scratch = new Float32Array(sw * sh * nb);
    if (this.scratchMask.length < sw * sh) this.scratchMask = new Uint8Array(sw * sh);
    const c: Canvas = {
      sw, sh, nb, buf: this.scratch.subarray(0, sw * sh * nb), mask: this.scratchMask.subarray(0, sw * sh), maskRows: [sh, 0],
      gx0: (win.x0Px - mg) * s, gy0: (win.y0Px - mg) * s, s, dsM: ds, originXM: p.originXM, originYM: p.originYM,
      noise: this.noiseScratch(rw * rh), noiseW: rw, seed: p.seed,
    };
    for (let y = 0; y < rh; y++) {
      for (let x = 0; x < rw; x++) {
        const xM = p.originXM + (win.x0Px - mg + x + 0.5) * p.gsdM;
        const yM = p.originYM - (win.y0Px - mg + y + 0.5) * p.gsdM;
        c.noise[y * rw + x] = valueNoise(p.seed, xM, yM, 7) * 0.6 + valueNoise(p.seed ^ 0x55, xM, yM, 1.7) * 0.4 - 0.5;
      }
    }
    const base = this.colour(MATERIALS.grass, 1);
    for (let q = 0; q < nb; q++) c.buf.fill(base[q], q * sw * sh, (q + 1) * sw * sh);
    c.mask.fill(0);

    const minX = p.originXM + (win.x0Px - mg) * p.gsdM;
    const maxX = p.originXM + (win.x0Px + win.wPx + mg) * p.gsdM;
    const maxY = p.originYM - (win.y0Px - mg) * p.gsdM;
    const minY = p.originYM - (win.y0Px + win.hPx + mg) * p.gsdM;
    const layers: Prim[][] = Array.from({ length: LAYER_COUNT }, () => []);
    for (const pr of this.world.primsFor(minX, minY, maxX, maxY)) {
      const [a, b, cc, d] = primBounds(pr);
      if (cc < minX || a > maxX || d < minY || b > maxY) continue;
      layers[pr.layer].push(pr);
    }
    const shadowFactor = this.colour([0.42, 0.36, 0.31, 0.27], 1);
    for (let L = 0; L < LAYER_COUNT; L++) {
      if (L === Layer.lowShadow || L === Layer.tallShadow) {
        if (layers[L].length === 0) continue;
        for (const pr of layers[L]) markShadow(c, pr);
        applyShadow(c, shadowFactor);
        continue;
      }
      for (const pr of layers[L]) paint(c, pr, this.colour(pr.refl!, pr.light), pr.pv ? this.colour(pr.pv.frame, 1) : null);
    }
    return this.sensor(c, win, mg, into);
  }

  /**
   * Pixel aggregation (box sum of s × s samples), then the Gaussian PSF at output spacing (separable), then
   * illumination, haze, shot + read noise, quantisation and the nodata collar.
   */
  private sensor(c: Canvas, win: WindowPx, mg: number, into?: Uint8Array | Uint16Array): Uint8Array | Uint16Array {
    const p = this.p;
    const { s, nb } = this;
    const { sw, sh, buf } = c;
    const rw = sw / s;
    const rh = sh / s;
    const ow = win.wPx;
    const oh = win.hPx;
    const plane = sw * sh;
    const g = this.psf;
    const R = (g.length - 1) / 2;
    const inv = 1 / (s * s);
    const need = sh * rw + rh * rw + rh * ow + ow * oh * nb;
    if (this.sensorScratch.length < need) this.sensorScratch = new Float32Array(need);
    const sc = this.sensorScratch;
    const hb = sc.subarray(0, sh * rw);
    const box = sc.subarray(sh * rw, sh * rw + rh * rw);
    const gx = sc.subarray(sh * rw + rh * rw, sh * rw + rh * rw + rh * ow);
    const lin = sc.subarray(sh * rw + rh * rw + rh * ow, need);
    for (let q = 0; q < nb; q++) {
      const base = q * plane;
      for (let j = 0; j < sh; j++) {
        const row = base + j * sw;
        for (let X = 0; X < rw; X++) {
          let acc = 0;
          const i0 = row + X * s;
          for (let t = 0; t < s; t++) acc += buf[i0 + t];
          hb[j * rw + X] = acc;
        }
      }
      for (let Y = 0; Y < rh; Y++) {
        for (let X = 0; X < rw; X++) {
          let acc = 0;
          for (let t = 0; t < s; t++) acc += hb[(Y * s + t) * rw + X];
          box[Y * rw + X] = acc * inv;
        }
      }
      for (let Y = 0; Y < rh; Y++) {
        for (let x = 0; x < ow; x++) {
          let acc = 0;
          const i0 = Y * rw + x + mg - R;
          for (let t = 0; t < g.length; t++) acc += g[t] * box[i0 + t];
          gx[Y * ow + x] = acc;
        }
      }
      for (let y = 0; y < oh; y++) {
        for (let x = 0; x < ow; x++) {
          let acc = 0;
          const i0 = (y + mg - R) * ow + x;
          for (let t = 0; t < g.length; t++) acc += g[t] * gx[i0 + t * ow];
          lin[(y * ow + x) * nb + q] = acc;
        }
      }
    }
    const el = (p.sunElevationDeg * Math.PI) / 180;
    const illum = (0.25 + 0.75 * Math.sin(el)) / (0.25 + 0.75 * Math.sin((50 * Math.PI) / 180));
    const haze = this.colour([0.36, 0.3, 0.24, 0.16], 1);
    const h = p.hazeFraction;
    const { maxDn, dnPerRefl } = radiometry(p.bits);
    const n = ow * oh * nb;
    const out = into ? into.subarray(0, n) : p.bits === 8 ? new Uint8Array(n) : new Uint16Array(n);
    if (into) out.fill(0);
    const noiseScale = 0.8 / p.fullWellE;
    const read2 = p.readNoiseE * p.readNoiseE;
    for (let y = 0; y < oh; y++) {
      const gyPx = win.y0Px + y;
      for (let x = 0; x < ow; x++) {
        const gxPx = win.x0Px + x;
        if (!this.inFootprint(gxPx, gyPx)) continue; // nodata = 0
        const o = (y * ow + x) * nb;
        for (let q = 0; q < nb; q++) {
          const v = Math.max(0, lin[o + q] * illum * (1 - h) + h * haze[q]);
          // Shot noise (Poisson, as a normal) plus read noise, in electrons, from one 32-bit hash.
          const sd = Math.sqrt(v / noiseScale + read2) * noiseScale;
          const hh = hash4(p.seed ^ 0x0e15e, gxPx, gyPx, q);
          const n = ((hh & 255) + ((hh >>> 8) & 255) + ((hh >>> 16) & 255) + (hh >>> 24) - 510) / 147.8; // Irwin–Hall of 4 bytes: mean 510, sd ≈ 147.8
          const dn = Math.round((v + sd * n) * dnPerRefl);
          out[o + q] = dn < 1 ? 1 : dn > maxDn ? maxDn : dn;
        }
      }
    }
    return out;
  }
}

/** Render a window of a scene (convenience for one-off use; keep a SceneRenderer for many windows). */
export function renderSceneWindow(p: SceneParams, win: WindowPx): Uint8Array | Uint16Array {
  return new SceneRenderer(p).render(win);
}
