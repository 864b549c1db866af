// Detections on the map: oriented boxes coloured by class; those below the slider's score or rejected are faint.
import VectorLayer from 'ol/layer/Vector.js';
import VectorSource from 'ol/source/Vector.js';
import Feature from 'ol/Feature.js';
import Polygon from 'ol/geom/Polygon.js';
import { Style, Stroke, Fill } from 'ol/style.js';
import type { MapView } from './map-view.ts';
import type { AppState } from './state.ts';
import { reviewedTable } from './date-table.ts';
import { boxCornersInto } from '../core/oriented-box.ts';
import { createTransform, parseEpsgName } from '../core/crs.ts';
import { countsUnderRule } from '../core/counts.ts';

/** Rows turned into features before yielding the main thread. */
const CHUNK_ROWS = 400;

const classColours = ['#4fd1c5', '#f27f5b', '#b39ddb', '#9ccc65', '#ffd54f', '#64b5f6'];

/** Colour of a class index (the same in map, tables and chart). */
export function classColour(classIdx: number): string { return classColours[classIdx % classColours.length]; }

export class DetectionsLayer {
  // No spatial index: features are replaced wholesale after each merge, and bulk R-tree loading is the slow part.
  private source = new VectorSource({ useSpatialIndex: false });
  private styles = new Map<string, Style>();
  constructor(private view: MapView, private state: AppState) {
    const layer = new VectorLayer({ source: this.source, zIndex: 20, style: (f) => this.styleOf(f as Feature) });
    view.overlays.getLayers().push(layer);
    const refresh = () => layer.changed();
    state.events.on('results-changed', () => this.rebuild());
    state.events.on('review-changed', () => this.refreshReview());
    state.events.on('threshold-changed', refresh);
    state.events.on('selection-changed', refresh);
    state.events.on('shown-date-changed', refresh);
  }

  private styleOf(f: Feature): Style | undefined {
    const s = this.state;
    const date = f.get('date') as string;
    if (s.shownDate !== null && date !== s.shownDate) return undefined;
    const selected = s.selection?.dateIso === date && s.selection.row === f.get('row');
    const counted = countsUnderRule(f.get('score'), f.get('review'), s.minScore);
    if (!counted && !selected && f.get('score') < s.minScore) return undefined;
    const key = `${f.get('cls')}|${counted}|${f.get('review')}|${selected}`;
    let st = this.styles.get(key);
    if (!st) {
      const colour = f.get('review') === 'rejected' ? '#ff7b7b' : f.get('review') === 'added' ? '#ffffff' : classColour(f.get('cls'));
      st = new Style({
        stroke: new Stroke({ color: colour, width: selected ? 3.5 : 1.6, lineDash: counted ? undefined : [3, 3] }),
        fill: new Fill({ color: selected ? 'rgba(255,255,255,0.25)' : 'rgba(0,0,0,0)' }),
      });
      this.styles.set(key, st);
    }
    return st;
  }

  private generation = 0;

  /**
   * Rebuild all features from the state's results (after a merge), in chunks of CHUNK_ROWS rows between which the
   * page gets the main thread back; a newer rebuild supersedes an unfinished one.
   */
  rebuild(): void { void this.rebuildChunked(); }

  private async rebuildChunked(): Promise<void> {
    const gen = ++this.generation;
    const viewEpsg = parseEpsgName(this.view.projectionCode());
    const features: Feature[] = [];
    const xy = new Float64Array(8);
    let sinceYield = 0;
    for (const d of this.state.results) {
      const rt = reviewedTable(this.state, d);
      const t = rt.table;
      // Corners in the frame, then one hop into the view CRS (none when the view is in the frame, the usual case).
      const toView = createTransform(parseEpsgName(t.frameCrs), viewEpsg);
      for (let i = 0; i < t.count; i++) {
        boxCornersInto(t.cxM[i], t.cyM[i], t.lengthM[i], t.widthM[i], t.angleRad[i], xy);
        const flat: number[] = [];
        for (const k of [0, 2, 4, 6, 0]) { const p = toView([xy[k], xy[k + 1]]); flat.push(p[0], p[1]); }
        const f = new Feature(new Polygon(flat, 'XY', [10]));
        f.setProperties({ date: d.dateIso, row: i, cls: t.classIdx[i], score: t.score[i], review: rt.review[i] }, true);
        features.push(f);
        if (++sinceYield >= CHUNK_ROWS) {
          sinceYield = 0;
          await new Promise((r) => setTimeout(r, 0));
          if (gen !== this.generation) return;
        }
      }
    }
    this.source.clear(true);
    this.source.addFeatures(features);
  }

  /** Update review states in place; rebuild only when added boxes changed the row count. */
  private refreshReview(): void {
    const byDate = new Map(this.state.results.map((d) => [d.dateIso, reviewedTable(this.state, d)]));
    const features = this.source.getFeatures();
    const total = [...byDate.values()].reduce((n, rt) => n + rt.table.count, 0);
    if (total !== features.length) { this.rebuild(); return; }
    for (const f of features) {
      const review = byDate.get(f.get('date'))?.review[f.get('row')];
      if (review && review !== f.get('review')) f.set('review', review);
    }
  }

  /** The feature of a detection (to centre the map on it). */
  centreOf(dateIso: string, row: number): number[] | null {
    const f = this.source.getFeatures().find((x) => x.get('date') === dateIso && x.get('row') === row);
    const g = f?.getGeometry() as Polygon | undefined;
    return g ? g.getInteriorPoint().getCoordinates().slice(0, 2) : null;
  }
}
