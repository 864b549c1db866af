// The typed page–worker contract: every call the page makes into a worker, with plain-data arguments and results.
// Worker APIs `satisfies` these interfaces; the page wraps workers with comlink as Remote<...> of them.
import type { Result } from '../web/core/errors.ts';
import type { DetectionTable, GeoTransform, MapXY, PixelBox } from '../web/core/types.ts';
import type { SceneInfo } from '../web/core/scene-source.ts';
import type { TilePlan } from '../web/core/tiling.ts';
import type { BandSelection, Stretch } from '../web/core/radiometry.ts';
import type { ValidMask } from '../web/core/valid-mask.ts';

/** A scene's bytes as the workers read them: a File from the picker / drop, or an http(s) URL read by ranges. */
export type SceneInput = { kind: 'file'; file: File } | { kind: 'url'; url: string };

/** Header facts about a scene plus what the page needs to show it. */
export interface SceneDescription {
  info: SceneInfo;
  /** proj4 definition of the scene CRS (for the map). */
  proj4Def: string;
  /** Valid-pixel mask for coverage (core valid-mask.ts, the CLI's rule). */
  mask: ValidMask;
}

/** An RGBA picture of the scene from one of its overviews (display stretch); nodata is transparent. */
export interface ScenePreview {
  widthPx: number;
  heightPx: number;
  rgba: Uint8ClampedArray;
  /** The overview level read (0 = full resolution). */
  level: number;
}

/** What a worker reports after loading a model. */
export interface ModelLoadInfo {
  inputNames: string[];
  outputNames: string[];
  /** Threads per worker actually used (1 unless the page is cross-origin isolated). */
  numThreads: number;
}

/** How a scene is prepared for a run (the same choices the CLI's detect makes). */
export interface ScenePrepareOptions {
  /** Index of the scene within its date's mosaic (goes into DetectionTable.sceneIdx). */
  sceneIdx: number;
  /** EPSG of the metric ground frame the date's detections are expressed in (core runFrameEpsg). */
  frameEpsg: number;
  /** Detections below this score are dropped in the worker (the run's floor, at or below the slider). */
  minScore: number;
  /** Model input size; default the sidecar's tilePx. */
  tilePx?: number;
  /** Overlap per side in model pixels or 'auto' (default). */
  overlapPx?: number | 'auto';
}

/** The tiling and radiometry of a prepared scene (what the page needs to plan, show progress and filter tiles). */
export interface ScenePlanInfo {
  plan: TilePlan;
  bands: BandSelection;
  stretch: Stretch;
}

/** Everything a worker needs to run one tile of one scene. */
export interface TileTask {
  runId: string;
  /** Key of the scene (its fingerprint); the worker keeps one open source per key. */
  sceneKey: string;
  input: SceneInput;
  prepare: ScenePrepareOptions;
  tileIndex: number;
  /**
   * The tile this worker will most likely be sent next (the next of its band): it reads and fills that one while
   * this one infers. A hint only: any other tile may come next.
   */
  nextTileIndex?: number;
  /**
   * Test-only fault (set only when the page was opened with `?fault=`): 'throw' fails the tile, 'crash' kills the
   * worker, 'infer-crash' kills its inference worker.
   */
  fault?: 'throw' | 'crash' | 'infer-crash';
}

/** Per-stage times of one tile, in milliseconds (core TileTimings). */
export interface TileTimingsMs {
  readMs: number;
  resampleMs: number;
  inferMs: number;
  decodeMs: number;
}

/** Detections of one tile (already cut to the tile's core) in the date's ground frame, as typed arrays. */
export interface TileDetections {
  sceneKey: string;
  tileIndex: number;
  skipped: boolean;
  table: DetectionTable;
  timingsMs: TileTimingsMs;
}

/** The detector worker: reads windows straight from the File/URL, runs onnxruntime-web, returns typed arrays. */
export interface DetectorApi {
  describeScene(input: SceneInput): Promise<Result<SceneDescription>>;
  previewScene(input: SceneInput, opts: { maxLongSidePx: number }): Promise<Result<ScenePreview>>;
  loadModel(modelBytes: ArrayBuffer, sidecar: unknown, opts: { numThreads: number }): Promise<Result<ModelLoadInfo>>;
  /** Prepare a scene with the loaded model (stretch, tile plan) and describe its plan. */
  planScene(sceneKey: string, input: SceneInput, opts: ScenePrepareOptions): Promise<Result<ScenePlanInfo>>;
  detectTile(task: TileTask): Promise<Result<TileDetections>>;
  /** Stop work of `runId` as soon as possible (its pending tiles resolve as 'cancelled'). */
  cancel(runId: string): void;
  /** Drop the open source of a scene (e.g. when the scene is removed). */
  forgetScene(sceneKey: string): Promise<void>;
}

/** One scene's valid-pixel mask with what the worker needs to map frame metres into it (core CoverageMask). */
export interface CoverageMaskSpec extends ValidMask {
  geoTransform: GeoTransform;
  sceneEpsg: number;
  sceneWidthPx: number;
  sceneHeightPx: number;
  /** Cores of this scene's tiles that failed (full-resolution scene pixels): counted as not imaged. */
  failedTilesPx?: PixelBox[];
}

/** Boxes of one merged table for the map picture (the drawn columns, `count` rows each). */
export type PictureBoxes = Pick<DetectionTable, 'count' | 'cxM' | 'cyM' | 'lengthM' | 'widthM' | 'angleRad' | 'classIdx'>;

/** One date of the map picture: its boxes in the date's metric frame and how each is drawn. */
export interface PictureDate {
  dateIso: string;
  /** The page's key of the table the boxes come from; `boxes` is sent only with a key the worker does not hold. */
  tableKey: number;
  boxes?: PictureBoxes;
  frameEpsg: number;
  /** Per row: 0 not drawn, 1 counted, 2 rejected, 3 added (workers/draw-detections.ts LOOK_*). */
  look: Uint8Array;
  /** Row drawn as the selected detection, or -1. */
  selectedRow: number;
  /** False when the map shows another date. */
  shown: boolean;
}

/** What the map's detections layer shows (every date; tables not listed are forgotten by the worker). */
export interface DetectionsPicture {
  dates: PictureDate[];
}

/** The part of the map a picture is painted for: extent in the view CRS, map units per CSS pixel, device pixel ratio. */
export interface PictureView {
  extent: [number, number, number, number];
  resolution: number;
  pixelRatio: number;
  viewEpsg: number;
}

/** Merging, coverage and the map's detections picture run off the main thread in the tally worker. */
export interface TallyApi {
  /** Imaged fraction of an AOI (rings in the frame `frameEpsg`) over the masks of one date's scenes (core aoiCoverage). */
  coverage(aoiPolygons: MapXY[][][], frameEpsg: number, masks: CoverageMaskSpec[]): Promise<Result<number>>;
  /** Merge tile tables of one date (core-cut already) with cross-tile / cross-scene NMS in ground metres. */
  mergeDate(tables: DetectionTable[], opts: { iouThreshold?: number }): Promise<Result<DetectionTable>>;
  /** Replace the detections picture (its buffers are transferred). */
  setPicture(picture: DetectionsPicture): Promise<Result<void>>;
  /** Paint the current picture for `view` (the bitmap is transferred). */
  paintPicture(view: PictureView): Promise<Result<ImageBitmap>>;
}
