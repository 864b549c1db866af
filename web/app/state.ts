// The one app state: created in main.ts and passed to every panel; changes are announced on `events`.
import type { DetectionTable, PixelBox, ReviewState } from '../core/types.ts';
import type { SceneInfo } from '../core/scene-source.ts';
import type { Aoi } from '../core/aoi.ts';
import { DEFAULT_MIN_SCORE, type ModelSidecar } from '../core/model-contract.ts';
import type { SceneInput, SceneDescription } from '../../workers/contract.ts';
import type { WorkStore } from './store.ts';
import type { SampleDesign } from '../core/check-sample.ts';
import { EventBus } from './events.ts';

/** Where a scene's bytes come from, as kept (a File cannot be kept, so it is matched by fingerprint on reopen). */
export type SceneOrigin = { kind: 'url'; url: string }
  | { kind: 'file'; name: string; sizeB: number; lastModifiedMs: number; /** File System Access handle (Chromium), kept for one-click reopening. */ handle?: FileSystemFileHandle };

/** A scene as kept in IndexedDB. */
export interface SceneRecord {
  fingerprint: string;
  name: string;
  /** Acquisition date YYYY-MM-DD (from the file, editable). Scenes of one date form one mosaic. */
  dateIso: string;
  /**
   * False while the date is only a suggestion (file name or modification date) the analyst has not confirmed: nothing
   * date-dependent (sun notes, comparisons) is shown for it. Absent in records kept before this field: confirmed.
   */
  dateConfirmed?: boolean;
  origin: SceneOrigin;
  info: SceneInfo;
  /** Radiometry (band choice, per-scene stretch) and CRS definition, as the worker described the scene. */
  description: SceneDescription;
  addedMs: number;
}

/** A scene in this session: the kept record plus, when available, the live File/URL the workers read. */
export interface SceneEntry extends SceneRecord {
  input: SceneInput | null;
}

/** An area of interest in WGS 84 lon/lat (the core's AOI: polygons → rings, exterior first, then holes). */
export type AoiRecord = Aoi;

/** An object the analyst added by drawing its box (review 'added'). Corners in lon/lat, counter-clockwise. */
export interface AddedBox {
  id: string;
  dateIso: string;
  classIdx: number;
  ringLonLat: Array<[number, number]>;
  centreLonLat: [number, number];
}

/**
 * A checked sample of one AOI on one date: the design drawn (cells in the date's metric frame, strata, seed) and the
 * cells the analyst has marked checked. Truths come from the review decisions inside checked cells.
 */
export interface SampleRecord {
  /** `${aoiId}|${dateIso}` */
  key: string;
  aoiId: string;
  dateIso: string;
  /** Metric frame of the run the sample was drawn on ("EPSG:n"); a sample drawn in another frame is not used. */
  frameCrs: string;
  /** The AOI's rings when the sample was drawn (JSON): an edited area makes the sample stale. */
  aoiSignature: string;
  /** Score threshold in force when the sample was drawn (its strata come from the detector counts at it). */
  drawnAtScore: number;
  design: SampleDesign;
  /** Ids of the sample cells marked checked, in the order checked. */
  checked: string[];
  createdMs: number;
}

/** The detector in use: ONNX bytes plus its validated sidecar (kept as plain JSON). */
export interface ModelEntry {
  name: string;
  origin: 'shipped' | 'fixture' | 'user';
  bytes: ArrayBuffer;
  sidecar: ModelSidecar;
  /** Model card text (markdown), when found beside the model. */
  card: string | null;
  /** The sidecar URL a shipped or fixture model was read from (absent for the analyst's own files). */
  url?: string;
}

/** Merged detections of one date (all scenes of that date), scores ≥ the run's floor. */
export interface DateDetections {
  dateIso: string;
  table: DetectionTable;
}

export interface RunProgress {
  status: 'idle' | 'running' | 'merging' | 'done' | 'cancelled' | 'failed';
  tilesDone: number;
  tilesTotal: number;
  /** Tiles that failed for good in this run (reported; their area is left out of coverage). */
  tilesFailed: number;
  startedMs: number;
  /** Tiles per second over the last few seconds. */
  tilesPerS: number;
  message: string;
}

export interface AppState {
  events: EventBus;
  store: WorkStore | null;
  scenes: SceneEntry[];
  aois: AoiRecord[];
  model: ModelEntry | null;
  /** Workers in the pool; default navigator.hardwareConcurrency. */
  poolSize: number;
  /** Only tiles touching an area are run. */
  areasOnly: boolean;
  /** Score threshold of the slider; every count uses it. */
  minScore: number;
  progress: RunProgress;
  /** Scenes being opened now (described, previewed): Detect waits for them. */
  opening: number;
  results: DateDetections[];
  review: Map<string, ReviewState>;
  added: AddedBox[];
  /** Checked samples, one per AOI and date at most. */
  samples: SampleRecord[];
  /** Bumped on every change of `review` or `added` (memoised views of the results compare it). */
  reviewVersion: number;
  /** Currently selected detection (date + row of its reviewed table) for review. */
  selection: { dateIso: string; row: number } | null;
  /** Date whose scenes and detections the map shows (null = all). */
  shownDate: string | null;
  /** True once the analyst picked the shown date; until then it follows the newest date (one date's boxes at a time). */
  shownDateChosen: boolean;
  /** Per scene fingerprint, cores of tiles that failed in the last run (scene pixels): not imaged for coverage. */
  failedTilesPx: Map<string, PixelBox[]>;
}

/** The state at page start (nothing loaded yet). */
export function createAppState(store: WorkStore | null): AppState {
  return {
    events: new EventBus(),
    store,
    scenes: [],
    aois: [],
    model: null,
    poolSize: Math.max(1, Math.min(8, navigator.hardwareConcurrency || 2)),
    areasOnly: false,
    minScore: DEFAULT_MIN_SCORE,
    progress: { status: 'idle', tilesDone: 0, tilesTotal: 0, tilesFailed: 0, startedMs: 0, tilesPerS: 0, message: '' },
    opening: 0,
    results: [],
    review: new Map(),
    added: [],
    samples: [],
    reviewVersion: 0,
    selection: null,
    shownDate: null,
    shownDateChosen: false,
    failedTilesPx: new Map(),
  };
}

/** Dates present among the scenes, ascending, each with its scenes. */
/**
 * The one way to change the counting threshold: rounds to the slider's 0.01 step, stores it in `state.minScore` and
 * tells every consumer (slider, tally, Check queue, map, exports, report read `state.minScore`; nothing keeps a copy).
 */
export function setThreshold(state: AppState, minScore: number): void {
  const v = Math.round(Math.min(0.99, Math.max(0.01, minScore)) * 100) / 100;
  if (v === state.minScore) return;
  state.minScore = v;
  state.events.emit('threshold-changed');
}

/** True unless the scene's date is an unconfirmed suggestion. */
export function isDateConfirmed(s: Pick<SceneRecord, 'dateConfirmed'>): boolean {
  return s.dateConfirmed !== false;
}

/** What an AOI's sample depends on: its rings. */
export function aoiSignature(aoi: AoiRecord): string {
  return JSON.stringify(aoi.polygonsLonLat);
}

/** The AOI's sample on a date that still fits the area and the date's run frame, or null. */
export function liveSample(state: AppState, aoiId: string, dateIso: string, frameCrs: string): SampleRecord | null {
  const s = state.samples.find((x) => x.key === sampleKey(aoiId, dateIso));
  const aoi = state.aois.find((a) => a.id === aoiId);
  return s && aoi && s.frameCrs === frameCrs && s.aoiSignature === aoiSignature(aoi) ? s : null;
}

/** Key of an AOI's sample on a date. */
export function sampleKey(aoiId: string, dateIso: string): string {
  return `${aoiId}|${dateIso}`;
}

export function scenesByDate(state: AppState): Array<{ dateIso: string; scenes: SceneEntry[] }> {
  const m = new Map<string, SceneEntry[]>();
  for (const s of state.scenes) m.set(s.dateIso, [...(m.get(s.dateIso) ?? []), s]);
  return [...m.entries()].sort(([a], [b]) => a.localeCompare(b)).map(([dateIso, scenes]) => ({ dateIso, scenes }));
}

/** Review key of a detection: date + stored key. */
export function reviewKey(dateIso: string, detKey: string): string {
  return `${dateIso}|${detKey}`;
}
