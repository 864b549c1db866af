// Parking-lot blocks (stall rows, islands with trees, random occupancy) and the retail strip with its front lot.
import { Layer } from './prims.ts';
import { MATERIALS, jitter } from './spectra.ts';
import type { BlockBuilder } from './block-builder.ts';
import { pickKind } from './vehicles.ts';
import type { ModuleType } from './solar.ts';
import { Rng } from './rng.ts';

/** Stall 2.5 m × 5.0 m, aisle 6.5 m (typical European car-park geometry; common practice, no source). */
export const STALL_W_M = 2.5;
export const STALL_L_M = 5.0;
const AISLE_M = 6.5;
const ISLAND_M = 2.0;

/** Draw a lot on the local box: double stall rows facing shared aisles; returns the number of stalls. */
export function drawLot(bb: BlockBuilder, u0: number, v0: number, u1: number, v1: number, o: { occupancy: number; trees: boolean }): number {
  const rng = bb.rng;
  bb.box(Layer.surface, u0, v0, u1, v1, jitter(rng.chance(0.4) ? MATERIALS.asphaltOld : MATERIALS.asphalt, rng, 0.1), { tex: 0.12, grain: 0.08 });
  const dr = bb.ctx.dateRng;
  let stalls = 0;
  const moduleM = 2 * STALL_L_M + AISLE_M;
  let v = v0 + 1;
  const stallsAcross = Math.floor((u1 - u0 - 2) / STALL_W_M);
  const su0 = u0 + (u1 - u0 - stallsAcross * STALL_W_M) / 2;
  while (v + moduleM <= v1 - 1) {
    for (const [rowV, face] of [[v, 1], [v + STALL_L_M + AISLE_M, -1]] as const) {
      // Stall separator lines and the row's back line.
      for (let i = 0; i <= stallsAcross; i++) bb.box(Layer.marking, su0 + i * STALL_W_M - 0.06, rowV, su0 + i * STALL_W_M + 0.06, rowV + STALL_L_M, MATERIALS.paint, { grain: 0.05 });
      const backV = face > 0 ? rowV : rowV + STALL_L_M;
      bb.box(Layer.marking, su0, backV - 0.06, su0 + stallsAcross * STALL_W_M, backV + 0.06, MATERIALS.paint, { grain: 0.05 });
      for (let i = 0; i < stallsAcross; i++) {
        stalls++;
        if (!dr.chance(o.occupancy)) continue;
        const cu = su0 + (i + 0.5) * STALL_W_M + dr.range(-0.18, 0.18);
        const cv = rowV + STALL_L_M / 2 + dr.range(-0.25, 0.25) * face;
        const nose = dr.chance(0.8) ? -face : face; // most drive in nose first
        bb.vehicle(pickKind(dr, 0.06, 0), cu, cv, (nose * Math.PI) / 2 + dr.range(-0.04, 0.04), dr);
      }
    }
    v += moduleM;
    // Landscaped island between double rows, with trees whose crowns overhang the stall ends.
    if (v + ISLAND_M + moduleM <= v1 - 1) {
      bb.box(Layer.marking, u0 + 1, v + 0.1, u1 - 1, v + ISLAND_M - 0.1, MATERIALS.grass, { tex: 0.3, grain: 0.2 });
      if (o.trees) for (let u = u0 + 5 + rng.range(0, 4); u < u1 - 4; u += rng.range(9, 16)) bb.tree(u, v + ISLAND_M / 2, rng.range(2.4, 3.8), rng.range(6, 11));
      v += ISLAND_M;
    }
  }
  return stalls;
}

export function parkingBlock(bb: BlockBuilder, o: { occupancy: number }): void {
  const { blockM, roadM } = bb.ctx;
  bb.box(Layer.ground, roadM, roadM, blockM, blockM, MATERIALS.grass, { tex: 0.3, grain: 0.2 });
  drawLot(bb, roadM + 1.5, roadM + 1.5, blockM - 1.5, blockM - 1.5, { occupancy: o.occupancy, trees: bb.rng.chance(0.7) });
}

/** Retail strip: a long flat-roofed row of units at the back, a customer lot in front; some units carry arrays. */
export function retailBlock(bb: BlockBuilder, o: { occupancy: number; arrayShare: number; year: number; newUnits?: number[]; newYear?: number }): void {
  const { blockM, roadM } = bb.ctx;
  const rng = bb.rng;
  bb.box(Layer.ground, roadM, roadM, blockM, blockM, MATERIALS.concrete, { tex: 0.08, grain: 0.06 });
  const depth = rng.range(18, 24);
  const vb = blockM - 3 - depth;
  const units = rng.int(3, 5);
  const w = (blockM - roadM - 6) / units;
  const roofs = [MATERIALS.roofMembraneGrey, MATERIALS.roofMembraneWhite, MATERIALS.roofGravel, MATERIALS.roofBitumen];
  for (let i = 0; i < units; i++) {
    const u0 = roadM + 3 + i * w;
    const roof = jitter(rng.pick(roofs), rng, 0.06);
    const planes = bb.building(u0, vb, u0 + w - 0.3, blockM - 3, { pitched: false, roof, heightM: rng.range(6, 9), hvac: rng.int(1, 4) });
    const module: ModuleType = rng.pick(['modern', 'large', 'older'] as const);
    const has = rng.chance(o.arrayShare);
    const landscape = rng.chance(0.5);
    const arrRng = new Rng(rng.int(0, 0x7fffffff)); // drawn always, so the layout does not depend on the date
    const drawn = rng.range(2012, 2027);
    const installedYear = o.newUnits?.includes(i) ? o.newYear ?? 9999 : has ? drawn : 9999;
    if (installedYear <= o.year) bb.fillRoof(planes[0], module, { landscape, share: 0.7, rng: arrRng });
  }
  drawLot(bb, roadM + 2, roadM + 2, blockM - 2, vb - 3, { occupancy: o.occupancy, trees: true });
}
