// Writes one synthetic scene: the COG (streamed tile by tile) and its truth GeoJSON; the public entry of synth/.
import type { SceneParams } from './scene-params.ts';
import { SceneRenderer } from './render.ts';
import { writeCog, type ByteSink, type CogWriteStats, type Spool } from './cog-writer.ts';
import { geoTiffTags } from './geotiff-tags.ts';
import { bandNames } from './spectra.ts';
import { writeTruthGeoJson } from './truth.ts';
import { worldOf } from './world.ts';

export interface SceneOutputs {
  /** Receives the .tif bytes. */
  tif: ByteSink;
  newSpool: () => Spool;
  /** Receives the truth GeoJSON text in chunks. */
  truth: (text: string) => void;
}

export interface WriteSceneStats { cog: CogWriteStats; truthCount: number; renderMs: number; totalMs: number }

/** Radiometric metadata written into the GeoTIFF (GDAL_METADATA) alongside band names. */
export function sceneMetadata(p: SceneParams): Record<string, string> {
  return {
    ACQUISITION_DATE: p.date,
    RADIOMETRIC_BITS: String(p.bits),
    SUN_AZIMUTH_DEG: p.sunAzimuthDeg.toFixed(2),
    SUN_ELEVATION_DEG: p.sunElevationDeg.toFixed(2),
    GSD_M: String(p.gsdM),
    SYNTH_SEED: String(p.seed),
    SYNTH_SCENARIO: p.scenario,
  };
}

/** Options: COG flavour (default auto), a per-tile callback, world blocks cached (default 128). */
export function writeScene(p: SceneParams, out: SceneOutputs, o: { flavour?: 'classic' | 'bigtiff' | 'auto'; onTile?: (done: number) => void; blockCache?: number } = {}): WriteSceneStats {
  const t0 = performance.now();
  let r: SceneRenderer | null = new SceneRenderer(p, { blockCache: o.blockCache });
  let renderMs = 0;
  const tileSamples = p.tilePx * p.tilePx * bandNames(p.bands).length;
  const outBuf = p.bits === 8 ? new Uint8Array(tileSamples) : new Uint16Array(tileSamples);
  let tiles = 0;
  const cog = writeCog({
    widthPx: p.widthPx, heightPx: p.heightPx, bandCount: bandNames(p.bands).length, bitsPerSample: p.bits === 8 ? 8 : 16,
    photometric: p.bands === 'rgb' || p.bands === 'rgbn' ? 'rgb' : 'minisblack', tilePx: p.tilePx, flavour: o.flavour,
    extraTags: geoTiffTags({ epsg: p.epsg, originXM: p.originXM, originYM: p.originYM, gsdM: p.gsdM, nodata: 0, date: p.date, bandNames: bandNames(p.bands), metadata: sceneMetadata(p) }),
  }, (x0Px, y0Px, wPx, hPx) => {
    const t = performance.now();
    const a = r!.render({ x0Px, y0Px, wPx, hPx }, outBuf); // the writer copies it at once, so one buffer serves all tiles
    renderMs += performance.now() - t;
    o.onTile?.(++tiles);
    return a;
  }, out.tif, out.newSpool);
  r = null; // let the renderer's block cache go before the truth pass builds its own
  const truthCount = writeTruthGeoJson(p, out.truth, worldOf(p, o.blockCache));
  return { cog, truthCount, renderMs, totalMs: performance.now() - t0 };
}
