// Open blocks: a park with trees, paths and a pond; bare or grassy fields; a ground-mounted solar field.
import { Layer, poly } from './prims.ts';
import { MATERIALS, jitter } from './spectra.ts';
import type { BlockBuilder } from './block-builder.ts';
import { toWorld } from './prims.ts';
import { maxModules, type ModuleType } from './solar.ts';

export function parkBlock(bb: BlockBuilder): void {
  const { blockM, roadM, frame } = bb.ctx;
  const rng = bb.rng;
  bb.box(Layer.ground, roadM, roadM, blockM, blockM, jitter(rng.chance(0.3) ? MATERIALS.grassDry : MATERIALS.grass, rng, 0.1), { tex: 0.4, grain: 0.25 });
  const mid = (roadM + blockM) / 2;
  bb.box(Layer.surface, roadM, mid - 1.2, blockM, mid + 1.2, MATERIALS.paving, { tex: 0.05, grain: 0.1 });
  if (rng.chance(0.6)) {
    // Pond: an irregular convex polygon.
    const cu = rng.range(roadM + 20, blockM - 20);
    const cv = rng.range(mid + 14, blockM - 14);
    const r = rng.range(8, 13);
    const pts: number[] = [];
    for (let k = 0; k < 14; k++) {
      const a = (k / 14) * 2 * Math.PI;
      const [x, y] = toWorld(frame, cu + Math.cos(a) * r * (1 + 0.25 * Math.cos(2 * a)), cv + Math.sin(a) * r * 0.75);
      pts.push(x, y);
    }
    bb.out.prims.push(poly(Layer.surface, pts, jitter(MATERIALS.water, rng, 0.2), { tex: 0.1, grain: 0.03 }));
  }
  const n = rng.int(10, 26);
  for (let i = 0; i < n; i++) {
    const u = rng.range(roadM + 4, blockM - 4);
    const v = rng.range(roadM + 4, blockM - 4);
    if (Math.abs(v - mid) < 4) continue;
    bb.tree(u, v, rng.range(2.5, 6), rng.range(8, 18));
  }
}

export function fieldBlock(bb: BlockBuilder): void {
  const { blockM, roadM } = bb.ctx;
  const rng = bb.rng;
  const m = rng.pick([MATERIALS.soil, MATERIALS.soilDark, MATERIALS.grassDry, MATERIALS.grass]);
  bb.box(Layer.ground, roadM, roadM, blockM, blockM, jitter(m, rng, 0.1), { tex: 0.45, grain: 0.2 });
  // Tractor lines across bare fields.
  if (m === MATERIALS.soil || m === MATERIALS.soilDark) {
    for (let u = roadM + 2; u < blockM - 1; u += rng.range(2.5, 4)) bb.box(Layer.surface, u, roadM + 1, u + 0.5, blockM - 1, jitter(m, rng, 0.1), { tex: 0.3, grain: 0.2 });
  }
  for (let u = roadM + 3; u < blockM - 3; u += rng.range(7, 14)) if (rng.chance(0.5)) bb.tree(u, blockM - 3, rng.range(2, 4), rng.range(6, 12));
}

/**
 * Ground-mounted PV: tilted rows (25° facing the equator) of two portrait modules deep; each row is one contiguous
 * array of at most 25 m, rows separated by their shadow spacing, installations separated by service aisles.
 */
export function solarFieldBlock(bb: BlockBuilder): void {
  const { blockM, roadM } = bb.ctx;
  const rng = bb.rng;
  bb.box(Layer.ground, roadM, roadM, blockM, blockM, jitter(MATERIALS.grassDry, rng, 0.1), { tex: 0.35, grain: 0.2 });
  const module: ModuleType = rng.pick(['large', 'modern'] as const);
  const tilt = rng.range(18, 30);
  const depthM = 2 * (module === 'large' ? 2.298 : 1.742) * Math.cos((tilt * Math.PI) / 180);
  const spacing = rng.range(2.5, 4.5);
  const { cols: maxCols } = maxModules(module, false);
  const cols = rng.int(Math.floor(maxCols * 0.6), maxCols);
  const pitchU = cols * 1.154 + 4;
  // Rows face local −v (towards the equator for a northern scene when the grid is near north-up).
  for (let u = roadM + 3; u + cols * 1.154 <= blockM - 3; u += pitchU) {
    for (let v = roadM + 3; v + depthM <= blockM - 3; v += depthM + spacing) {
      bb.array(u + (cols * 1.154) / 2, v + depthM / 2, 0, cols, 2, module, { kind: 'ground', tiltDeg: tilt, facingLocalRad: -Math.PI / 2, heightM: 0.6 + depthM * Math.tan((tilt * Math.PI) / 180) });
    }
  }
}
