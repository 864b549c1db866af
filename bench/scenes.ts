// Bench scenes: synthesized once into bench/cache (seamtally synth, 0.3 m, RGB 8-bit COG), and a small manifest per
// scene for the app run whose one area covers a centred square of the scene (so "areas only" runs a tile subset).
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, statSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { createTransform } from '../web/core/crs.ts';
import { pixelToMap } from '../web/core/geotransform.ts';
import { openGeoTiffPath } from '../web/io/geotiff-source.ts';

export const CACHE_DIR = resolve(import.meta.dirname, 'cache');
const REPO = resolve(import.meta.dirname, '..');
/** One seed for every size: the synthesizer's town is a function of world position, so the scenes nest. */
export const BENCH_SEED = 6;

/** Path of the cached `sizePx`² scene, synthesizing it first when missing (minutes for 16 000²). */
export function ensureScene(sizePx: number, log: (s: string) => void): string {
  const name = `bench-${sizePx}`;
  const tif = join(CACHE_DIR, `${name}.tif`);
  if (existsSync(tif)) return tif;
  mkdirSync(CACHE_DIR, { recursive: true });
  log(`synthesizing ${name} (${sizePx} × ${sizePx} px at 0.3 m, once; cached in bench/cache)…`);
  const t0 = performance.now();
  const r = spawnSync(process.execPath, ['bin/seamtally.mjs', 'synth', '--out', CACHE_DIR, '--seed', String(BENCH_SEED), '--gsd', '0.3',
    '--size', String(sizePx), '--name', name, '--quiet'], { cwd: REPO, stdio: ['ignore', 'ignore', 'inherit'] });
  if (r.status !== 0 || !existsSync(tif)) throw new Error(`seamtally synth failed for ${name}`);
  log(`  ${name}: ${((performance.now() - t0) / 1000).toFixed(0)} s, ${(statSync(tif).size / 1e6).toFixed(0)} MB`);
  return tif;
}

/**
 * Write `app-<name>.manifest.json` next to the scene: the scene plus one area, a centred square covering `areaShare`
 * of the scene. Returns the manifest's file name (served by the app at /demo/ when SEAMTALLY_DEMO_DIR = bench/cache).
 */
export async function writeAppManifest(tifPath: string, areaShare: number): Promise<string> {
  const src = await openGeoTiffPath(tifPath);
  const { widthPx, heightPx, georef } = src.info;
  await src.close();
  const side = Math.sqrt(areaShare);
  const x0 = widthPx * (1 - side) / 2, x1 = widthPx * (1 + side) / 2, y0 = heightPx * (1 - side) / 2, y1 = heightPx * (1 + side) / 2;
  const toLonLat = createTransform(georef.epsg, 4326);
  // counter-clockwise in lon/lat (RFC 7946): pixel y grows southward
  const ring = [[x0, y1], [x1, y1], [x1, y0], [x0, y0], [x0, y1]].map(([x, y]) => {
    const ll = toLonLat(pixelToMap(georef.geoTransform, x, y));
    return [Number(ll[0].toFixed(8)), Number(ll[1].toFixed(8))];
  });
  const file = tifPath.split('/').pop()!;
  const name = `app-${file.replace(/\.tif$/, '')}.manifest.json`;
  writeFileSync(join(CACHE_DIR, name), JSON.stringify({
    place: `bench ${file}`,
    scenes: [{ file, date: '2024-06-15' }],
    aois: { type: 'FeatureCollection', features: [{ type: 'Feature', properties: { name: 'bench area' }, geometry: { type: 'Polygon', coordinates: [ring] } }] },
  }));
  return name;
}
