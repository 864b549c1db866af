// Detections on the map: oriented boxes coloured by class (rejected red, added white, the selected one filled).
// Boxes are drawn as a few MultiPolygon features, one per date × class × review look, so tens of thousands of
// detections cost a few features rather than one OpenLayers Feature each.
import VectorLayer from 'ol/layer/Vector.js';
import VectorSource from 'ol/source/Vector.js';
import Feature from 'ol/Feature.js';
import MultiPolygon from 'ol/geom/MultiPolygon.js';
import Polygon from 'ol/geom/Polygon.js';
import { Style, Stroke, Fill } from 'ol/style.js';
import type { MapView } from './map-view.ts';
import type { AppState } from './state.ts';
import { reviewedTable } from './date-table.ts';
import { boxCornersInto } from '../core/oriented-box.ts';
import { createTransform, parseEpsgName } from '../core/crs.ts';
import { countsUnderRule } from '../core/counts.ts';
import type { ReviewState } from '../core/types.ts';

const classColours = ['#4fd1c5', '#f27f5b', '#b39ddb', '#9ccc65', '#ffd54f', '#64b5f6'];

/** Colour of a class index (the same in map, tables and chart). */
export function classColour(classIdx: number): string { return classColours[classIdx % classColours.length]; }

type Look = 'counted' | 'rejected' | 'added';

function lookOf(score: number, review: ReviewState, minScore: number): Look | null {
  if (review === 'rejected') return 'rejected';
  if (review === 'added') return 'added';
  return countsUnderRule(score, review, minScore) ? 'counted' : null;
}

export class DetectionsLayer {
  private source = new VectorSource({ useSpatialIndex: false });
  private styles = new Map<string, Style>();

  constructor(private view: MapView, private state: AppState) {
    view.overlays.getLayers().push(new VectorLayer({ source: this.source, zIndex: 20, style: (f) => this.styleOf(f as Feature) }));
    for (const ev of ['results-changed', 'review-changed', 'threshold-changed', 'selection-changed'] as const) {
      state.events.on(ev, () => this.rebuild());
    }
    state.events.on('shown-date-changed', () => this.source.changed());
  }

  private styleOf(f: Feature): Style | undefined {
    if (this.state.shownDate !== null && f.get('date') !== this.state.shownDate) return undefined;
    const key = `${f.get('cls')}|${f.get('look')}`;
    let st = this.styles.get(key);
    if (!st) {
      const look = f.get('look') as Look | 'selected';
      const colour = look === 'rejected' ? '#ff7b7b' : look === 'added' ? '#ffffff' : classColour(f.get('cls'));
      st = new Style({
        stroke: new Stroke({ color: look === 'selected' ? '#ffffff' : colour, width: look === 'selected' ? 3.5 : 1.6, lineDash: look === 'rejected' ? [3, 3] : undefined }),
        fill: look === 'selected' ? new Fill({ color: 'rgba(255,255,255,0.25)' }) : undefined,
      });
      this.styles.set(key, st);
    }
    return st;
  }

  /** Rebuild the few bucket features from the results, the slider, review and selection. */
  rebuild(): void {
    const viewEpsg = parseEpsgName(this.view.projectionCode());
    const features: Feature[] = [];
    const xy = new Float64Array(8);
    const sel = this.state.selection;
    for (const d of this.state.results) {
      const rt = reviewedTable(this.state, d);
      const t = rt.table;
      // Corners in the frame, then one hop into the view CRS (none when the view is in the frame, the usual case).
      const toView = createTransform(parseEpsgName(t.frameCrs), viewEpsg);
      const buckets = new Map<string, { cls: number; look: Look; flat: number[]; ends: number[][] }>();
      const ring = (i: number, flat: number[]) => {
        boxCornersInto(t.cxM[i], t.cyM[i], t.lengthM[i], t.widthM[i], t.angleRad[i], xy);
        for (const k of [0, 2, 4, 6, 0]) { const p = toView([xy[k], xy[k + 1]]); flat.push(p[0], p[1]); }
      };
      for (let i = 0; i < t.count; i++) {
        const look = lookOf(t.score[i], rt.review[i], this.state.minScore);
        if (!look) continue;
        const key = `${t.classIdx[i]}|${look}`;
        let b = buckets.get(key);
        if (!b) { b = { cls: t.classIdx[i], look, flat: [], ends: [] }; buckets.set(key, b); }
        ring(i, b.flat);
        b.ends.push([b.flat.length]);
      }
      for (const b of buckets.values()) {
        const f = new Feature(new MultiPolygon(b.flat, 'XY', b.ends));
        f.setProperties({ date: d.dateIso, cls: b.cls, look: b.look }, true);
        features.push(f);
      }
      if (sel && sel.dateIso === d.dateIso && sel.row < t.count) {
        const flat: number[] = [];
        ring(sel.row, flat);
        const f = new Feature(new Polygon(flat, 'XY', [flat.length]));
        f.setProperties({ date: d.dateIso, cls: t.classIdx[sel.row], look: 'selected' }, true);
        features.push(f);
      }
    }
    this.source.clear(true);
    this.source.addFeatures(features);
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
