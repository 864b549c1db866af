// Helper that block generators draw with, in block-local metres (u east-ish, v north-ish), collecting world primitives.
import { Layer, circle, convexHull, poly, prismShadow, rectCorners, shadowOffset, slopeLight, toWorld, type Prim } from './prims.ts';
import { MATERIALS, jitter, scaleRefl, type Refl } from './spectra.ts';
import type { BlockContent, BlockCtx, TruthKind } from './objects.ts';
import { vehicle } from './vehicles.ts';
import { MODULES, maxModules, pvArray, type ArraySpec, type ModuleType } from './solar.ts';
import type { Rng } from './rng.ts';

export interface RoofPlane { u0: number; v0: number; u1: number; v1: number; tiltDeg: number; facingLocalRad: number }

export class BlockBuilder {
  readonly out: BlockContent = { prims: [], truth: [], crowns: [] };
  constructor(readonly ctx: BlockCtx) {}

  get rng(): Rng { return this.ctx.rng; }
  get sun() { return { sunAzimuthDeg: this.ctx.sunAzimuthDeg, sunElevationDeg: this.ctx.sunElevationDeg }; }

  /** World corners of a local rectangle centred at (u, v), length along local angle. */
  rectW(u: number, v: number, len: number, wid: number, angLocal = 0): number[] {
    const [x, y] = toWorld(this.ctx.frame, u, v);
    return rectCorners(x, y, len, wid, angLocal + this.ctx.frame.angleRad);
  }

  /** Axis-aligned local box [u0,u1) × [v0,v1). */
  box(layer: number, u0: number, v0: number, u1: number, v1: number, refl: Refl, o: Partial<Pick<Prim, 'tex' | 'grain' | 'light'>> = {}): number[] {
    const pts = this.rectW((u0 + u1) / 2, (v0 + v1) / 2, u1 - u0, v1 - v0);
    this.out.prims.push(poly(layer, pts, refl, o));
    return pts;
  }

  rect(layer: number, u: number, v: number, len: number, wid: number, angLocal: number, refl: Refl, o: Partial<Pick<Prim, 'tex' | 'grain' | 'light'>> = {}): void {
    this.out.prims.push(poly(layer, this.rectW(u, v, len, wid, angLocal), refl, o));
  }

  tree(u: number, v: number, rM: number, heightM: number): void {
    const [x, y] = toWorld(this.ctx.frame, u, v);
    const crown = jitter(this.rng.chance(0.3) ? MATERIALS.treeDark : MATERIALS.tree, this.rng, 0.15);
    // Crown shadow: the crown (from ~35 % to ~90 % of the height) swept away from the sun, plus the trunk's line.
    const [dx, dy] = shadowOffset(heightM, this.ctx.sunAzimuthDeg, this.ctx.sunElevationDeg);
    const disc: number[] = [];
    for (const f of [0.35, 0.9]) {
      for (let k = 0; k < 12; k++) {
        const a = (k / 12) * 2 * Math.PI;
        disc.push(x + dx * f + Math.cos(a) * rM * 0.95, y + dy * f + Math.sin(a) * rM * 0.95);
      }
    }
    this.out.prims.push(poly(Layer.tallShadow, convexHull(disc), null));
    this.out.prims.push(poly(Layer.tallShadow, prismShadow(rectCorners(x, y, 0.5, 0.5, 0), heightM * 0.4, this.ctx.sunAzimuthDeg, this.ctx.sunElevationDeg), null));
    const az = (this.ctx.sunAzimuthDeg * Math.PI) / 180;
    this.out.prims.push(circle(Layer.tree, x, y, rM, crown, { tex: 0.35, grain: 0.25 }));
    // A lit cap on the sun side gives the crown volume.
    const cx = x + Math.sin(az) * rM * 0.25;
    const cy = y + Math.cos(az) * rM * 0.25;
    this.out.prims.push(circle(Layer.tree, cx, cy, rM * 0.6, scaleRefl(crown, 1.35), { tex: 0.35, grain: 0.25 }));
    this.out.crowns.push(x, y, rM);
  }

  vehicle(kind: TruthKind, u: number, v: number, angLocal: number, rng: Rng): void {
    const [x, y] = toWorld(this.ctx.frame, u, v);
    const { prims, truth } = vehicle(kind, x, y, angLocal + this.ctx.frame.angleRad, rng, this.sun);
    this.out.prims.push(...prims);
    this.out.truth.push(truth);
  }

  /** A flush or tilted PV array centred at local (u, v), length axis at local angle. */
  array(u: number, v: number, angLocal: number, cols: number, rows: number, module: ModuleType, o: { landscape?: boolean; kind?: 'rooftop' | 'ground'; tiltDeg?: number; facingLocalRad?: number; heightM?: number; rng?: Rng } = {}): void {
    const [x, y] = toWorld(this.ctx.frame, u, v);
    const spec: ArraySpec = {
      cxM: x, cyM: y, angleRad: angLocal + this.ctx.frame.angleRad, cols, rows, module,
      landscape: o.landscape ?? false, kind: o.kind ?? 'rooftop', tiltDeg: o.tiltDeg ?? 0,
      facingRad: (o.facingLocalRad ?? 0) + this.ctx.frame.angleRad, heightM: o.heightM ?? 0,
    };
    const { prims, truth } = pvArray(spec, o.rng ?? this.rng, this.sun);
    this.out.prims.push(...prims);
    this.out.truth.push(truth);
  }

  /** A building on local box; returns the roof planes that can carry PV arrays. */
  building(u0: number, v0: number, u1: number, v1: number, o: { pitched: boolean; roof: Refl; heightM: number; hvac?: number }): RoofPlane[] {
    const foot = this.rectW((u0 + u1) / 2, (v0 + v1) / 2, u1 - u0, v1 - v0);
    this.out.prims.push(poly(Layer.tallShadow, prismShadow(foot, o.heightM, this.ctx.sunAzimuthDeg, this.ctx.sunElevationDeg), null));
    const b = Layer.building;
    if (!o.pitched) {
      this.box(b, u0, v0, u1, v1, scaleRefl(o.roof, 1.15), { tex: 0.05 });
      this.box(b, u0 + 0.45, v0 + 0.45, u1 - 0.45, v1 - 0.45, o.roof, { tex: 0.12, grain: 0.06 });
      for (let i = 0; i < (o.hvac ?? 0); i++) {
        const w = this.rng.range(1.2, 3.5);
        const d = this.rng.range(1.2, 2.5);
        const hu = this.rng.range(u0 + 2 + w / 2, u1 - 2 - w / 2);
        const hv = this.rng.range(v0 + 2 + d / 2, v1 - 2 - d / 2);
        this.box(b, hu - w / 2 + 0.4, hv - d / 2 - 0.4, hu + w / 2 + 0.4, hv + d / 2 - 0.4, scaleRefl(o.roof, 0.45));
        this.box(b, hu - w / 2, hv - d / 2, hu + w / 2, hv + d / 2, MATERIALS.roofMetal, { light: 1.05 });
      }
      return [{ u0: u0 + 1.5, v0: v0 + 1.5, u1: u1 - 1.5, v1: v1 - 1.5, tiltDeg: 0, facingLocalRad: 0 }];
    }
    // Pitched: ridge along the longer side; the two halves lit by their slope (35° pitch).
    const alongU = u1 - u0 >= v1 - v0;
    const pitch = 35;
    const f = this.ctx.frame.angleRad;
    const planes: RoofPlane[] = [];
    const halves: [number, number, number, number, number][] = alongU
      ? [[u0, v0, u1, (v0 + v1) / 2, -Math.PI / 2], [u0, (v0 + v1) / 2, u1, v1, Math.PI / 2]]
      : [[u0, v0, (u0 + u1) / 2, v1, Math.PI], [(u0 + u1) / 2, v0, u1, v1, 0]];
    const t = (pitch * Math.PI) / 180;
    for (const [a, bb, c, d, face] of halves) {
      const light = slopeLight(Math.cos(face + f) * Math.sin(t), Math.sin(face + f) * Math.sin(t), Math.cos(t), this.ctx.sunAzimuthDeg, this.ctx.sunElevationDeg);
      this.box(b, a, bb, c, d, o.roof, { tex: 0.12, grain: 0.12, light });
      planes.push({ u0: a + 0.8, v0: bb + 0.8, u1: c - 0.8, v1: d - 0.8, tiltDeg: pitch, facingLocalRad: face });
    }
    if (alongU) this.box(b, u0, (v0 + v1) / 2 - 0.12, u1, (v0 + v1) / 2 + 0.12, scaleRefl(o.roof, 1.2));
    else this.box(b, (u0 + u1) / 2 - 0.12, v0, (u0 + u1) / 2 + 0.12, v1, scaleRefl(o.roof, 1.2));
    return planes;
  }

  /** Fill a roof plane with flush PV arrays of at most 25 m, separated by maintenance paths; returns how many. */
  fillRoof(plane: RoofPlane, module: ModuleType, o: { landscape?: boolean; share?: number; pathM?: number; rng?: Rng } = {}): number {
    const rng = o.rng ?? this.rng;
    const landscape = o.landscape ?? false;
    const { cols: maxC, rows: maxR } = maxModules(module, landscape, plane.tiltDeg);
    const m = MODULES[module];
    const pa = (landscape ? m.longM : m.shortM) + 0.02;
    const pb = ((landscape ? m.shortM : m.longM) + 0.02) * Math.cos((plane.tiltDeg * Math.PI) / 180);
    // Arrays are laid with their rows along the plane's ridge (length axis along u for faces ±v).
    const faceAlongV = Math.abs(Math.sin(plane.facingLocalRad)) > 0.5 || plane.tiltDeg === 0;
    const spanA = faceAlongV ? plane.u1 - plane.u0 : plane.v1 - plane.v0;
    const spanB = faceAlongV ? plane.v1 - plane.v0 : plane.u1 - plane.u0;
    const path = o.pathM ?? 1.6;
    let n = 0;
    for (let a0 = 0; a0 + pa <= spanA; ) {
      const cols = Math.min(maxC, Math.floor((spanA - a0) / pa));
      if (cols < 2) break;
      for (let b0 = 0; b0 + pb <= spanB; ) {
        const rows = Math.min(maxR, Math.floor((spanB - b0) / pb));
        if (rows < 1) break;
        if (rng.chance(o.share ?? 1)) {
          const ca = a0 + (cols * pa) / 2;
          const cb = b0 + (rows * pb) / 2;
          const u = faceAlongV ? plane.u0 + ca : plane.u0 + cb;
          const v = faceAlongV ? plane.v0 + cb : plane.v0 + ca;
          this.array(u, v, faceAlongV ? 0 : Math.PI / 2, cols, rows, module, { landscape, tiltDeg: plane.tiltDeg, facingLocalRad: plane.facingLocalRad, rng });
        }
        n++;
        b0 += rows * pb + path;
      }
      a0 += cols * pa + path;
    }
    return n;
  }
}
