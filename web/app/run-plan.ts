// Planning a run: per date a metric frame, per scene a tile plan (from a worker, as the CLI plans it), the tiles
// to run ("areas only" keeps tiles touching an area), and a key that identifies the run for resuming.
import type { AppState, SceneEntry } from './state.ts';
import { scenesByDate } from './state.ts';
import type { DetectorPool } from './worker-pool.ts';
import type { ScenePrepareOptions, TileTask } from '../../workers/contract.ts';
import type { TilePlan } from '../core/tiling.ts';
import { metricFrameEpsg } from '../core/crs.ts';
import { SeamtallyError, fromErrorInfo } from '../core/errors.ts';
import { tilesTouchingAois } from './tile-filter.ts';

/** Lowest score any run keeps; the slider filters above it (greedy NMS makes this equal to running at the slider value). */
export const RUN_SCORE_FLOOR = 0.2;

export interface PlannedScene { scene: SceneEntry; prepare: ScenePrepareOptions; plan: TilePlan; tileIndices: number[] }
export interface PlannedDate { dateIso: string; frameEpsg: number; scenes: PlannedScene[] }

export interface RunPlan {
  key: string;
  dates: PlannedDate[];
  tasks: Omit<TileTask, 'runId'>[];
  tilesTotal: number;
  /** Σ tiles run / Σ tiles of the full plans (areas only < 1). */
  tileShare: number;
}

async function sha256Hex(text: string): Promise<string> {
  const d = await crypto.subtle.digest('SHA-256', new TextEncoder().encode(text));
  return [...new Uint8Array(d)].map((b) => b.toString(16).padStart(2, '0')).join('');
}

/** The run floor for the loaded model (never above the sidecar's own default). */
export function runFloor(state: AppState): number {
  return Math.min(RUN_SCORE_FLOOR, state.model?.sidecar.minScore ?? RUN_SCORE_FLOOR);
}

/** Plan the run the current state asks for. Throws a SeamtallyError saying what is missing. */
export async function planRun(state: AppState, pool: DetectorPool): Promise<RunPlan> {
  if (!state.model) throw new SeamtallyError('model-invalid', 'No detector is loaded: wait for the shipped model or load one under Detector.');
  if (state.scenes.length === 0) throw new SeamtallyError('bad-argument', 'There is no imagery to run on: open a GeoTIFF scene first.');
  const missing = state.scenes.filter((s) => !s.input);
  if (missing.length) {
    throw new SeamtallyError('bad-argument', `Reopen ${missing.map((s) => s.name).join(', ')} (drop the files again): the browser cannot reopen files from disk by itself.`);
  }
  if (state.areasOnly && state.aois.length === 0) throw new SeamtallyError('bad-argument', '"Areas only" needs at least one area: draw or import one, or switch it off.');
  const minScore = runFloor(state);
  const dates: PlannedDate[] = [];
  const tasks: RunPlan['tasks'] = [];
  let full = 0;
  for (const group of scenesByDate(state)) {
    const g0 = group.scenes[0].info.georef;
    const frameEpsg = metricFrameEpsg(g0.epsg, g0.centreLonLat);
    const planned: PlannedScene[] = [];
    for (const [sceneIdx, scene] of group.scenes.entries()) {
      const prepare: ScenePrepareOptions = { sceneIdx, frameEpsg, minScore };
      const r = await pool.any().planScene(scene.fingerprint, scene.input!, prepare);
      if (!r.ok) throw fromErrorInfo(r.error);
      const plan = r.value.plan;
      full += plan.tiles.length;
      const tiles = state.areasOnly ? tilesTouchingAois(plan, scene.info, state.aois) : plan.tiles;
      const tileIndices = tiles.map((t) => t.index);
      planned.push({ scene, prepare, plan, tileIndices });
      for (const tileIndex of tileIndices) tasks.push({ sceneKey: scene.fingerprint, input: scene.input!, prepare, tileIndex });
    }
    dates.push({ dateIso: group.dateIso, frameEpsg, scenes: planned });
  }
  const identity = {
    model: [state.model.name, state.model.bytes.byteLength, state.model.sidecar],
    dates: dates.map((d) => [d.dateIso, d.scenes.map((s) => s.scene.fingerprint)]),
    minScore,
    areas: state.areasOnly ? state.aois.map((a) => a.polygonsLonLat) : null,
  };
  return { key: await sha256Hex(JSON.stringify(identity)), dates, tasks, tilesTotal: tasks.length, tileShare: full ? tasks.length / full : 1 };
}

/** Key of one tile in the store and in memory. */
export function tileKey(sceneKey: string, tileIndex: number): string {
  return `${sceneKey}/${tileIndex}`;
}
