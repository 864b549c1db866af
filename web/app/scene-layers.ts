// Scene pictures on the map: one image layer per scene, drawn from an overview in the scene's own CRS.
import ImageLayer from 'ol/layer/Image.js';
import Static from 'ol/source/ImageStatic.js';
import type { MapView } from './map-view.ts';
import type { ScenePreview } from '../../workers/contract.ts';
import type { SceneEntry } from './state.ts';
import { pixelBoxToMapBox } from '../core/geotransform.ts';

/** Keeps one layer per scene fingerprint; newer dates above older ones. */
export class SceneLayers {
  private layers = new Map<string, { layer: ImageLayer<Static>; url: string }>();
  /** The date shown (null: all), applied to layers added later too. */
  private shownDate: string | null = null;
  constructor(private view: MapView) {}

  /** Add (or replace) the picture of `scene` from its preview. */
  async show(scene: SceneEntry, preview: ScenePreview, proj4Def: string): Promise<void> {
    const code = `EPSG:${scene.info.georef.epsg}`;
    this.view.defineProjection(code, proj4Def);
    const canvas = new OffscreenCanvas(preview.widthPx, preview.heightPx);
    canvas.getContext('2d')!.putImageData(new ImageData(new Uint8ClampedArray(preview.rgba), preview.widthPx, preview.heightPx), 0, 0);
    const url = URL.createObjectURL(await canvas.convertToBlob({ type: 'image/png' }));
    const g = scene.info.georef;
    const box = pixelBoxToMapBox(g.geoTransform, { minXPx: 0, minYPx: 0, maxXPx: g.widthPx, maxYPx: g.heightPx });
    const extent = [box.minX, box.minY, box.maxX, box.maxY];
    const layer = new ImageLayer({
      source: new Static({ url, imageExtent: extent, projection: code, interpolate: true }),
      properties: { fingerprint: scene.fingerprint, dateIso: scene.dateIso },
    });
    this.drop(scene.fingerprint);
    layer.setVisible(this.shownDate === null || this.shownDate === scene.dateIso);
    this.layers.set(scene.fingerprint, { layer, url });
    this.view.scenes.getLayers().push(layer);
    this.order();
    // The view takes the CRS of a scene opened where the map is not looking (another town, another CRS), so that
    // scene is drawn undistorted with a true scale bar; a scene beside those in view joins the view as it is.
    if (!this.view.shows(extent, code)) this.view.focus(extent, code);
  }

  /** Zoom to all scenes. */
  fitAll(scenes: SceneEntry[]): void {
    const s = scenes[0];
    if (!s) return;
    const code = `EPSG:${s.info.georef.epsg}`;
    const ext = [Infinity, Infinity, -Infinity, -Infinity];
    for (const sc of scenes.filter((x) => x.info.georef.epsg === s.info.georef.epsg)) {
      const g = sc.info.georef;
      const b = pixelBoxToMapBox(g.geoTransform, { minXPx: 0, minYPx: 0, maxXPx: g.widthPx, maxYPx: g.heightPx });
      ext[0] = Math.min(ext[0], b.minX); ext[1] = Math.min(ext[1], b.minY);
      ext[2] = Math.max(ext[2], b.maxX); ext[3] = Math.max(ext[3], b.maxY);
    }
    this.view.fit(ext, code);
  }

  /** Show only the scenes of `dateIso` (null: all). */
  showDate(dateIso: string | null): void {
    this.shownDate = dateIso;
    for (const { layer } of this.layers.values()) layer.setVisible(dateIso === null || layer.get('dateIso') === dateIso);
  }

  private drop(fingerprint: string): boolean {
    const old = this.layers.get(fingerprint);
    if (!old) return false;
    this.view.scenes.getLayers().remove(old.layer);
    URL.revokeObjectURL(old.url);
    this.layers.delete(fingerprint);
    return true;
  }

  remove(fingerprint: string): void {
    if (!this.drop(fingerprint)) return;
    // no scene left in the view's CRS: follow the remaining ones
    const rest = [...this.layers.values()].map((l) => l.layer.getSource()!);
    const viewCode = this.view.projectionCode();
    if (rest.length && !rest.some((s) => s.getProjection()?.getCode() === viewCode)) {
      const src = rest[rest.length - 1];
      this.view.focus(src.getImageExtent(), src.getProjection()!);
    }
  }

  private order(): void {
    const sorted = [...this.layers.values()].sort((a, b) => String(a.layer.get('dateIso')).localeCompare(String(b.layer.get('dateIso'))));
    sorted.forEach(({ layer }, i) => layer.setZIndex(i));
  }
}
