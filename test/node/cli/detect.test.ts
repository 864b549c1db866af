// `seamtally detect` end to end with the fixture ONNX model (run by onnxruntime-node) on GDAL-written scenes:
// tiling invariance (every planted square found once for several tile sizes / overlaps, across two scenes of one date
// in different UTM zones and GSDs) and one clear sentence + non-zero exit for each kind of bad input.
import { spawnSync } from 'node:child_process';
import { copyFileSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { runCli } from '../../helpers/cli.ts';
import { createTransform } from '../../../web/core/crs.ts';
import { planTiles } from '../../../web/core/tiling.ts';
import { makeBlobScenes, SQUARE_M, type BlobScenes } from '../../fixtures/blob-scenes.ts';
import { writeGeoTiff } from '../../fixtures/gdal-scenes.ts';

const MODEL = 'test/fixtures/fixture-model.onnx';
const dir = mkdtempSync(join(tmpdir(), 'seamtally-detect-'));
let fx: BlobScenes;

beforeAll(() => {
  fx = makeBlobScenes(dir);
});

/** Run the CLI in-process through the dispatcher; returns exit code and what it wrote to stderr. */
const cli = (args: string[]) => runCli(['detect', ...args]);

afterEach(() => vi.restoreAllMocks());

interface Feature { geometry: { coordinates: number[][][] }; properties: { class: string; scene: string } }

/** Detected centres in EPSG:32632 (mean of each box polygon's 4 corners). */
function detectedCentres(out: string): [number, number][] {
  const fc = JSON.parse(readFileSync(join(out, 'detections.geojson'), 'utf8')) as { features: Feature[] };
  const toUtm = createTransform(4326, 32632);
  return fc.features.map((f) => {
    const ring = f.geometry.coordinates[0].slice(0, 4).map((p) => toUtm([p[0], p[1]]));
    return [ring.reduce((a, p) => a + p[0], 0) / 4, ring.reduce((a, p) => a + p[1], 0) / 4];
  });
}

/** One-to-one match of detections to planted objects within tolM. */
function matchAll(dets: [number, number][], truth: { xM: number; yM: number }[], tolM: number) {
  const used = new Set<number>();
  let matched = 0;
  for (const t of truth) {
    let best = -1, bestD = Infinity;
    dets.forEach((d, i) => {
      const dd = Math.hypot(d[0] - t.xM, d[1] - t.yM);
      if (!used.has(i) && dd < bestD) { bestD = dd; best = i; }
    });
    if (best >= 0 && bestD <= tolM) { used.add(best); matched++; }
  }
  return { matched, extra: dets.length - used.size };
}

function countsRow(out: string, aoi: string): { count: number; coverage: number } {
  const j = JSON.parse(readFileSync(join(out, 'counts.json'), 'utf8')) as { rows: { aoiName: string; count: number; coverage: number }[] };
  const r = j.rows.find((x) => x.aoiName === aoi);
  if (!r) throw new Error(`no counts row for ${aoi}`);
  return r;
}

describe('tiling invariance (fixture model, bright squares at known positions)', () => {
  // Three tilings of scene A (0.3 m = the model GSD): core steps 36, 56 and 92 px.
  const tilings = [
    { tile: '64', overlap: '14' },
    { tile: '96', overlap: '20' },
    { tile: '128', overlap: 'auto' },
  ];
  for (const t of tilings) {
    it(`scene A alone, tile ${t.tile} px, overlap ${t.overlap}: every square once`, async () => {
      const inA = fx.objects.filter((o) => o.inA);
      // The fixture must really put squares across seams and at tile corners for this tiling (else the test is void).
      const plan = planTiles({ sceneWidthPx: 300, sceneHeightPx: 300, sceneGsdM: 0.3, modelGsdM: 0.3, tilePx: Number(t.tile), maxObjectExtentM: 4.7, overlapPx: t.overlap === 'auto' ? 'auto' : Number(t.overlap) });
      const half = SQUARE_M / 2 / 0.3;
      const seamsX = new Set(plan.tiles.map((k) => k.corePx.minXPx).filter((v) => v > 0));
      const seamsY = new Set(plan.tiles.map((k) => k.corePx.minYPx).filter((v) => v > 0));
      const crosses = (c: number, seams: Set<number>) => [...seams].some((s) => c - half < s && c + half > s);
      const px = inA.map((o) => [(o.xM - fx.ulA[0]) / 0.3, (fx.ulA[1] - o.yM) / 0.3]);
      expect(px.filter(([x, y]) => crosses(x, seamsX) || crosses(y, seamsY)).length).toBeGreaterThanOrEqual(3);
      expect(px.filter(([x, y]) => crosses(x, seamsX) && crosses(y, seamsY)).length).toBeGreaterThanOrEqual(1);

      const out = join(dir, `out-a-${t.tile}`);
      const r = await cli([fx.pathA, '--aoi', fx.aoiAll, '--model', MODEL, '--out', out, '--tile', t.tile, '--overlap', t.overlap, '--quiet']);
      expect(r.err).toBe('');
      expect(r.rc).toBe(0);
      const dets = detectedCentres(out);
      const m = matchAll(dets, inA, 0.05); // scene A is at the model GSD: centres land on the planted pixel centres
      expect(m).toEqual({ matched: inA.length, extra: 0 });
      expect(countsRow(out, 'all').count).toBe(inA.length);
    });
  }

  it('two overlapping scenes of one date (UTM 32 at 0.3 m + UTM 33 at 0.5 m, 12-bit RGB+NIR) count each square once', async () => {
    const both = fx.objects.filter((o) => o.inA && o.inB).length;
    expect(both).toBeGreaterThanOrEqual(4); // the overlap really holds shared squares
    for (const tile of ['64', '128']) {
      const out = join(dir, `out-ab-${tile}`);
      const r = await cli([fx.pathA, fx.pathB, '--aoi', fx.aoiAll, '--model', MODEL, '--out', out, '--tile', tile, '--quiet']);
      expect(r.rc, r.err).toBe(0);
      const m = matchAll(detectedCentres(out), fx.objects, 0.6);
      expect(m).toEqual({ matched: fx.objects.length, extra: 0 });
      expect(countsRow(out, 'all').count).toBe(fx.objects.length);
    }
  });

  it('scene B alone (upsampled 0.5 → 0.3 m, NIR band ignored) finds its squares', async () => {
    const out = join(dir, 'out-b');
    const r = await cli([fx.pathB, '--aoi', fx.aoiAll, '--model', MODEL, '--out', out, '--tile', '96', '--quiet']);
    expect(r.rc, r.err).toBe(0);
    const inB = fx.objects.filter((o) => o.inB);
    expect(matchAll(detectedCentres(out), inB, 0.6)).toEqual({ matched: inB.length, extra: 0 });
  });

  it('per-AOI counts follow the centre rule (west AOI), and the outputs are written', async () => {
    const out = join(dir, 'out-aoi');
    const aoi = join(dir, 'two-aois.geojson');
    const all = JSON.parse(readFileSync(fx.aoiAll, 'utf8'));
    const west = JSON.parse(readFileSync(fx.aoiWest, 'utf8'));
    writeFileSync(aoi, JSON.stringify({ type: 'FeatureCollection', features: [...all.features, ...west.features] }));
    const r = await cli([fx.pathA, '--aoi', aoi, '--model', MODEL, '--out', out, '--quiet']);
    expect(r.rc, r.err).toBe(0);
    expect(countsRow(out, 'west').count).toBe(fx.westCount);
    expect(countsRow(out, 'west').coverage).toBeCloseTo(1, 2);
    expect(readFileSync(join(out, 'counts.csv'), 'utf8').split('\r\n')[0]).toMatch(/^aoi_id,aoi,date,class,count/);
  });
});

describe('notes in counts.json and on stderr (the app\'s caveats, upsampling and low-sun notes)', () => {
  it('scene B (0.5 m, upsampled to 0.3 m) on the December solstice with a sidecar that declares a low-sun shift', async () => {
    const m = join(dir, 'sunny.onnx');
    copyFileSync(MODEL, m);
    const sc = JSON.parse(readFileSync('test/fixtures/fixture-model.model.json', 'utf8'));
    sc.lowSun = { belowDeg: 32, countBiasPct: { blob: 6 } };
    writeFileSync(join(dir, 'sunny.model.json'), JSON.stringify(sc));
    const out = join(dir, 'out-notes');
    const r = await cli([fx.pathB, '--aoi', fx.aoiAll, '--model', m, '--out', out, '--tile', '96', '--date', '2024-12-21']);
    expect(r.rc, r.err).toBe(0);
    const notes = (JSON.parse(readFileSync(join(out, 'counts.json'), 'utf8')) as { notes: { gsdM: number; caveats: { className: string; pxAcross: number; level: string }[]; upsampling: string | null; noonSunDeg: number; lowSun: { className: string }[] } }).notes;
    expect(notes.gsdM).toBeCloseTo(0.5, 3);
    // 3.3 m across / 0.5 m GSD = 6.6 px: above Johnson detection (2 px), below recognition (8 px), no measured recall
    expect(notes.caveats).toHaveLength(1);
    expect(notes.caveats[0].pxAcross).toBeCloseTo(6.6, 2);
    expect(notes.caveats[0].level).toBe('use-with-care');
    expect(notes.upsampling).toMatch(/upsampled to the model's 0\.3 m/);
    // Noon sun at ~48° N on the December solstice: 90° − φ − 23.44° (spherical astronomy, common practice)
    expect(Math.abs(notes.noonSunDeg - (90 - 48 - 23.44))).toBeLessThan(0.6);
    expect(notes.lowSun.map((n) => n.className)).toEqual(['blob']);
    if (process.env.SHOW_ERRORS) console.log(r.err.trim());
    expect(r.err).toMatch(/blob at 0\.5 m GSD: use with care/);
    expect(r.err).toMatch(/Upsampling adds no information/);
    expect(r.err).toMatch(/Low sun: at most 19° at noon/);
    expect(r.err).toMatch(/estimates.*verify/);
  });

  it('scene A at the model GSD in June: no upsampling and no low-sun note', async () => {
    const out = join(dir, 'out-notes-june');
    const r = await cli([fx.pathA, '--aoi', fx.aoiAll, '--model', MODEL, '--out', out, '--tile', '96', '--date', '2024-06-20', '--quiet']);
    expect(r.rc, r.err).toBe(0);
    expect(r.err).toBe('');
    const notes = (JSON.parse(readFileSync(join(out, 'counts.json'), 'utf8')) as { notes: { upsampling: string | null; noonSunDeg: number; lowSun: unknown[] } }).notes;
    expect(notes.upsampling).toBeNull();
    expect(Math.abs(notes.noonSunDeg - (90 - 48 + 23.44))).toBeLessThan(0.6);
    expect(notes.lowSun).toEqual([]);
  });
});

describe('the real command line', () => {
  it('`node bin/seamtally.mjs detect` (plain Node ESM through tsx, no vitest interop) writes the three files', () => {
    const out = join(dir, 'out-bin');
    const r = spawnSync(process.execPath, ['bin/seamtally.mjs', 'detect', fx.pathA, '--aoi', fx.aoiAll, '--model', MODEL, '--out', out, '--tile', '96'], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/tiles \d+\/\d+, [\d.]+ MPix\/s/);
    expect(countsRow(out, 'all').count).toBe(fx.objects.filter((o) => o.inA).length);
  });
});

describe('bad input: one clear sentence and a non-zero exit', () => {
  const one = (err: string) => err.trim().split('\n').filter(Boolean);
  const base = (scene: string, aoi?: string, model = MODEL) => [scene, '--aoi', aoi ?? fx.aoiAll, '--model', model, '--out', join(dir, 'bad-out'), '--quiet'];

  it('not a TIFF', async () => {
    const p = join(dir, 'notes.tif');
    writeFileSync(p, 'these are field notes, not an image\n');
    const r = await cli(base(p));
    expect(r.rc).not.toBe(0);
    expect(one(r.err)).toHaveLength(1);
    if (process.env.SHOW_ERRORS) console.log(r.err.trim());
    expect(r.err).toMatch(/not a TIFF/);
  });

  it('truncated file', async () => {
    const p = join(dir, 'cut.tif');
    const bytes = readFileSync(fx.pathA);
    writeFileSync(p, bytes.subarray(0, Math.floor(bytes.length / 2)));
    const r = await cli(base(p));
    expect(r.rc).not.toBe(0);
    expect(one(r.err)).toHaveLength(1);
    if (process.env.SHOW_ERRORS) console.log(r.err.trim());
    expect(r.err).toMatch(/cut short|damaged/);
  });

  it('no georeferencing', async () => {
    const p = writeGeoTiff(join(dir, 'plain.tif'), { widthPx: 16, heightPx: 16, bandCount: 3, dtype: 'uint8', data: new Uint8Array(768) });
    const r = await cli(base(p));
    expect(r.rc).not.toBe(0);
    expect(one(r.err)).toHaveLength(1);
    if (process.env.SHOW_ERRORS) console.log(r.err.trim());
    expect(r.err).toMatch(/georeferenc/);
  });

  it('an EPSG code that needs a datum grid seamtally does not carry (NAD27 / UTM 11N, EPSG:26711)', async () => {
    const p = writeGeoTiff(join(dir, 'nad27.tif'), { widthPx: 16, heightPx: 16, bandCount: 3, dtype: 'uint8', data: new Uint8Array(768) }, { epsg: 26711, ulX: 440720, ulY: 3751320, gsdM: 0.3 });
    const r = await cli(base(p));
    expect(r.rc).not.toBe(0);
    expect(one(r.err)).toHaveLength(1);
    if (process.env.SHOW_ERRORS) console.log(r.err.trim());
    expect(r.err).toMatch(/EPSG:26711.*NTv2_0\.gsb/);
  });

  it('AOI outside the scene', async () => {
    const p = join(dir, 'far.geojson');
    writeFileSync(p, JSON.stringify({ type: 'Polygon', coordinates: [[[20, 40], [20.01, 40], [20.01, 40.01], [20, 40.01], [20, 40]]] }));
    const r = await cli(base(fx.pathA, p));
    expect(r.rc).not.toBe(0);
    expect(one(r.err)).toHaveLength(1);
    if (process.env.SHOW_ERRORS) console.log(r.err.trim());
    expect(r.err).toMatch(/outside every scene/);
  });

  it('invalid polygon (self-intersecting bow-tie)', async () => {
    const p = join(dir, 'bowtie.geojson');
    writeFileSync(p, JSON.stringify({ type: 'Polygon', coordinates: [[[12, 48], [12.001, 48.001], [12.001, 48], [12, 48.001], [12, 48]]] }));
    const r = await cli(base(fx.pathA, p));
    expect(r.rc).not.toBe(0);
    expect(one(r.err)).toHaveLength(1);
    if (process.env.SHOW_ERRORS) console.log(r.err.trim());
    expect(r.err).toMatch(/AOI/);
  });

  it('model / sidecar mismatch (sidecar names an output the model lacks) and a missing sidecar', async () => {
    const m = join(dir, 'other.onnx');
    copyFileSync(MODEL, m);
    const sc = JSON.parse(readFileSync('test/fixtures/fixture-model.model.json', 'utf8'));
    sc.output.heatmap = 'hm';
    writeFileSync(join(dir, 'other.model.json'), JSON.stringify(sc));
    const r = await cli(base(fx.pathA, undefined, m));
    expect(r.rc).not.toBe(0);
    expect(one(r.err)).toHaveLength(1);
    if (process.env.SHOW_ERRORS) console.log(r.err.trim());
    expect(r.err).toMatch(/output\.heatmap/);
    const lone = join(dir, 'lonely.onnx');
    copyFileSync(MODEL, lone);
    const r2 = await cli(base(fx.pathA, undefined, lone));
    expect(r2.rc).not.toBe(0);
    expect(r2.err).toMatch(/lonely\.model\.json/);
  });

  it('bad arguments name the usage', async () => {
    const r = await cli([fx.pathA, '--model', MODEL, '--out', dir]);
    expect(r.rc).not.toBe(0);
    expect(r.err).toMatch(/--aoi is required/);
  });
});
