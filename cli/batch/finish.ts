// The finishing job of one date: gather its blocks' detection tables in scene and tile order, count the tiles of
// blocks that failed every try as not imaged (as the page does), and make detect's outputs with the same code
// (date-run.ts). Outputs are kept on Redis (gzip) for `batch collect` and written to the batch's folder when this
// worker can reach it.
import { gunzipSync, gzipSync } from 'node:zlib';
import { join } from 'node:path';
import type { Redis } from 'ioredis';
import { parseSidecar } from '../../web/core/model-contract.ts';
import { tileCoreScenePx } from '../../web/core/tiling.ts';
import type { DetectionTable, PixelBox } from '../../web/core/types.ts';
import { closeDateRun, dateOutputs, openDateRun, prepareDate, writeDateOutputs } from '../date-run.ts';
import { decodeBlock } from './block-codec.ts';
import { BLOCK_QUEUE, blockJobId, keys, type BatchPlan, type BlockRef, type BlockResult, type FinishResult } from './queue.ts';

/** BullMQ's key of a block's job (how a parent names its children). */
const jobKey = (prefix: string, batchId: string, b: BlockRef) => `${prefix}:${BLOCK_QUEUE}:${blockJobId(batchId, b)}`;

/** One block that failed every try: its scene, tiles (counted from 1, inclusive) and the error of its last try. */
export interface FailedBlock {
  scene: string;
  firstTile: number;
  lastTile: number;
  error: string;
}

/** Check that a worker planned a scene as submit did (same file, same options → same tiles). */
export function checkTileCount(plan: BatchPlan, dateIdx: number, sceneIdx: number, tiles: number): void {
  const want = plan.dates[dateIdx].tilesPerScene[sceneIdx];
  if (tiles !== want) {
    throw new Error(`Scene ${plan.dates[dateIdx].scenes[sceneIdx]} plans into ${tiles} tiles here but into ${want} at submit: the file changed, or this worker runs another seamtally version. Give every worker the same files and version, then retry the batch.`);
  }
}

/** What BullMQ keeps on the parent: its children's return values and, for those that failed every try, their errors (by job key). */
export interface ChildOutcomes {
  values: Record<string, BlockResult>;
  failures: Record<string, string>;
}

export async function finishDate(data: Redis, prefix: string, plan: BatchPlan, dateIdx: number, children: ChildOutcomes): Promise<FinishResult> {
  const d = plan.dates[dateIdx];
  const sidecar = parseSidecar(plan.sidecarText);
  const run = await openDateRun(d.scenes, plan.aoiText, sidecar, d.date);
  try {
    const pipelines = await prepareDate(run, plan.options);
    pipelines.forEach((p, i) => checkTileCount(plan, dateIdx, i, p.plan.tiles.length));
    const tables: DetectionTable[] = [];
    const failedTilesPx = new Map<number, PixelBox[]>();
    const failedBlocks: FailedBlock[] = [];
    let blockMs = 0, tilesRun = 0;
    for (const b of d.blocks) {
      const bytes = await data.getBuffer(keys(prefix).block(plan.id, b));
      if (!bytes) {
        const p = pipelines[b.sceneIdx];
        const boxes = failedTilesPx.get(b.sceneIdx) ?? [];
        for (let t = b.firstTile; t < b.endTile; t++) boxes.push(tileCoreScenePx(p.plan, p.plan.tiles[t]));
        failedTilesPx.set(b.sceneIdx, boxes);
        const error = children.failures[jobKey(prefix, plan.id, b)] ?? 'its result is missing';
        failedBlocks.push({ scene: d.scenes[b.sceneIdx], firstTile: b.firstTile + 1, lastTile: b.endTile, error });
        continue;
      }
      for (const t of decodeBlock(new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.byteLength))) tables.push(t.table);
      const r = children.values[jobKey(prefix, plan.id, b)];
      blockMs += r?.ms ?? 0;
      tilesRun += r ? r.tiles - r.tilesSkipped : 0;
    }
    const out = dateOutputs(run, pipelines, tables, {
      modelPath: plan.modelFile, features: false, failedTilesPx,
      meta: (mergeMs) => ({ timing: { tilesRun, blockMs, mergeMs }, batch: { id: plan.id, blocks: d.blocks.length, tilesPerJob: plan.tilesPerJob, failedBlocks } }),
    });
    // kept on Redis for collect (a worker may not see the batch's folder); written there now when it can
    const outKey = keys(prefix).outputs(plan.id, dateIdx);
    await data.del(outKey);
    for (const [name, body] of out.files) await data.hset(outKey, name, gzipSync(typeof body === 'string' ? Buffer.from(body) : body));
    let writtenTo: string | null = join(plan.out, d.date);
    try { writeDateOutputs(writtenTo, out.files); } catch { writtenTo = null; }
    return { date: d.date, detections: out.detections.count, failedBlocks: failedBlocks.length, writtenTo };
  } finally {
    await closeDateRun(run);
  }
}

/** A date's output files as the finishing job kept them on Redis (empty when not finished). */
export async function keptOutputs(data: Redis, prefix: string, batchId: string, dateIdx: number): Promise<Map<string, Buffer>> {
  const kept = await data.hgetallBuffer(keys(prefix).outputs(batchId, dateIdx));
  return new Map(Object.entries(kept).map(([name, gz]) => [name, gunzipSync(gz)]));
}
