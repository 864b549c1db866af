// Detections on the map: oriented boxes coloured by class (rejected red, added white, the selected one filled).
// The page only decides how each detection looks (a byte per row) and sends that, with each merged table's boxes
// once, to the tally worker, which paints the picture for the current view (workers/draw-detections.ts); the map
// shows the returned bitmap as an image layer. Drawing tens of thousands of boxes then costs the page a drawImage.
import ImageLayer from 'ol/layer/Image.js';
import ImageSource from 'ol/source/Image.js';
import type { Extent } from 'ol/extent.js';
import { transfer, type Remote } from 'comlink';
import type { MapView } from './map-view.ts';
import type { AppState } from './state.ts';
import { reviewedTable } from './date-table.ts';
import { createTransform, parseEpsgName } from '../core/crs.ts';
import { countsUnderRule } from '../core/counts.ts';
import { fromErrorInfo } from '../core/errors.ts';
import type { ReviewState, DetectionTable } from '../core/types.ts';
import type { DetectionsPicture, PictureBoxes, TallyApi } from '../../workers/contract.ts';
import { LOOK_ADDED, LOOK_COUNTED, LOOK_NONE, LOOK_REJECTED } from '../../workers/draw-detections.ts';

export { classColour } from '../../workers/draw-detections.ts';

function lookOf(score: number, review: ReviewState, minScore: number): number {
  if (review === 'rejected') return LOOK_REJECTED;
  if (review === 'added') return LOOK_ADDED;
  return countsUnderRule(score, review, minScore) ? LOOK_COUNTED : LOOK_NONE;
}

/** The drawn columns of `t`, copied to their own buffers (so they can be transferred). */
function boxesOf(t: DetectionTable): PictureBoxes {
  const n = t.count;
  return { count: n, cxM: t.cxM.slice(0, n), cyM: t.cyM.slice(0, n), lengthM: t.lengthM.slice(0, n), widthM: t.widthM.slice(0, n),
    angleRad: t.angleRad.slice(0, n), classIdx: t.classIdx.slice(0, n) };
}

function blankBitmap(): ImageBitmap {
  const c = new OffscreenCanvas(1, 1);
  c.getContext('2d');
  return c.transferToImageBitmap();
}

/** An image source whose picture is painted by a worker; `redraw` asks for a new one (the old stays until it comes). */
class PaintedSource extends ImageSource {
  redraw(): void {
    this.image = null;
    this.changed();
  }
}

export class DetectionsLayer {
  private source: PaintedSource;
  private tableKeys = new WeakMap<DetectionTable, number>();
  private nextKey = 1;
  /** Table keys whose boxes the worker holds (those of the last picture sent). */
  private sentKeys = new Set<number>();
  private queued = false;
  private failed = false;
  private painting: Promise<unknown> = Promise.resolve();
  private paintSeq = 0;

  constructor(private view: MapView, private state: AppState, private tally: Remote<TallyApi>) {
    this.source = new PaintedSource({ loader: (extent, resolution, pixelRatio) => this.paint(extent, resolution, pixelRatio) });
    view.overlays.getLayers().push(new ImageLayer({ source: this.source, zIndex: 20 }));
    for (const ev of ['results-changed', 'review-changed', 'threshold-changed', 'selection-changed', 'shown-date-changed'] as const) {
      state.events.on(ev, () => this.rebuild());
    }
  }

  /** Redraw from the results, the slider, review, selection and shown date (once per task, however often asked). */
  rebuild(): void {
    if (this.queued) return;
    this.queued = true;
    queueMicrotask(() => {
      this.queued = false;
      this.send();
    });
  }

  private send(): void {
    const state = this.state;
    const picture: DetectionsPicture = { dates: [] };
    const buffers: Transferable[] = [];
    const keys = new Set<number>();
    for (const d of state.results) {
      const rt = reviewedTable(state, d);
      const t = rt.table;
      let key = this.tableKeys.get(t);
      if (key === undefined) { key = this.nextKey++; this.tableKeys.set(t, key); }
      const look = new Uint8Array(t.count);
      for (let i = 0; i < t.count; i++) look[i] = lookOf(t.score[i], rt.review[i], state.minScore);
      const boxes = this.sentKeys.has(key) || keys.has(key) ? undefined : boxesOf(t);
      if (boxes) buffers.push(...[boxes.cxM, boxes.cyM, boxes.lengthM, boxes.widthM, boxes.angleRad, boxes.classIdx].map((c) => c.buffer as ArrayBuffer));
      buffers.push(look.buffer);
      keys.add(key);
      const sel = state.selection;
      picture.dates.push({
        dateIso: d.dateIso, tableKey: key, boxes, frameEpsg: parseEpsgName(t.frameCrs), look,
        selectedRow: sel && sel.dateIso === d.dateIso && sel.row < t.count ? sel.row : -1,
        shown: state.shownDate === null || state.shownDate === d.dateIso,
      });
    }
    this.sentKeys = keys;
    // Messages reach the worker in order, so the paint this redraw asks for sees the new picture.
    void this.tally.setPicture(transfer(picture, buffers)).then((r) => { if (!r.ok) this.report(r.error.message); });
    this.source.redraw();
  }

  /**
   * The source's loader. One paint at a time: a request overtaken by a newer one while it waited (a slider being
   * dragged, a run's merges) is answered with an empty bitmap, which the map never shows, instead of being painted.
   */
  private async paint(extent: Extent, resolution: number, pixelRatio: number): Promise<ImageBitmap> {
    const seq = ++this.paintSeq;
    await this.painting;
    if (seq !== this.paintSeq) return blankBitmap();
    const viewEpsg = parseEpsgName(this.view.projectionCode());
    const job = this.tally.paintPicture({ extent: [extent[0], extent[1], extent[2], extent[3]], resolution, pixelRatio, viewEpsg });
    this.painting = job.catch(() => undefined);
    const r = await job;
    if (!r.ok) { this.report(r.error.message); throw fromErrorInfo(r.error); }
    return r.value;
  }

  /** The first failure to draw is told once (counts and exports are not affected). */
  private report(message: string): void {
    if (this.failed) return;
    this.failed = true;
    this.state.events.emit('notice', { level: 'error', text: `The map cannot show the detections (${message}); counts, review and exports still work. Reload the page to try again.` });
  }

  /** Centre of a detection in view coordinates (to bring it into view while reviewing). */
  centreOf(dateIso: string, row: number): number[] | null {
    const d = this.state.results.find((r) => r.dateIso === dateIso);
    if (!d) return null;
    const t = reviewedTable(this.state, d).table;
    if (row >= t.count) return null;
    return [...createTransform(parseEpsgName(t.frameCrs), parseEpsgName(this.view.projectionCode()))([t.cxM[row], t.cyM[row]])];
  }
}
