// The road strips every block owns (west and south side): lanes, markings, kerb parking and moving traffic.
import { Layer } from './prims.ts';
import { MATERIALS } from './spectra.ts';
import type { BlockBuilder } from './block-builder.ts';
import { pickKind } from './vehicles.ts';

/**
 * Cross-section of a road strip of width R = 13.5 m, from the block edge: 1.5 m pavement, 2.0 m kerb parking,
 * two 3.25 m lanes, 2.0 m kerb parking, 1.5 m pavement (town-street proportions; common practice, no source).
 * Markings: solid lane edges, a dashed centre line (3 m dash, 6 m gap).
 */
export const ROAD_M = 13.5;
const SIDEWALK = 1.5;
const PARK = 2.0;
const LANE = 3.25;

export function drawRoads(bb: BlockBuilder, o: { kerbOccupancy: number; trafficPer100M: number }): void {
  const { blockM } = bb.ctx;
  const R = ROAD_M;
  const m = bb.ctx.rng.chance(0.3) ? MATERIALS.asphaltOld : MATERIALS.asphalt;
  // Intersection square plus the two strips.
  bb.box(Layer.surface, 0, 0, R, R, m, { tex: 0.1, grain: 0.08 });
  for (const vertical of [true, false]) {
    // Strip coordinates: across ∈ [0, R) from the block edge, along ∈ [R, blockM).
    const box = (a0: number, a1: number, l0: number, l1: number, refl: typeof m, tex = 0.1, grain = 0.08, layer: number = Layer.surface) => {
      if (vertical) bb.box(layer, a0, l0, a1, l1, refl, { tex, grain });
      else bb.box(layer, l0, a0, l1, a1, refl, { tex, grain });
    };
    box(0, R, R, blockM, m);
    box(0, SIDEWALK, R, blockM, MATERIALS.paving, 0.06, 0.05);
    box(R - SIDEWALK, R, R, blockM, MATERIALS.paving, 0.06, 0.05);
    const e1 = SIDEWALK + PARK;
    const e2 = R - SIDEWALK - PARK;
    const mid = (e1 + e2) / 2;
    box(e1 - 0.06, e1 + 0.06, R, blockM, MATERIALS.paint, 0, 0.05, Layer.marking);
    box(e2 - 0.06, e2 + 0.06, R, blockM, MATERIALS.paint, 0, 0.05, Layer.marking);
    for (let l = R + 2; l + 3 <= blockM; l += 9) box(mid - 0.075, mid + 0.075, l, l + 3, MATERIALS.paint, 0, 0.05, Layer.marking);

    const rng = bb.ctx.dateRng;
    // Kerb parking, parallel, one slot per 6 m on each side.
    for (const across of [SIDEWALK + PARK / 2, R - SIDEWALK - PARK / 2]) {
      for (let l = R + 4; l + 3 <= blockM - 2; l += 6) {
        if (!rng.chance(o.kerbOccupancy)) continue;
        const along = l + rng.range(-0.4, 0.4);
        const a = across + rng.range(-0.12, 0.12);
        const heading = (rng.chance(0.5) ? 0 : Math.PI) + rng.range(-0.03, 0.03);
        const kind = pickKind(rng, 0.1, 0.0);
        if (vertical) bb.vehicle(kind, a, along, Math.PI / 2 + heading, rng);
        else bb.vehicle(kind, along, a, heading, rng);
      }
    }
    // Moving traffic in both lanes, kept apart by at least 9 m along the lane.
    for (const [laneC, dir] of [[e1 + LANE / 2, -1], [e2 - LANE / 2, 1]] as const) {
      const n = Math.floor(rng.range(0, 2 * o.trafficPer100M * (blockM - R) / 100 + 0.5));
      const spots: number[] = [];
      for (let i = 0; i < n; i++) {
        const along = rng.range(R + 4, blockM - 4);
        if (spots.some((s) => Math.abs(s - along) < 9)) continue;
        spots.push(along);
        const a = laneC + rng.range(-0.35, 0.35);
        const heading = (dir > 0 ? 0 : Math.PI) + rng.range(-0.05, 0.05);
        const kind = pickKind(rng, 0.1, 0.05);
        if (vertical) bb.vehicle(kind, a, along, Math.PI / 2 + heading, rng);
        else bb.vehicle(kind, along, a, heading, rng);
      }
    }
  }
  // Turning cars in the intersection at any heading.
  if (bb.ctx.dateRng.chance(0.35)) bb.vehicle('car', R / 2 + bb.ctx.dateRng.range(-2, 2), R / 2 + bb.ctx.dateRng.range(-2, 2), bb.ctx.dateRng.range(0, 2 * Math.PI), bb.ctx.dateRng);
}
