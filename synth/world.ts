// The world: a rotated grid of 100 m blocks whose contents are pure functions of (seed, scenario, block, date).
import { BlockBuilder } from './block-builder.ts';
import { ROAD_M, drawRoads } from './blocks-roads.ts';
import { parkingBlock, retailBlock } from './blocks-lots.ts';
import { depotBlock, housesBlock, warehouseBlock } from './blocks-built.ts';
import { fieldBlock, parkBlock, solarFieldBlock } from './blocks-open.ts';
import { businessParkPlan, BUSINESS_PARK_GRID } from './business-park.ts';
import type { BlockContent, BlockCtx } from './objects.ts';
import type { Frame, Prim } from './prims.ts';
import { Rng, hash4, hashString, hashUnit } from './rng.ts';

export const BLOCK_M = 100;

export type BlockPlan =
  | { type: 'parking'; occupancy: number }
  | { type: 'retail'; occupancy: number; arrayShare: number; newUnits?: number[]; newYear?: number }
  | { type: 'houses'; arrayShare: number }
  | { type: 'warehouse'; occupancy: number; arrayShare: number; newRoof?: number; newYear?: number }
  | { type: 'depot'; occupancy: number; arrayShare: number }
  | { type: 'park' } | { type: 'field' } | { type: 'solar' };

export interface WorldSpec {
  seed: number;
  scenario: string;
  date: string;
  occupancy: number;
  sunAzimuthDeg: number;
  sunElevationDeg: number;
}

/** Grid placement (origin of block (0,0) and rotation) for a scenario. */
export interface GridPlacement { oxM: number; oyM: number; angleRad: number }

export function decimalYear(date: string): number {
  const d = Date.parse(`${date}T00:00:00Z`);
  const y = new Date(d).getUTCFullYear();
  return y + (d - Date.UTC(y, 0, 1)) / (365.25 * 86_400_000);
}

/** Random town: block type by hash; occupancy varies by lot and date around the scene's mean. */
function townPlan(seed: number, bx: number, by: number, date: string, occ: number): BlockPlan {
  const r = new Rng(hash4(seed, bx, by, 0x70a));
  const lotOcc = Math.min(1, Math.max(0, occ * (0.6 + 0.8 * hashUnit(seed, bx, by, hashString(date)))));
  const t = r.weighted([['houses', 0.28], ['parking', 0.14], ['retail', 0.1], ['warehouse', 0.12], ['depot', 0.05], ['park', 0.12], ['field', 0.11], ['solar', 0.08]] as const);
  switch (t) {
    case 'parking': return { type: 'parking', occupancy: lotOcc };
    case 'retail': return { type: 'retail', occupancy: lotOcc, arrayShare: 0.4 };
    case 'houses': return { type: 'houses', arrayShare: 0.3 };
    case 'warehouse': return { type: 'warehouse', occupancy: lotOcc, arrayShare: 0.6 };
    case 'depot': return { type: 'depot', occupancy: lotOcc, arrayShare: 0.5 };
    default: return { type: t };
  }
}

/** The world of a scene's parameters. */
export function worldOf(p: WorldSpec, blockCache?: number): World {
  return new World({ seed: p.seed, scenario: p.scenario, date: p.date, occupancy: p.occupancy, sunAzimuthDeg: p.sunAzimuthDeg, sunElevationDeg: p.sunElevationDeg }, blockCache);
}

export class World {
  readonly grid: GridPlacement;
  readonly frameCos: number;
  readonly frameSin: number;
  private cache = new Map<string, BlockContent>();
  private readonly year: number;
  /** `blockCache`: how many generated blocks to keep (LRU, ~200 KiB each). Default 128. */
  constructor(readonly spec: WorldSpec, private readonly blockCache = 128) {
    this.year = decimalYear(spec.date);
    this.grid = spec.scenario === 'business-park'
      ? BUSINESS_PARK_GRID
      : { oxM: hashUnit(spec.seed, 1) * BLOCK_M, oyM: hashUnit(spec.seed, 2) * BLOCK_M, angleRad: hashUnit(spec.seed, 3) * (Math.PI / 2) };
    this.frameCos = Math.cos(this.grid.angleRad);
    this.frameSin = Math.sin(this.grid.angleRad);
  }

  plan(bx: number, by: number): BlockPlan {
    const s = this.spec;
    if (s.scenario === 'business-park') {
      const p = businessParkPlan(bx, by, s.date);
      if (p) return p;
    }
    return townPlan(s.seed, bx, by, s.date, s.occupancy);
  }

  /** Grid (u, v) of a world point. */
  toGrid(xM: number, yM: number): [number, number] {
    const dx = xM - this.grid.oxM;
    const dy = yM - this.grid.oyM;
    return [dx * this.frameCos + dy * this.frameSin, -dx * this.frameSin + dy * this.frameCos];
  }

  block(bx: number, by: number): BlockContent {
    const key = `${bx},${by}`;
    const hit = this.cache.get(key);
    if (hit) { this.cache.delete(key); this.cache.set(key, hit); return hit; }
    const content = this.generate(bx, by);
    this.cache.set(key, content);
    if (this.cache.size > this.blockCache) this.cache.delete(this.cache.keys().next().value as string);
    return content;
  }

  private generate(bx: number, by: number): BlockContent {
    const s = this.spec;
    const [ox, oy] = [this.grid.oxM + bx * BLOCK_M * this.frameCos - by * BLOCK_M * this.frameSin, this.grid.oyM + bx * BLOCK_M * this.frameSin + by * BLOCK_M * this.frameCos];
    const frame: Frame = { oxM: ox, oyM: oy, cos: this.frameCos, sin: this.frameSin, angleRad: this.grid.angleRad };
    const ctx: BlockCtx = {
      frame,
      rng: new Rng(hash4(s.seed, bx, by, 0xb10c)),
      dateRng: new Rng(hash4(s.seed, bx, by, hashString(s.date))),
      date: s.date,
      sunAzimuthDeg: s.sunAzimuthDeg,
      sunElevationDeg: s.sunElevationDeg,
      occupancy: s.occupancy,
      blockM: BLOCK_M,
      roadM: ROAD_M,
    };
    const bb = new BlockBuilder(ctx);
    const p = this.plan(bx, by);
    const arrays = (share: number, newYear?: number) => ({ share, year: this.year, newYear });
    switch (p.type) {
      case 'parking': parkingBlock(bb, { occupancy: p.occupancy }); break;
      case 'retail': retailBlock(bb, { occupancy: p.occupancy, arrayShare: p.arrayShare, year: this.year, newUnits: p.newUnits, newYear: p.newYear }); break;
      case 'houses': housesBlock(bb, arrays(p.arrayShare)); break;
      case 'warehouse': warehouseBlock(bb, arrays(p.arrayShare, p.newYear), { occupancy: p.occupancy, newRoof: p.newRoof }); break;
      case 'depot': depotBlock(bb, arrays(p.arrayShare), { occupancy: p.occupancy }); break;
      case 'park': parkBlock(bb); break;
      case 'field': fieldBlock(bb); break;
      case 'solar': solarFieldBlock(bb); break;
    }
    // Roads last in generation, but they sit on their own layers, so paint order is unaffected.
    const busy = p.type === 'parking' || p.type === 'retail' || p.type === 'depot' ? 1.3 : 0.7;
    drawRoads(bb, { kerbOccupancy: Math.min(0.9, 0.25 * busy + 0.3 * s.occupancy), trafficPer100M: busy });
    return bb.out;
  }

  /** Blocks whose content may touch the world box (expanded by one block for shadows and overhangs), row-major. */
  blocksFor(minX: number, minY: number, maxX: number, maxY: number): [number, number][] {
    let u0 = Infinity, v0 = Infinity, u1 = -Infinity, v1 = -Infinity;
    for (const [x, y] of [[minX, minY], [maxX, minY], [minX, maxY], [maxX, maxY]]) {
      const [u, v] = this.toGrid(x, y);
      u0 = Math.min(u0, u); u1 = Math.max(u1, u); v0 = Math.min(v0, v); v1 = Math.max(v1, v);
    }
    const out: [number, number][] = [];
    for (let by = Math.floor(v0 / BLOCK_M) - 1; by <= Math.floor(v1 / BLOCK_M) + 1; by++) {
      for (let bx = Math.floor(u0 / BLOCK_M) - 1; bx <= Math.floor(u1 / BLOCK_M) + 1; bx++) out.push([bx, by]);
    }
    return out;
  }

  /** All primitives for a world box, in a window-independent order (block row-major, then generation order). */
  primsFor(minX: number, minY: number, maxX: number, maxY: number): Prim[] {
    const out: Prim[] = [];
    for (const [bx, by] of this.blocksFor(minX, minY, maxX, maxY)) for (const p of this.block(bx, by).prims) out.push(p);
    return out;
  }
}
