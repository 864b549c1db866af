// The sample cells on the map: every drawn cell of the shown AOI's sample outlined (checked cells green, cells still
// to check white, the current cell thick and amber), drawn from the design's frame through lon/lat into the view.
// Where a cell reaches past the area's edge, only its part inside the area counts: that part is drawn in the cell's
// colour and the whole square as a faint dotted outline.
import VectorLayer from 'ol/layer/Vector.js';
import VectorSource from 'ol/source/Vector.js';
import Feature from 'ol/Feature.js';
import Polygon from 'ol/geom/Polygon.js';
import { Style, Stroke, Fill, Text } from 'ol/style.js';
import { transform } from 'ol/proj.js';
import type { MapView } from './map-view.ts';
import type { SampleRecord } from './state.ts';
import { createTransform, parseEpsgName } from '../core/crs.ts';
import { clipPolygon } from '../core/oriented-box.ts';
import type { MultiPolygonRings } from '../core/point-in-polygon.ts';
import { flatRing, type SampleCell } from '../core/check-sample.ts';

/** The cell's four corners in its frame, counter-clockwise. */
const cellCorners = (c: SampleCell): number[][] => [[c.x0M, c.y0M], [c.x1M, c.y0M], [c.x1M, c.y1M], [c.x0M, c.y1M]];

const styles = {
  todo: new Style({ stroke: new Stroke({ color: '#ffffff', width: 1.5, lineDash: [4, 3] }) }),
  checked: new Style({ stroke: new Stroke({ color: '#4cc38a', width: 1.5 }), fill: new Fill({ color: 'rgba(76,195,138,0.08)' }) }),
  current: new Style({ stroke: new Stroke({ color: '#f2b134', width: 3 }) }),
  square: new Style({ stroke: new Stroke({ color: 'rgba(255,255,255,0.45)', width: 1, lineDash: [1, 4] }) }),
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

  /** Frame metres of the sample's frame → the view's projection (through lon/lat). */
  private toViewOf(rec: SampleRecord): (p: readonly number[]) => number[] {
    const toLonLat = createTransform(parseEpsgName(rec.frameCrs), 4326);
    const code = this.view.projectionCode();
    return ([x, y]) => transform([...toLonLat([x, y])], 'EPSG:4326', code);
  }

  /** Draw the sample's cells (or nothing), marking `currentCellId`; `aoiPolygons`: the area in the sample's frame. */
  render(rec: SampleRecord | null, currentCellId: string | null, aoiPolygons: MultiPolygonRings | null = null): void {
    this.source.clear();
    if (!rec) return;
    const toView = this.toViewOf(rec);
    const byId = new Map(rec.design.cells.map((c) => [c.id, c]));
    rec.design.sample.forEach((id, k) => {
      const c = byId.get(id);
      if (!c) return;
      const ring = cellCorners(c).map(toView);
      ring.push(ring[0]);
      const state = id === currentCellId ? 'current' : rec.checked.includes(id) ? 'checked' : 'todo';
      const full = c.areaM2 >= (c.x1M - c.x0M) * (c.y1M - c.y0M) * (1 - 1e-9);
      if (full || !aoiPolygons) {
        this.source.addFeature(new Feature({ geometry: new Polygon([ring]), state, label: String(k + 1) }));
        return;
      }
      this.source.addFeature(new Feature({ geometry: new Polygon([ring]), state: 'square', label: String(k + 1) }));
      // the counted part: each ring of the area clipped to the square (display only; the count uses the AOI rule)
      const box = cellCorners(c).flat();
      for (const poly of aoiPolygons) {
        for (const r of poly) {
          const clipped = clipPolygon(flatRing(r), box);
          if (clipped.length < 6) continue;
          const pts: number[][] = [];
          for (let i = 0; i < clipped.length; i += 2) pts.push(toView([clipped[i], clipped[i + 1]]));
          pts.push(pts[0]);
          this.source.addFeature(new Feature({ geometry: new Polygon([pts]), state }));
        }
      }
    });
  }

  /** The cell's extent in the view projection, for zooming to it. */
  extentOf(rec: SampleRecord, cellId: string): [number, number, number, number] | null {
    const c = rec.design.cells.find((x) => x.id === cellId);
    if (!c) return null;
    const pts = cellCorners(c).map(this.toViewOf(rec));
    const xs = pts.map((p) => p[0]), ys = pts.map((p) => p[1]);
    return [Math.min(...xs), Math.min(...ys), Math.max(...xs), Math.max(...ys)];
  }
}
