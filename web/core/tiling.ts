// Tiling plan: the scene resampled to the model GSD, cut into tiles whose cores partition it, with overlap from object size.
import { SeamtallyError } from './errors.ts';
import type { PixelBox } from './types.ts';
import { sizedAxisPlan } from './sized-axis.ts';

/**
 * Conventions
 * - Planning happens in MODEL pixels over the scene resampled to the model's GSD: scale = sceneGsdM / modelGsdM,
 *   model x = scene x × scale. The resampled grid is modelWidthPx = ceil(sceneWidthPx × scale) wide (same for
 *   height), so it may reach up to one model pixel past the scene's far edge; that sliver reads as nodata.
 * - Square windows (a fixed-input model) are tilePx wide, the fewest per axis that give every core ≥ overlapPx of
 *   context inside the scene, with starts on multiples of alignPx (the network's total downsampling, 32 for the
 *   shipped detector): every tiling then shows the network the same pixel phase, so a car is seen the same way
 *   whatever the tile size (a strided CNN is not shift-invariant: a window moved by a few pixels changes scores near
 *   the threshold). Starts are spread evenly from 0 to the last aligned start (so no thin edge core with a window
 *   shifted over its neighbour's); the last window may reach up to alignPx − 1 model pixels past the scene's far
 *   edge, which reads as nodata. Cores are half-open boxes [min, max) that partition the resampled scene exactly:
 *   every model pixel lies in exactly one core; a core boundary lies in the middle of its two windows' overlap, so
 *   each window holds its core grown by ≥ overlapPx (clipped at scene edges). No core is wider than tilePx −
 *   2·overlapPx inside the scene. Only when the scene itself is no larger than tilePx along an axis is the window the
 *   whole scene along that axis; the pipeline then pads the model input (right/bottom) to tilePx.
 * - Sized windows (`sizeStepPx` set: a model with dynamic height and width) are the model input as they are, at most
 *   tilePx wide or high and a multiple of sizeStepPx (a multiple of alignPx and the output stride), so no window is
 *   padded and none is wider than it needs to be: along each axis the fewest windows share exactly the aligned
 *   overlap with their neighbours and split the rest evenly (see `sizedAxisPlan`). Starts stay on multiples of
 *   alignPx, so the pixel phase the network sees does not change with the tile size.
 * - overheadRatio = Σ window pixels / scene pixels, both in model pixels (padding is not counted; sized windows have
 *   none, and their reach past the far scene edge, < sizeStepPx, is counted).
 */

export interface TilePlanInput {
  sceneWidthPx: number;
  sceneHeightPx: number;
  sceneGsdM: number;
  modelGsdM: number;
  /** The model's square input size in model pixels. */
  tilePx: number;
  /** Largest extent (e.g. the diagonal) of any object class, in metres; drives the automatic overlap. */
  maxObjectExtentM: number;
  /** Overlap on each side in model pixels, or 'auto' (default): see `autoOverlapPx`. */
  overlapPx?: number | 'auto';
  /**
   * Model pixels of context the detector needs around an object for its score not to depend on where a window ends
   * (the sidecar's `contextPx`); added to the automatic overlap. Default AUTO_OVERLAP_MARGIN_PX.
   */
  contextPx?: number;
  /** Extra scene pixels around each integer read window for the resampling kernel. Default 1. */
  readPadPx?: number;
  /** Window starts are multiples of this many model pixels (the network's total stride). Default 1. */
  alignPx?: number;
  /**
   * For a model with dynamic input height and width: window widths and heights are multiples of this (a multiple of
   * alignPx: the lcm of alignPx and the output stride) and at most tilePx, and each window is the model input as it
   * is (rectangular, unpadded). Absent (a model with a fixed input): every window is tilePx square.
   */
  sizeStepPx?: number;
}

export interface PlannedTile {
  index: number;
  col: number;
  row: number;
  /** The tile's core in model pixels (half-open). A detection belongs to the tile whose core holds its centre. */
  corePx: PixelBox;
  /**
   * Holds the core grown by ≥ overlapPx (clipped at scene edges), model pixels (half-open). The model's input: tilePx
   * square (padded when the scene is smaller), or for sized plans this box itself (see `inputSizePx`).
   */
  windowModelPx: PixelBox;
  /** The same window in scene pixels (exact floats): windowModelPx / scale. */
  windowScenePx: PixelBox;
  /** Integer scene-pixel window to read: windowScenePx rounded outward, grown by readPadPx, clipped to the scene. */
  readScenePx: PixelBox;
}

export interface TilePlan {
  sceneWidthPx: number;
  sceneHeightPx: number;
  sceneGsdM: number;
  modelGsdM: number;
  /** sceneGsdM / modelGsdM: model pixels per scene pixel (> 1 means the scene is upsampled). */
  scale: number;
  modelWidthPx: number;
  modelHeightPx: number;
  tilePx: number;
  overlapPx: number;
  /** Window starts are multiples of this (model pixels). */
  alignPx: number;
  /** Window sizes are multiples of this and each window is the model input (dynamic model); null: tilePx² windows. */
  sizeStepPx: number | null;
  /**
   * Largest interior core width (and largest window spacing): tilePx − 2·overlapPx, or for sized plans the largest
   * window (tilePx rounded down to sizeStepPx) less the aligned overlap ceil(2·overlapPx / alignPx)·alignPx.
   */
  coreStepPx: number;
  cols: number;
  rows: number;
  tiles: PlannedTile[];
  /** Pixels inferred / scene pixels, in model pixels. */
  overheadRatio: number;
}

/**
 * Model pixels added to the automatic overlap when the model declares no `contextPx`: context for the detector's
 * receptive field beyond the object's own pixels (a CNN's outputs near a zero-padded window edge are weaker), plus
 * the resampling kernel and rounding.
 */
export const AUTO_OVERLAP_MARGIN_PX = 8;

/**
 * Most model pixels one scene may be planned at (the scene resampled to the model GSD): 2·10¹⁰, about 10 000 tiles of
 * 1 408² cores, days of CPU. Beyond that (a huge scene, or a coarse one enlarged to the model GSD) the plan refuses
 * with a sentence instead of listing millions of tiles.
 */
export const MAX_MODEL_PX = 2e10;

/**
 * Automatic overlap in model pixels: ceil(maxObjectExtentM / 2 / modelGsdM) + contextPx (default
 * AUTO_OVERLAP_MARGIN_PX). `maxObjectExtentM` is the largest extent of an object in any direction (its diagonal for a
 * box). An object whose centre lies in a tile's core reaches at most half that extent beyond the core, so with this
 * overlap it lies wholly inside that tile's window, with `contextPx` of context around it.
 */
export function autoOverlapPx(maxObjectExtentM: number, modelGsdM: number, contextPx = AUTO_OVERLAP_MARGIN_PX): number {
  return Math.ceil(maxObjectExtentM / 2 / modelGsdM - 1e-9) + contextPx;
}

function positive(name: string, v: number): void {
  if (!(typeof v === 'number' && Number.isFinite(v) && v > 0)) {
    throw new SeamtallyError('bad-argument', `The tiling needs ${name} to be a positive number, but it is ${v}.`);
  }
}

/**
 * Cores and windows along one axis. The fewest windows of tilePx with starts on multiples of alignPx that give every
 * core ≥ overlapPx of context on its inner sides (edge cores need no context towards the scene edge): with the
 * aligned step a = floor(step / alignPx) · alignPx and the last start L = ceil((extent − tilePx) / alignPx) · alignPx,
 * n = ceil(L / a) + 1. Starts are alignPx · round(k · (L / alignPx) / (n − 1)), so consecutive starts are ≤ a apart
 * (a rounded spacing never exceeds ceil(L / alignPx / (n − 1)) ≤ a / alignPx units), and each core boundary sits in
 * the middle of the two neighbouring windows' overlap, so both windows reach ≥ overlapPx past it.
 */
function axisPlan(extentPx: number, tilePx: number, overlapPx: number, stepPx: number, alignPx: number) {
  // A scene no larger than one tile is one tile: several cores would share the same window.
  if (extentPx <= tilePx) return { n: 1, core: [[0, extentPx]] as Array<[number, number]>, win: [[0, extentPx]] as Array<[number, number]> };
  const alignedStepPx = Math.floor(stepPx / alignPx) * alignPx;
  const lastUnits = Math.ceil((extentPx - tilePx) / alignPx - 1e-9);
  const n = Math.max(2, Math.ceil((lastUnits * alignPx) / alignedStepPx - 1e-9) + 1);
  const starts: number[] = [];
  for (let k = 0; k < n; k++) starts.push(alignPx * Math.round((k * lastUnits) / (n - 1)));
  const bounds = [0];
  for (let k = 0; k + 1 < n; k++) {
    const sharedPx = starts[k] + tilePx - starts[k + 1]; // ≥ 2·overlapPx because the spacing is ≤ the aligned step
    bounds.push(starts[k + 1] + Math.floor(sharedPx / 2));
  }
  bounds.push(extentPx);
  const core: Array<[number, number]> = [];
  const win: Array<[number, number]> = [];
  for (let k = 0; k < n; k++) {
    core.push([bounds[k], bounds[k + 1]]);
    win.push([starts[k], starts[k] + tilePx]);
  }
  return { n, core, win };
}

/** Plan the tiles of one scene. Throws SeamtallyError('bad-argument') when the overlap leaves no core. */
export function planTiles(input: TilePlanInput): TilePlan {
  const { sceneWidthPx, sceneHeightPx, sceneGsdM, modelGsdM, tilePx, maxObjectExtentM } = input;
  positive('sceneWidthPx', sceneWidthPx); positive('sceneHeightPx', sceneHeightPx);
  positive('sceneGsdM', sceneGsdM); positive('modelGsdM', modelGsdM); positive('tilePx', tilePx);
  if (!Number.isInteger(sceneWidthPx) || !Number.isInteger(sceneHeightPx) || !Number.isInteger(tilePx)) {
    throw new SeamtallyError('bad-argument', 'Scene size and tile size must be whole numbers of pixels.');
  }
  if (!(maxObjectExtentM >= 0)) {
    throw new SeamtallyError('bad-argument', `The largest object extent must be ≥ 0 m, but it is ${maxObjectExtentM}.`);
  }
  const ov = input.overlapPx ?? 'auto';
  const contextPx = input.contextPx ?? AUTO_OVERLAP_MARGIN_PX;
  if (!Number.isInteger(contextPx) || contextPx < 0) {
    throw new SeamtallyError('bad-argument', `The detector's context margin must be a whole number of pixels ≥ 0, not ${contextPx}.`);
  }
  const overlapPx = ov === 'auto' ? autoOverlapPx(maxObjectExtentM, modelGsdM, contextPx) : ov;
  if (!Number.isInteger(overlapPx) || overlapPx < 0) {
    throw new SeamtallyError('bad-argument', `The overlap must be a whole number of pixels ≥ 0 or "auto", not ${ov}.`);
  }
  const alignPx = input.alignPx ?? 1;
  if (!Number.isInteger(alignPx) || alignPx < 1) {
    throw new SeamtallyError('bad-argument', `The tile alignment must be a whole number of pixels ≥ 1, not ${alignPx}.`);
  }
  const stepPx = input.sizeStepPx ?? null;
  if (stepPx !== null && !(Number.isInteger(stepPx) && stepPx >= 1 && stepPx % alignPx === 0)) {
    throw new SeamtallyError('bad-argument', `The window size step must be a whole multiple of the tile alignment (${alignPx} px), not ${stepPx}.`);
  }
  const maxWindowPx = stepPx === null ? tilePx : Math.floor(tilePx / stepPx) * stepPx;
  const coreStepPx = stepPx === null ? tilePx - 2 * overlapPx : maxWindowPx - Math.ceil((2 * overlapPx) / alignPx) * alignPx;
  const noCore = () => new SeamtallyError('bad-argument',
    `An overlap of ${overlapPx} px on each side leaves no core in a ${tilePx} px tile: use a tile larger than ${maxWindowPx - coreStepPx + Math.max(alignPx, stepPx ?? 1)} px or a smaller overlap.`);
  if (coreStepPx < alignPx) throw noCore();
  const scale = sceneGsdM / modelGsdM;
  const modelWidthPx = Math.max(1, Math.ceil(sceneWidthPx * scale - 1e-9));
  const modelHeightPx = Math.max(1, Math.ceil(sceneHeightPx * scale - 1e-9));
  if (modelWidthPx * modelHeightPx > MAX_MODEL_PX) {
    const gpx = (modelWidthPx * modelHeightPx) / 1e9;
    throw new SeamtallyError('too-large',
      `Resampled to the model's ${modelGsdM} m GSD this scene would be ${gpx.toFixed(0)} gigapixels (${modelWidthPx} × ${modelHeightPx} px), more than seamtally plans in one go (${MAX_MODEL_PX / 1e9} gigapixels): cut the scene into parts (e.g. gdal_translate -srcwin) or check its GSD${scale > 1 ? ` — it is ${scale.toFixed(1)}× coarser than the model's and would be enlarged` : ''}.`,
      { modelWidthPx, modelHeightPx });
  }
  const axis = (extentPx: number) => {
    if (stepPx === null) return axisPlan(extentPx, tilePx, overlapPx, coreStepPx, alignPx);
    const sized = sizedAxisPlan(extentPx, maxWindowPx, overlapPx, alignPx, stepPx);
    if (!sized) throw noCore();
    return sized;
  };
  const xs = axis(modelWidthPx), ys = axis(modelHeightPx);
  const pad = input.readPadPx ?? 1;
  const tiles: PlannedTile[] = [];
  let inferredPx = 0;
  for (let r = 0; r < ys.n; r++) {
    for (let c = 0; c < xs.n; c++) {
      const windowModelPx = { minXPx: xs.win[c][0], minYPx: ys.win[r][0], maxXPx: xs.win[c][1], maxYPx: ys.win[r][1] };
      const windowScenePx = {
        minXPx: windowModelPx.minXPx / scale, minYPx: windowModelPx.minYPx / scale,
        maxXPx: windowModelPx.maxXPx / scale, maxYPx: windowModelPx.maxYPx / scale,
      };
      tiles.push({
        index: tiles.length, col: c, row: r,
        corePx: { minXPx: xs.core[c][0], minYPx: ys.core[r][0], maxXPx: xs.core[c][1], maxYPx: ys.core[r][1] },
        windowModelPx, windowScenePx,
        readScenePx: {
          minXPx: Math.max(0, Math.floor(windowScenePx.minXPx + 1e-9) - pad),
          minYPx: Math.max(0, Math.floor(windowScenePx.minYPx + 1e-9) - pad),
          maxXPx: Math.min(sceneWidthPx, Math.ceil(windowScenePx.maxXPx - 1e-9) + pad),
          maxYPx: Math.min(sceneHeightPx, Math.ceil(windowScenePx.maxYPx - 1e-9) + pad),
        },
      });
      inferredPx += (windowModelPx.maxXPx - windowModelPx.minXPx) * (windowModelPx.maxYPx - windowModelPx.minYPx);
    }
  }
  return {
    sceneWidthPx, sceneHeightPx, sceneGsdM, modelGsdM, scale, modelWidthPx, modelHeightPx, tilePx, overlapPx, alignPx,
    sizeStepPx: stepPx, coreStepPx, cols: xs.n, rows: ys.n, tiles, overheadRatio: inferredPx / (modelWidthPx * modelHeightPx),
  };
}

/** The tiles for which `predicate` holds (e.g. windows that touch an AOI or hold any valid pixel). */
export function tilesTouching(plan: TilePlan, predicate: (tile: PlannedTile) => boolean): PlannedTile[] {
  return plan.tiles.filter(predicate);
}

/** Overhead of a subset of tiles: their window pixels / the pixels of their cores (both in model pixels). */
export function subsetOverheadRatio(tiles: readonly PlannedTile[]): number {
  let win = 0, core = 0;
  for (const t of tiles) {
    win += (t.windowModelPx.maxXPx - t.windowModelPx.minXPx) * (t.windowModelPx.maxYPx - t.windowModelPx.minYPx);
    core += (t.corePx.maxXPx - t.corePx.minXPx) * (t.corePx.maxYPx - t.corePx.minYPx);
  }
  return core > 0 ? win / core : 0;
}

/**
 * The model input of a tile, in model pixels: the window itself for sized plans (dynamic-input model), else tilePx
 * square (the window, padded right/bottom when the scene is smaller than a tile).
 */
export function inputSizePx(plan: TilePlan, tile: PlannedTile): { widthPx: number; heightPx: number } {
  if (plan.sizeStepPx === null) return { widthPx: plan.tilePx, heightPx: plan.tilePx };
  const w = tile.windowModelPx;
  return { widthPx: w.maxXPx - w.minXPx, heightPx: w.maxYPx - w.minYPx };
}

/** Convert a model-pixel position of a plan to scene pixels. */
export function modelToScenePx(plan: TilePlan, xModelPx: number, yModelPx: number): [number, number] {
  return [xModelPx / plan.scale, yModelPx / plan.scale];
}

export interface TileSizeInput extends Omit<TilePlanInput, 'tilePx' | 'readPadPx'> {
  /** Smallest tile to consider (the model's nominal tilePx). */
  minTilePx: number;
  /** Largest tile the model takes. */
  maxTilePx: number;
  /**
   * Candidate sizes are minTilePx + k·sizeStepPx (a multiple of the alignment and the output stride); the candidates
   * are planned with sized windows in the same step (`TilePlanInput.sizeStepPx`).
   */
  sizeStepPx: number;
}

/**
 * The tile size for one scene when the model takes a range of input sizes: the candidate with the fewest pixels
 * inferred in all (Σ model-input pixels over the planned windows, as `inputSizePx`), and of equally cheap ones the
 * smallest. With sized windows the cost depends only on the number of windows per axis (each size giving the same grid
 * gives the same windows), so this is the grid with the fewest windows, at the smallest size that fits it. A slack
 * towards smaller sizes (more tiles to share among workers) would cost whole extra windows: for the shipped model
 * (overlap 2·80 px aligned to 160 px, windows ≤ 1 792 px) the fewest-window plan of a large scene infers about
 * (1792 / 1632)² ≈ 1.21× its pixels at most (1.17–1.19 on 8 000² and 16 000²), and one more window per axis would
 * pass 1.2.
 */
export function chooseTilePx(input: TileSizeInput): number {
  const { minTilePx, maxTilePx, sizeStepPx } = input;
  positive('minTilePx', minTilePx); positive('maxTilePx', maxTilePx); positive('sizeStepPx', sizeStepPx);
  const costs: Array<[number, number]> = [];
  for (let t = minTilePx; t <= maxTilePx; t += sizeStepPx) {
    let plan: TilePlan;
    try {
      plan = planTiles({ ...input, tilePx: t });
    } catch {
      continue; // the overlap leaves no core in this size
    }
    let px = 0;
    for (const tile of plan.tiles) { const d = inputSizePx(plan, tile); px += d.widthPx * d.heightPx; }
    costs.push([t, px]);
  }
  if (!costs.length) return maxTilePx; // planTiles will explain why no size works
  const best = Math.min(...costs.map((c) => c[1]));
  return costs.find((c) => c[1] === best)![0];
}

/**
 * A tile's core in full-resolution scene pixels: the part of the scene whose detections only this tile gives. When
 * the tile fails for good this area counts as not imaged (coverage.ts `failedTilesPx`), in the page and in a batch.
 */
export function tileCoreScenePx(plan: Pick<TilePlan, 'scale'>, tile: Pick<PlannedTile, 'corePx'>): PixelBox {
  const k = plan.scale, c = tile.corePx;
  return { minXPx: c.minXPx / k, minYPx: c.minYPx / k, maxXPx: c.maxXPx / k, maxYPx: c.maxYPx / k };
}
