// The tile pipeline with an injected detector: tensor contents, core rule, ground-frame conversion (vs gdaltransform).
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { validateSidecar } from '../../../web/core/model-contract.ts';
import { createTileScratch, prepareScene, runScene, runTile, type InferFn } from '../../../web/core/pipeline.ts';
import { openGeoTiffPath } from '../../../web/io/geotiff-source.ts';
import type { SceneSource } from '../../../web/core/scene-source.ts';
import { writeGeoTiff } from '../../fixtures/gdal-scenes.ts';

const dir = mkdtempSync(join(tmpdir(), 'seamtally-pipe-'));
const sidecar = validateSidecar({
  format: 'seamtally-model/1', classes: ['x'], inputGsdM: 0.3, tilePx: 32,
  objects: { x: { criticalDimM: 0.6, maxExtentM: 0.9 } },
  input: { name: 'image', bands: 'rgb', scale: 1 / 255, mean: [0.1, 0.2, 0.3], std: [0.5, 0.5, 0.5] },
  output: { layout: 'center-heatmap', stride: 1, heatmap: 'hm', size: 'wh', offset: null, angle: null },
});
const W = 40, H = 36;
const data = new Uint8Array(W * H * 3);
for (let i = 0; i < data.length; i++) data[i] = (i * 37) & 255;
let path33: string, path32: string;

async function open(p: string): Promise<SceneSource> {
  return openGeoTiffPath(p, { byteLength: statSync(p).size, head: readFileSync(p).subarray(0, 8) });
}

/** A fake detector: one peak at tile cell (10, 12) with box 5 × 3 px, everything else 0. */
const PEAK = [10, 12] as const;
const fakeInfer: InferFn = async (_input, dims) => {
  const [, , h, w] = dims;
  const hm = new Float32Array(h * w);
  hm[PEAK[1] * w + PEAK[0]] = 0.9;
  const wh = new Float32Array(2 * h * w).fill(3);
  wh.fill(5, 0, h * w);
  return { hm: { data: hm, dims: [1, 1, h, w] }, wh: { data: wh, dims: [1, 2, h, w] } };
};

beforeAll(() => {
  path33 = writeGeoTiff(join(dir, 'z33.tif'), { widthPx: W, heightPx: H, bandCount: 3, dtype: 'uint8', data }, { epsg: 32633, ulX: 276000, ulY: 5320000, gsdM: 0.5, blockPx: 16, compress: 'DEFLATE' });
  path32 = writeGeoTiff(join(dir, 'z32.tif'), { widthPx: W, heightPx: H, bandCount: 3, dtype: 'uint8', data }, { epsg: 32632, ulX: 500000, ulY: 5320000, gsdM: 0.3 });
});

describe('pipeline', () => {
  it('fills the NCHW tensor with (pixel·scale − mean)/std at the model GSD, and pads small scenes', async () => {
    const src = await open(path32);
    const p = await prepareScene(src, 0, sidecar, { overlapPx: 4 });
    expect(p.plan.scale).toBe(1);
    let seen: Float32Array | null = null;
    const capture: InferFn = async (input, dims) => { seen = input.slice(); return fakeInfer(input, dims); };
    const tile = p.plan.tiles[0];
    await runTile(p, tile, createTileScratch(32), capture);
    const t = seen!;
    const wm = tile.windowModelPx;
    for (const [x, y, c] of [[0, 0, 0], [5, 7, 1], [31, 31, 2], [17, 3, 1]]) {
      const v = data[c * W * H + (y + wm.minYPx) * W + (x + wm.minXPx)];
      expect(t[c * 1024 + y * 32 + x]).toBeCloseTo((v / 255 - sidecar.input.mean[c]) / 0.5, 5);
    }
    // The scene (40 × 36 px) is smaller than a 64 px tile: the window is the whole scene, padded right/bottom.
    const p64 = await prepareScene(src, 0, { ...sidecar, tilePx: 64 }, { overlapPx: 4 });
    const r = await runTile(p64, p64.plan.tiles[0], createTileScratch(64), capture);
    expect(r.skipped).toBe(false);
    expect(seen![0 * 4096 + 63 * 64 + 63]).toBeCloseTo((0 - 0.1) / 0.5, 6); // padding = black
    await src.close();
  });

  it('keeps each tile\'s core detections only and maps them to the metric frame exactly as gdaltransform does', async () => {
    const src = await open(path33);
    const p = await prepareScene(src, 3, sidecar, { overlapPx: 4, frameEpsg: 32632 });
    expect(p.plan.scale).toBeCloseTo(5 / 3, 12);
    const seenPeaks: [number, number][] = [];
    const res = await runScene(p, fakeInfer, {
      onTile: (r) => {
        const wm = r.tile.windowModelPx, c = r.tile.corePx;
        const gx = wm.minXPx + PEAK[0] + 0.5, gy = wm.minYPx + PEAK[1] + 0.5;
        if (gx >= c.minXPx && gx < c.maxXPx && gy >= c.minYPx && gy < c.maxYPx) seenPeaks.push([gx, gy]);
        else expect(r.table.count).toBe(0);
      },
    });
    const rows = res.tables.flatMap((t) => Array.from({ length: t.count }, (_, i) => ({ x: t.cxM[i], y: t.cyM[i], l: t.lengthM[i], w: t.widthM[i], a: t.angleRad[i], s: t.sceneIdx[i], f: t.frameCrs })));
    expect(rows.length).toBe(seenPeaks.length);
    expect(rows.length).toBeGreaterThan(0);
    // Outside reference: GDAL's gdaltransform (pixel/line of the file → EPSG:32632 via PROJ), Debian gdal-bin.
    const input = seenPeaks.flatMap(([mx, my]) => [[mx / p.plan.scale, my / p.plan.scale], [(mx + 2.5) / p.plan.scale, my / p.plan.scale]]).map((q) => q.join(' ')).join('\n');
    const ref = execFileSync('gdaltransform', ['-t_srs', 'EPSG:32632', '-output_xy', path33], { input }).toString().trim().split('\n').map((l) => l.trim().split(/\s+/).map(Number));
    rows.forEach((r, i) => {
      expect(r.f).toBe('EPSG:32632');
      expect(r.s).toBe(3);
      expect(Math.abs(r.x - ref[2 * i][0])).toBeLessThan(1e-3);
      expect(Math.abs(r.y - ref[2 * i][1])).toBeLessThan(1e-3);
      // the length axis (pixel +x) as GDAL maps it: direction and half-length
      const dx = ref[2 * i + 1][0] - ref[2 * i][0], dy = ref[2 * i + 1][1] - ref[2 * i][1];
      expect(r.l / 2).toBeCloseTo(Math.hypot(dx, dy), 3);
      expect(r.a).toBeCloseTo(Math.atan2(dy, dx), 4);
      expect(r.w).toBeCloseTo(3 * 0.3, 2);
    });
    await src.close();
  });

  it('pipelined runs (tile k+1 filled while tile k infers) give what serial runs give, with a detector that reads its input late', async () => {
    // self-consistency: onnxruntime-node reads the input tensor on its own thread while the JS thread fills the next
    // tile, so this detector first yields, then reads: one shared tensor would hand it the next tile's pixels
    const src = await open(path33);
    const p = await prepareScene(src, 0, sidecar, { overlapPx: 4 });
    expect(p.plan.tiles.length).toBeGreaterThan(2);
    const sums = (seen: number[][]): InferFn => async (input, dims) => {
      await new Promise((r) => setTimeout(r, 5));
      let s = 0;
      for (let i = 0; i < input.length; i++) s += input[i] * ((i % 97) + 1);
      seen.push([s]);
      return fakeInfer(input, dims);
    };
    const serial: number[][] = [], piped: number[][] = [];
    const a = await runScene(p, sums(serial), { prefetch: false });
    const b = await runScene(p, sums(piped), { prefetch: true });
    expect(piped).toEqual(serial);
    expect(new Set(serial.map((x) => x[0])).size).toBe(serial.length); // the tiles do differ
    expect(b.tables.map((t) => Array.from(t.cxM.subarray(0, t.count)))).toEqual(a.tables.map((t) => Array.from(t.cxM.subarray(0, t.count))));
    await src.close();
  });

  it('stops with a typed "cancelled" error when the signal is aborted', async () => {
    const src = await open(path33);
    const p = await prepareScene(src, 0, sidecar, { overlapPx: 4 });
    const ac = new AbortController();
    const run = runScene(p, fakeInfer, { signal: ac.signal, onTile: () => ac.abort() });
    await expect(run).rejects.toMatchObject({ kind: 'cancelled' });
    await src.close();
  });
});
