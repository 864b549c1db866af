// The OpenLayers map: one view whose projection follows the first scene's CRS (registered through proj4).
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
  /** Switch the view to `code` (when it is still the empty default) and fit `extent` given in `extentCode`. */
  fit(extent: Extent, extentCode: ProjectionLike): void;
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
      const code = getProjection(extentCode)?.getCode() ?? 'EPSG:3857';
      if (isDefaultView && code !== 'EPSG:4326') {
        map.setView(new View({ projection: code, center: [(extent[0] + extent[2]) / 2, (extent[1] + extent[3]) / 2], zoom: 2 }));
        isDefaultView = false;
      }
      const ext = transformExtent(extent, extentCode, view().getProjection());
      view().fit(ext, { padding: [30, 30, 30, 30], maxZoom: 22 });
    },
  };
}
