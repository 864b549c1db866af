// How a batch is cut into jobs: each scene's planned tiles (core planner, as detect plans them) in runs of
// consecutive tiles, sized so that one job takes tens of seconds.
import type { BlockRef } from './queue.ts';

/** Seconds one block job should take: long enough that the queue's cost per job is small, short enough to spread. */
export const TARGET_JOB_S = 30;

/**
 * A first guess of the CPU time per tile on one core, in ms per model pixel of input (measured with the shipped
 * model: about 200 ms for a 512 px tile, i.e. 0.8 µs per pixel; see bench/batch.md). Only sizes the jobs.
 */
export const EST_MS_PER_INPUT_PX = 0.0008;

/** Tiles per job for tiles of `tilePx`: TARGET_JOB_S of work on one core, at least 1. */
export function defaultTilesPerJob(tilePx: number): number {
  return Math.max(1, Math.round((TARGET_JOB_S * 1000) / (EST_MS_PER_INPUT_PX * tilePx * tilePx)));
}

/** The blocks of one date: for each scene, tiles [k·n, min((k+1)·n, tiles)) in order. */
export function planBlocks(dateIdx: number, tilesPerScene: readonly number[], tilesPerJob: number): BlockRef[] {
  const out: BlockRef[] = [];
  tilesPerScene.forEach((tiles, sceneIdx) => {
    for (let first = 0; first < tiles; first += tilesPerJob) out.push({ dateIdx, sceneIdx, firstTile: first, endTile: Math.min(tiles, first + tilesPerJob) });
  });
  return out;
}
