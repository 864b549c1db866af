// The OpenLayers map: one view whose projection follows the scenes in view (registered through proj4); scenes in
// other CRSs are drawn into it by OpenLayers' raster reprojection.
import OlMap from 'ol/Map.js';
import View from 'ol/View.js';
import LayerGroup from 'ol/layer/Group.js';
import { get as getProjection, transformExtent, type ProjectionLike } from 'ol/proj.js';
import { register } from 'ol/proj/proj4.js';
import proj4 from 'proj4';
import { defaults as defaultControls, ScaleLine } from 'ol/control.js';
import type { Extent } from 'ol/extent.js';

/** The map and the layer groups panels draw into (scenes at the bottom, areas above, detections on top). */
export interface MapView {
  map: OlMap;
  scenes: LayerGroup;
  overlays: LayerGroup;
  /** Current view projection code (e.g. "EPSG:32633"). */
  projectionCode(): string;
  /** Make `code` known to OpenLayers (proj4 definition string); idempotent. */
  defineProjection(code: string, proj4Def: string): void;
  /** Fit `extent` given in `extentCode`, in the current view projection (the default world view: switch to it). */
  fit(extent: Extent, extentCode: ProjectionLike): void;
  /** Switch the view to the CRS `extentCode` (unless geographic) and fit `extent`. */
  focus(extent: Extent, extentCode: ProjectionLike): void;
  /** True when `extent` (in `extentCode`) overlaps what the view shows now (false for the default world view). */
  shows(extent: Extent, extentCode: ProjectionLike): boolean;
}

/** Create the map in `target`. The first fit into a scene CRS switches the view to that CRS. */
export function createMapView(target: HTMLElement): MapView {
  const scenes = new LayerGroup();
  const overlays = new LayerGroup();
  const map = new OlMap({
    target,
    layers: [scenes, overlays],
    controls: defaultControls({ attribution: false, rotate: false }).extend([new ScaleLine({ units: 'metric' })]),
    view: new View({ projection: 'EPSG:3857', center: [0, 0], zoom: 2 }),
  });
  let isDefaultView = true;
  const view = () => map.getView();
  return {
    map,
    scenes,
    overlays,
    projectionCode: () => view().getProjection().getCode(),
    defineProjection(code, proj4Def) {
      if (getProjection(code) && proj4.defs(code)) return;
      proj4.defs(code, proj4Def);
      register(proj4);
    },
    fit(extent, extentCode) {
      if (isDefaultView) { this.focus(extent, extentCode); return; }
      const ext = transformExtent(extent, extentCode, view().getProjection());
      view().fit(ext, { padding: [30, 30, 30, 30], maxZoom: 22 });
    },
    focus(extent, extentCode) {
      const code = getProjection(extentCode)?.getCode() ?? 'EPSG:3857';
      // a geographic CRS would stretch the picture east-west: keep (or fall back to) Web Mercator for those
      const target = code === 'EPSG:4326' ? (isDefaultView ? 'EPSG:3857' : view().getProjection().getCode()) : code;
      if (target !== view().getProjection().getCode()) {
        map.setView(new View({ projection: target, center: [(extent[0] + extent[2]) / 2, (extent[1] + extent[3]) / 2], zoom: 2 }));
      }
      isDefaultView = false;
      view().fit(transformExtent(extent, extentCode, view().getProjection()), { padding: [30, 30, 30, 30], maxZoom: 22 });
    },
    shows(extent, extentCode) {
      if (isDefaultView) return false;
      const size = map.getSize();
      if (!size) return false;
      const shown = view().calculateExtent(size);
      const e = transformExtent(extent, extentCode, view().getProjection());
      return e[0] < shown[2] && e[2] > shown[0] && e[1] < shown[3] && e[3] > shown[1];
    },
  };
}
