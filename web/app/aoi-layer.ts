// Areas on the map: a vector layer of the AOIs plus the draw / hole / edit interactions (lon/lat in, lon/lat out).
import VectorLayer from 'ol/layer/Vector.js';
import VectorSource from 'ol/source/Vector.js';
import Feature from 'ol/Feature.js';
import Polygon from 'ol/geom/Polygon.js';
import MultiPolygon from 'ol/geom/MultiPolygon.js';
import Draw from 'ol/interaction/Draw.js';
import Modify from 'ol/interaction/Modify.js';
import { Style, Stroke, Fill, Text } from 'ol/style.js';
import { transform } from 'ol/proj.js';
import type { Coordinate } from 'ol/coordinate.js';
import type { MapView } from './map-view.ts';
import type { AoiRecord } from './state.ts';
import type { LonLatDeg } from '../core/types.ts';

export type AoiTool = 'none' | 'draw' | 'hole' | 'edit';

const style = (f: Feature) => new Style({
  stroke: new Stroke({ color: '#f2b134', width: 2, lineDash: [6, 3] }),
  fill: new Fill({ color: 'rgba(242,177,52,0.06)' }),
  text: new Text({ text: String(f.get('name') ?? ''), font: '600 12px system-ui', fill: new Fill({ color: '#f2b134' }),
    stroke: new Stroke({ color: '#0f1318', width: 3 }), overflow: true }),
});

/** The AOI vector layer and its interactions. Callbacks receive lon/lat rings (closed). */
export class AoiLayer {
  readonly source = new VectorSource();
  private tool: AoiTool = 'none';
  private draw: Draw | null = null;
  private modify: Modify | null = null;

  constructor(private view: MapView, private cb: {
    drawn(ringLonLat: LonLatDeg[]): void;
    holeDrawn(ringLonLat: LonLatDeg[]): void;
    edited(id: string, polygonsLonLat: LonLatDeg[][][]): void;
  }) {
    view.overlays.getLayers().push(new VectorLayer({ source: this.source, style: (f) => style(f as Feature), zIndex: 10 }));
  }

  private toView = (p: LonLatDeg): Coordinate => transform([p[0], p[1]], 'EPSG:4326', this.view.projectionCode());
  private toLonLat = (c: Coordinate): LonLatDeg => {
    const [lon, lat] = transform(c, this.view.projectionCode(), 'EPSG:4326');
    return [Number(lon.toFixed(9)), Number(lat.toFixed(9))];
  };

  /** Redraw all areas (after any change or a change of view projection). */
  render(aois: readonly AoiRecord[]): void {
    this.source.clear();
    for (const a of aois) {
      const coords = a.polygonsLonLat.map((poly) => poly.map((ring) => ring.map(this.toView)));
      const geom = coords.length === 1 ? new Polygon(coords[0]) : new MultiPolygon(coords);
      const f = new Feature({ geometry: geom, name: a.name });
      f.setId(a.id);
      this.source.addFeature(f);
    }
  }

  currentTool(): AoiTool { return this.tool; }

  /** Switch tool: 'draw' a new area, cut a 'hole' into the area under it, 'edit' vertices, or 'none'. */
  setTool(tool: AoiTool): void {
    const map = this.view.map;
    if (this.draw) { map.removeInteraction(this.draw); this.draw = null; }
    if (this.modify) { map.removeInteraction(this.modify); this.modify = null; }
    this.tool = tool;
    if (tool === 'draw' || tool === 'hole') {
      this.draw = new Draw({ type: 'Polygon', style: new Style({ stroke: new Stroke({ color: '#ffffff', width: 2 }), fill: new Fill({ color: 'rgba(255,255,255,0.1)' }) }) });
      this.draw.on('drawend', (e) => {
        const ring = (e.feature.getGeometry() as Polygon).getCoordinates()[0].map(this.toLonLat);
        if (ring.length > 0) {
          const a = ring[0], z = ring[ring.length - 1];
          if (a[0] !== z[0] || a[1] !== z[1]) ring.push(a);
        }
        const done = tool === 'draw' ? this.cb.drawn : this.cb.holeDrawn;
        setTimeout(() => done(ring), 0);
      });
      map.addInteraction(this.draw);
    } else if (tool === 'edit') {
      this.modify = new Modify({ source: this.source });
      this.modify.on('modifyend', (e) => {
        for (const f of e.features.getArray()) {
          const g = f.getGeometry();
          const polys = g instanceof Polygon ? [g.getCoordinates()] : (g as MultiPolygon).getCoordinates();
          this.cb.edited(String(f.getId()), polys.map((p) => p.map((r) => r.map(this.toLonLat))));
        }
      });
      map.addInteraction(this.modify);
    }
  }
}
