// Detections on the map: oriented boxes coloured by class; those below the slider's score or rejected are faint.
import VectorLayer from 'ol/layer/Vector.js';
import VectorSource from 'ol/source/Vector.js';
import Feature from 'ol/Feature.js';
import Polygon from 'ol/geom/Polygon.js';
import { Style, Stroke, Fill } from 'ol/style.js';
import { transform } from 'ol/proj.js';
import type { MapView } from './map-view.ts';
import type { AppState } from './state.ts';
import { reviewedTable } from './date-table.ts';
import { boxRingLonLat } from '../core/export-geojson.ts';
import { createTransform, parseEpsgName } from '../core/crs.ts';
import { countsUnderRule } from '../core/counts.ts';

const classColours = ['#4fd1c5', '#f27f5b', '#b39ddb', '#9ccc65', '#ffd54f', '#64b5f6'];

/** Colour of a class index (the same in map, tables and chart). */
export function classColour(classIdx: number): string { return classColours[classIdx % classColours.length]; }

export class DetectionsLayer {
  private source = new VectorSource();
  private styles = new Map<string, Style>();
  constructor(private view: MapView, private state: AppState) {
    const layer = new VectorLayer({ source: this.source, zIndex: 20, style: (f) => this.styleOf(f as Feature) });
    view.overlays.getLayers().push(layer);
    const refresh = () => layer.changed();
    state.events.on('results-changed', () => this.rebuild());
    state.events.on('review-changed', () => this.rebuild());
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

  /** Rebuild all features from the state's results (after a merge or a review change). */
  rebuild(): void {
    const viewCode = this.view.projectionCode();
    const features: Feature[] = [];
    for (const d of this.state.results) {
      const rt = reviewedTable(this.state, d);
      const t = rt.table;
      const toLonLat = createTransform(parseEpsgName(t.frameCrs), 4326);
      for (let i = 0; i < t.count; i++) {
        const ring = boxRingLonLat(t.cxM[i], t.cyM[i], t.lengthM[i], t.widthM[i], t.angleRad[i], toLonLat, 8)
          .map((p) => transform(p, 'EPSG:4326', viewCode));
        const f = new Feature({ geometry: new Polygon([ring]), date: d.dateIso, row: i, cls: t.classIdx[i], score: t.score[i], review: rt.review[i] });
        features.push(f);
      }
    }
    this.source.clear(true);
    this.source.addFeatures(features);
  }

  /** The feature of a detection (to centre the map on it). */
  centreOf(dateIso: string, row: number): number[] | null {
    const f = this.source.getFeatures().find((x) => x.get('date') === dateIso && x.get('row') === row);
    const g = f?.getGeometry() as Polygon | undefined;
    return g ? g.getInteriorPoint().getCoordinates().slice(0, 2) : null;
  }
}
