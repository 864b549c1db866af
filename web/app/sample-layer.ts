// The sample cells on the map: every drawn cell of the shown AOI's sample outlined (checked cells green, cells still
// to check white, the current cell thick and amber), drawn from the design's frame through lon/lat into the view.
import VectorLayer from 'ol/layer/Vector.js';
import VectorSource from 'ol/source/Vector.js';
import Feature from 'ol/Feature.js';
import Polygon from 'ol/geom/Polygon.js';
import { Style, Stroke, Fill, Text } from 'ol/style.js';
import { transform } from 'ol/proj.js';
import type { MapView } from './map-view.ts';
import type { SampleRecord } from './state.ts';
import { createTransform, parseEpsgName } from '../core/crs.ts';

const styles = {
  todo: new Style({ stroke: new Stroke({ color: '#ffffff', width: 1.5, lineDash: [4, 3] }) }),
  checked: new Style({ stroke: new Stroke({ color: '#4cc38a', width: 1.5 }), fill: new Fill({ color: 'rgba(76,195,138,0.08)' }) }),
  current: new Style({ stroke: new Stroke({ color: '#f2b134', width: 3 }) }),
};

export class SampleLayer {
  readonly source = new VectorSource();
  constructor(private view: MapView) {
    view.overlays.getLayers().push(new VectorLayer({ source: this.source, zIndex: 15, style: (f) => {
      const base = styles[f.get('state') as keyof typeof styles];
      const label = String(f.get('label') ?? '');
      return label ? [base, new Style({ text: new Text({ text: label, font: '600 11px system-ui', fill: new Fill({ color: '#ffffff' }), stroke: new Stroke({ color: '#0f1318', width: 3 }), overflow: true }) })] : base;
    } }));
  }

  /** Draw the sample's cells (or nothing), marking `currentCellId`. */
  render(rec: SampleRecord | null, currentCellId: string | null): void {
    this.source.clear();
    if (!rec) return;
    const toLonLat = createTransform(parseEpsgName(rec.frameCrs), 4326);
    const code = this.view.projectionCode();
    const byId = new Map(rec.design.cells.map((c) => [c.id, c]));
    rec.design.sample.forEach((id, k) => {
      const c = byId.get(id);
      if (!c) return;
      const ring = [[c.x0M, c.y0M], [c.x1M, c.y0M], [c.x1M, c.y1M], [c.x0M, c.y1M], [c.x0M, c.y0M]]
        .map(([x, y]) => transform([...toLonLat([x, y])], 'EPSG:4326', code));
      const state = id === currentCellId ? 'current' : rec.checked.includes(id) ? 'checked' : 'todo';
      this.source.addFeature(new Feature({ geometry: new Polygon([ring]), state, label: String(k + 1) }));
    });
  }

  /** The cell's extent in the view projection, for zooming to it. */
  extentOf(rec: SampleRecord, cellId: string): [number, number, number, number] | null {
    const c = rec.design.cells.find((x) => x.id === cellId);
    if (!c) return null;
    const toLonLat = createTransform(parseEpsgName(rec.frameCrs), 4326);
    const code = this.view.projectionCode();
    const pts = [[c.x0M, c.y0M], [c.x1M, c.y0M], [c.x1M, c.y1M], [c.x0M, c.y1M]].map(([x, y]) => transform([...toLonLat([x, y])], 'EPSG:4326', code));
    const xs = pts.map((p) => p[0]), ys = pts.map((p) => p[1]);
    return [Math.min(...xs), Math.min(...ys), Math.max(...xs), Math.max(...ys)];
  }
}
