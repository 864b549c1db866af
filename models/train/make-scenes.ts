// Training / validation / evaluation scene sets for the detector, written with the synthesizer's own scene writer
// (the same code `seamtally synth` runs). The sets never share seeds; the evaluation set also uses a scenario,
// dates (sun angles, seasons) and sensor settings the training set does not.
// Usage: npx tsx models/train/make-scenes.ts train|lowsun|val|val-lowsun|eval|fresh|tiling DIR [count]
// 'val-lowsun' is a low-sun validation set (seeds 5101+, made like 'lowsun'): thresholds are chosen on 'val' and it
// together, so the shipped threshold has seen the light the model must also work in (not only summer towns).
// 'fresh' is a second held-out set made the way 'eval' is (seeds 9201+, its own random draws), kept for one clean
// check after 'eval' had guided training decisions: look at it once per model version, never to choose anything.
import { existsSync, mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { makeSceneParams, type BandLayout, type BitDepth, type SceneOptions } from '../../synth/scene-params.ts';
import { writeScene } from '../../synth/write-scene.ts';
import { fileSink, fileSpools } from '../../cli/file-sink.ts';
import { mulberry32 } from '../../web/core/seeded-random.ts';

/** Small deterministic PRNG (mulberry32) so every set is reproducible. */
const prng = mulberry32;

const LAYOUTS: BandLayout[] = ['rgb', 'rgbn', 'pan', '8'];
const BITS: BitDepth[] = [8, 11, 12, 16];
/** Ground side of a scene in metres (the pixel size follows from the GSD), capped at MAX_PX pixels. */
const SIDE_M = 420;
const MAX_PX = 1200;
const sidePx = (gsdM: number) => Math.min(MAX_PX, Math.round(SIDE_M / gsdM));

function pick<T>(r: () => number, xs: readonly T[]): T { return xs[Math.floor(r() * xs.length)]; }
function dateIn(r: () => number, months: number[]): string {
  const m = pick(r, months);
  return `2024-${String(m).padStart(2, '0')}-${String(1 + Math.floor(r() * 28)).padStart(2, '0')}`;
}

/** The scene options of one set. */
export type SceneSet = 'train' | 'lowsun' | 'val' | 'val-lowsun' | 'eval' | 'fresh' | 'tiling';
const SETS: SceneSet[] = ['train', 'lowsun', 'val', 'val-lowsun', 'eval', 'fresh', 'tiling'];

export function sceneSet(set: SceneSet, count: number): SceneOptions[] {
  const out: SceneOptions[] = [];
  // one large held-out scene for the tiling-invariance check (counts with three tile sizes)
  if (set === 'tiling') return [{ name: 'tiling-4000', seed: 9100, gsdM: 0.3, widthPx: 4000, scenario: 'town', date: '2024-10-20', bands: 'rgb', bits: 8 }];
  if (set === 'eval' || set === 'fresh') {
    // five evaluation GSDs × scenes; held-out seeds (9001+, fresh: 9201+), autumn/winter dates, other sensor settings
    const gsds = [0.15, 0.3, 0.45, 0.6, 0.8];
    const seed0 = set === 'eval' ? 9001 : 9201;
    const r = prng(seed0);
    const per = Math.max(1, Math.round(count / gsds.length));
    for (const g of gsds) {
      for (let k = 0; k < per; k++) {
        const seed = seed0 + out.length;
        out.push({
          name: `${set}-${String(out.length).padStart(2, '0')}-g${g}`, seed, gsdM: g, widthPx: sidePx(g),
          scenario: k % 2 === 0 ? 'business-park' : 'town', date: dateIn(r, [10, 11, 12, 1, 2]),
          bands: LAYOUTS[out.length % 4], bits: BITS[(out.length * 3 + 1) % 4],
          psfSigmaPx: 0.35 + 0.4 * r(), hazeFraction: 0.02 + 0.1 * r(), readNoiseE: 10 + 30 * r(), occupancy: 0.3 + 0.6 * r(),
        });
      }
    }
    return out;
  }
  if (set === 'lowsun' || set === 'val-lowsun') {
    // training stage 3: low sun (long shadows) at any azimuth, seeds 101+ (town scenario only); its validation twin 5101+
    const seed0 = set === 'lowsun' ? 101 : 5101;
    const r = prng(seed0);
    for (let i = 0; i < count; i++) {
      const gsdM = Math.round(Math.exp(Math.log(0.13) + r() * (Math.log(0.85) - Math.log(0.13))) * 1000) / 1000;
      out.push({
        name: `${set}-${String(i).padStart(3, '0')}`, seed: seed0 + i, gsdM, widthPx: sidePx(gsdM), scenario: 'town',
        date: dateIn(r, [3, 4, 5, 6, 7, 8, 9]), bands: pick(r, LAYOUTS), bits: pick(r, BITS),
        sunElevationDeg: 12 + 20 * r(), sunAzimuthDeg: 360 * r(),
        psfSigmaPx: 0.3 + 0.5 * r(), hazeFraction: 0.12 * r() * r(), readNoiseE: 5 + 40 * r(), occupancy: 0.15 + 0.8 * r(),
      });
    }
    return out;
  }
  const r = prng(set === 'train' ? 1 : 5001);
  for (let i = 0; i < count; i++) {
    const g = Math.exp(Math.log(0.13) + r() * (Math.log(0.85) - Math.log(0.13)));
    const gsdM = Math.round(g * 1000) / 1000;
    out.push({
      name: `${set}-${String(i).padStart(3, '0')}`, seed: (set === 'train' ? 1 : 5001) + i, gsdM, widthPx: sidePx(gsdM),
      scenario: 'town', date: dateIn(r, [3, 4, 5, 6, 7, 8, 9]), bands: pick(r, LAYOUTS), bits: pick(r, BITS),
      psfSigmaPx: 0.3 + 0.5 * r(), hazeFraction: 0.12 * r() * r(), readNoiseE: 5 + 40 * r(), occupancy: 0.15 + 0.8 * r(),
      footprintRotDeg: -8 + 16 * r(),
    });
  }
  return out;
}

async function main(): Promise<void> {
  const [set, dir, n] = process.argv.slice(2);
  if (!SETS.includes(set as SceneSet)) throw new Error(`usage: make-scenes.ts ${SETS.join('|')} DIR [count]`);
  mkdirSync(dir, { recursive: true });
  for (const o of sceneSet(set as SceneSet, Number(n ?? (set === 'train' ? 40 : set === 'val' || set === 'val-lowsun' ? 4 : 10)))) {
    const p = makeSceneParams(o);
    const tif = join(dir, `${p.name}.tif`);
    if (existsSync(tif)) continue;
    const sink = fileSink(tif);
    const parts: string[] = [];
    const t0 = performance.now();
    const st = writeScene(p, { tif: sink, newSpool: fileSpools(join(dir, p.name)), truth: (t) => { parts.push(t); } });
    writeFileSync(join(dir, `${p.name}.truth.geojson`), parts.join(''));
    sink.commit();
    process.stderr.write(`${p.name}: ${p.widthPx} px at ${p.gsdM} m, ${p.bands}/${p.bits}-bit, ${p.date}, ${st.truthCount} objects, ${((performance.now() - t0) / 1000).toFixed(1)} s\n`);
  }
}

await main();
