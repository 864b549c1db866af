// Built-up blocks: houses with pitched roofs and gardens, warehouses with flat roofs and arrays, a vehicle depot.
import { Layer } from './prims.ts';
import { MATERIALS, jitter } from './spectra.ts';
import type { BlockBuilder } from './block-builder.ts';
import { pickKind } from './vehicles.ts';
import { Rng } from './rng.ts';
import type { ModuleType } from './solar.ts';
import { drawLot } from './blocks-lots.ts';

/** Roof arrays: installed at a decimal year; present when the scene's date is on or after it. */
export interface ArrayPlan { share: number; year: number; newYear?: number; newShare?: number }

function installed(bb: BlockBuilder, has: boolean, plan: ArrayPlan, isNew: boolean): { on: boolean; rng: Rng } {
  const rng = new Rng(bb.rng.int(0, 0x7fffffff));
  const drawn = bb.rng.range(2012, 2027);
  const year = isNew ? plan.newYear ?? 9999 : has ? drawn : 9999;
  return { on: year <= plan.year, rng };
}

export function housesBlock(bb: BlockBuilder, arrays: ArrayPlan): void {
  const { blockM, roadM } = bb.ctx;
  const rng = bb.rng;
  bb.box(Layer.ground, roadM, roadM, blockM, blockM, jitter(MATERIALS.grass, rng, 0.1), { tex: 0.35, grain: 0.25 });
  const plots = rng.int(3, 4);
  const plotW = (blockM - roadM) / plots;
  const roofs = [MATERIALS.roofRedTile, MATERIALS.roofSlate, MATERIALS.roofBrown, MATERIALS.roofRedTile];
  for (const row of [0, 1]) {
    const vEdge = row === 0 ? roadM : blockM;
    const dir = row === 0 ? 1 : -1;
    for (let i = 0; i < plots; i++) {
      const u0 = roadM + i * plotW;
      const hw = rng.range(8, Math.min(13, plotW - 6));
      const hd = rng.range(8, 11);
      const setback = rng.range(5, 8);
      const hu0 = u0 + rng.range(1.5, plotW - hw - 4.5);
      const hv0 = row === 0 ? vEdge + setback : vEdge - setback - hd;
      const planes = bb.building(hu0, hv0, hu0 + hw, hv0 + hd, { pitched: true, roof: jitter(rng.pick(roofs), rng, 0.08), heightM: rng.range(7, 10) });
      // Driveway beside the house, with 0–2 cars (date dependent).
      const du0 = hu0 + hw + 0.8;
      const dv0 = row === 0 ? vEdge : hv0 - 1;
      const dv1 = row === 0 ? hv0 + hd + 1 : vEdge;
      bb.box(Layer.surface, du0, dv0, du0 + 3, dv1, MATERIALS.paving, { tex: 0.05, grain: 0.08 });
      const dr = bb.ctx.dateRng;
      const cars = dr.chance(0.5) ? 1 : dr.chance(0.4) ? 2 : 0;
      for (let c = 0; c < cars; c++) {
        const cv = vEdge + dir * (3.2 + c * 5.4);
        bb.vehicle(pickKind(dr, 0.08, 0), du0 + 1.5 + dr.range(-0.2, 0.2), cv, (dr.chance(0.5) ? 1 : -1) * Math.PI / 2 + dr.range(-0.05, 0.05), dr);
      }
      // Rooftop array on the better-lit roof half.
      const module: ModuleType = rng.pick(['modern', 'older', 'modern'] as const);
      const best = planes.reduce((a, b) => (Math.cos(b.facingLocalRad + bb.ctx.frame.angleRad - (Math.PI / 2 - (bb.ctx.sunAzimuthDeg * Math.PI) / 180)) > Math.cos(a.facingLocalRad + bb.ctx.frame.angleRad - (Math.PI / 2 - (bb.ctx.sunAzimuthDeg * Math.PI) / 180)) ? b : a));
      const st = installed(bb, rng.chance(arrays.share), arrays, false);
      if (st.on) bb.fillRoof(best, module, { rng: st.rng, pathM: 0.6 });
      // Garden trees behind the house.
      const nTrees = rng.int(0, 3);
      for (let t = 0; t < nTrees; t++) {
        const tv = row === 0 ? hv0 + hd + rng.range(4, 12) : hv0 - rng.range(4, 12);
        bb.tree(u0 + rng.range(3, plotW - 3), tv, rng.range(2, 4.5), rng.range(6, 14));
      }
    }
  }
}

/** Warehouse: one or two big flat roofs, loading docks with trucks, staff parking; arrays on the roofs. */
export function warehouseBlock(bb: BlockBuilder, arrays: ArrayPlan, o: { occupancy: number; newRoof?: number }): void {
  const { blockM, roadM } = bb.ctx;
  const rng = bb.rng;
  bb.box(Layer.ground, roadM, roadM, blockM, blockM, jitter(MATERIALS.concrete, rng, 0.08), { tex: 0.1, grain: 0.06 });
  const two = rng.chance(0.5);
  const roofs = [MATERIALS.roofMembraneGrey, MATERIALS.roofMembraneWhite, MATERIALS.roofMetal, MATERIALS.roofGravel];
  const vTop = blockM - 4;
  const depth = rng.range(34, 46);
  const vb = vTop - depth;
  const spans: [number, number][] = two ? [[roadM + 3, (roadM + blockM) / 2 - 2], [(roadM + blockM) / 2 + 2, blockM - 3]] : [[roadM + 3, blockM - 3]];
  spans.forEach(([u0, u1], k) => {
    const planes = bb.building(u0, vb, u1, vTop, { pitched: false, roof: jitter(rng.pick(roofs), rng, 0.05), heightM: rng.range(9, 13), hvac: rng.int(2, 6) });
    const module: ModuleType = rng.pick(['large', 'modern', 'large'] as const);
    const landscape = rng.chance(0.4);
    const st = installed(bb, rng.chance(arrays.share), arrays, o.newRoof === k);
    if (st.on) bb.fillRoof(planes[0], module, { landscape, share: 0.85, rng: st.rng, pathM: 1.8 });
    // Loading docks on the yard side: trucks and vans backed up to the wall.
    const dr = bb.ctx.dateRng;
    for (let u = u0 + 4; u < u1 - 3; u += 4.2) {
      if (!dr.chance(o.occupancy * 0.6)) continue;
      const kind = dr.chance(0.6) ? 'truck' : 'van';
      bb.vehicle(kind, u, vb - (kind === 'truck' ? 4.6 : 3.3), -Math.PI / 2 + dr.range(-0.03, 0.03), dr);
    }
  });
  drawLot(bb, roadM + 2, roadM + 2, blockM - 2, roadM + 2 + 2 * 5 + 6.5 + 2, { occupancy: o.occupancy, trees: false });
}

/** Depot: a fleet yard with rows of vans and small trucks, a small office, yard markings. */
export function depotBlock(bb: BlockBuilder, arrays: ArrayPlan, o: { occupancy: number }): void {
  const { blockM, roadM } = bb.ctx;
  const rng = bb.rng;
  bb.box(Layer.ground, roadM, roadM, blockM, blockM, jitter(MATERIALS.asphaltOld, rng, 0.06), { tex: 0.12, grain: 0.08 });
  const planes = bb.building(blockM - 30, blockM - 22, blockM - 4, blockM - 4, { pitched: false, roof: MATERIALS.roofMetal, heightM: 8, hvac: 2 });
  const st = installed(bb, rng.chance(arrays.share), arrays, false);
  if (st.on) bb.fillRoof(planes[0], 'large', { landscape: true, rng: st.rng });
  const dr = bb.ctx.dateRng;
  // Fleet bays 3.5 m wide and 9 m deep, in rows along u.
  for (let v = roadM + 3; v + 9 <= blockM - 26; v += 9 + 8) {
    for (let u = roadM + 3; u + 3.5 <= blockM - 3; u += 3.5) {
      bb.box(Layer.marking, u - 0.06, v, u + 0.06, v + 9, MATERIALS.paintYellow, { grain: 0.05 });
      if (!dr.chance(o.occupancy)) continue;
      const kind = dr.chance(0.65) ? 'van' : 'truck';
      bb.vehicle(kind, u + 1.75 + dr.range(-0.15, 0.15), v + 4.5 + dr.range(-0.4, 0.4), (dr.chance(0.7) ? 1 : -1) * Math.PI / 2 + dr.range(-0.03, 0.03), dr);
    }
  }
  // Staff cars near the office.
  for (let u = roadM + 4; u < blockM - 34; u += 2.6) {
    if (dr.chance(o.occupancy * 0.8)) bb.vehicle('car', u, blockM - 8, (dr.chance(0.5) ? 1 : -1) * Math.PI / 2, dr);
  }
}
