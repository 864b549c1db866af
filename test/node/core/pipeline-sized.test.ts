// The tile pipeline with sized (rectangular) windows of a dynamic-input model: the detector gets each window's own
// [1, 3, H, W] tensor from a scratch sized for the largest window, with the right pixels, and detections land right.
import { mkdtempSync, readFileSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { validateSidecar } from '../../../web/core/model-contract.ts';
import { createTileScratch, prepareScene, runScene, runTile, tileInput, type InferFn } from '../../../web/core/pipeline.ts';
import { openGeoTiffPath } from '../../../web/io/geotiff-source.ts';
import type { SceneSource } from '../../../web/core/scene-source.ts';
import { writeGeoTiff } from '../../fixtures/gdal-scenes.ts';

const dir = mkdtempSync(join(tmpdir(), 'seamtally-pipe-sized-'));
// dynamic input 32 … 64 px, windows start on multiples of 8 and are sized in steps of lcm(8, stride 2) = 8
const sidecar = validateSidecar({
  format: 'seamtally-model/1', classes: ['x'], inputGsdM: 0.3, tilePx: 32, maxTilePx: 64, tileAlignPx: 8,
  objects: { x: { criticalDimM: 0.6, maxExtentM: 0.9 } },
  input: { name: 'image', bands: 'rgb', scale: 1 / 255, mean: [0.1, 0.2, 0.3], std: [0.5, 0.5, 0.5] },
  output: { layout: 'center-heatmap', stride: 2, heatmap: 'hm', size: 'wh', offset: null, angle: null },
});
const W = 100, H = 44;
const data = new Uint8Array(W * H * 3);
for (let i = 0; i < data.length; i++) data[i] = 1 + ((i * 37) % 254); // no pixel is 0 (the nodata value below)
let path: string;

async function open(p: string): Promise<SceneSource> {
  return openGeoTiffPath(p, { byteLength: statSync(p).size, head: readFileSync(p).subarray(0, 8) });
}

/** A fake detector on the output grid (stride 2): one peak at cell (5, 6), i.e. input pixel (11, 13) at its centre. */
const PEAK = [5, 6] as const;
const fakeInfer: InferFn = async (input, dims) => {
  const [, , h, w] = dims;
  expect(input.length).toBe(3 * h * w);
  const gh = h / 2, gw = w / 2;
  const hm = new Float32Array(gh * gw);
  hm[PEAK[1] * gw + PEAK[0]] = 0.9;
  return { hm: { data: hm, dims: [1, 1, gh, gw] }, wh: { data: new Float32Array(2 * gh * gw).fill(2), dims: [1, 2, gh, gw] } };
};

beforeAll(() => {
  path = writeGeoTiff(join(dir, 'rect.tif'), { widthPx: W, heightPx: H, bandCount: 3, dtype: 'uint8', data },
    { epsg: 32632, ulX: 500000, ulY: 5320000, gsdM: 0.3, blockPx: 16, nodata: 0 });
});

describe('pipeline with sized windows', () => {
  it('passes each window\'s own H × W to the detector, filled with the window\'s pixels (nodata past the scene edge)', async () => {
    const src = await open(path);
    const p = await prepareScene(src, 0, sidecar, { overlapPx: 4, tilePx: 64 });
    expect(p.plan.sizeStepPx).toBe(8);
    // x: 100 px → 13 units of 8, windows sharing 1 unit: 2 windows of 7 units (56 px) at 0 and 48; y: one of 48 px
    expect(p.plan.tiles.map((t) => t.windowModelPx)).toEqual([
      { minXPx: 0, minYPx: 0, maxXPx: 56, maxYPx: 48 }, { minXPx: 48, minYPx: 0, maxXPx: 104, maxYPx: 48 },
    ]);
    const scratch = createTileScratch(p.plan.tilePx);
    for (const tile of p.plan.tiles) {
      let seen: { input: Float32Array; dims: readonly number[] } | null = null;
      const capture: InferFn = async (input, dims) => { seen = { input: input.slice(), dims }; return fakeInfer(input, dims); };
      const r = await runTile(p, tile, scratch, capture);
      expect(r.skipped).toBe(false);
      expect(seen!.dims).toEqual([1, 3, 48, 56]);
      const t = seen!.input, plane = 48 * 56, wm = tile.windowModelPx;
      for (const [x, y, c] of [[0, 0, 0], [5, 7, 1], [55, 43, 2], [17, 3, 1], [51, 20, 0]]) {
        const gx = x + wm.minXPx, gy = y + wm.minYPx;
        const v = gx < W && gy < H ? data[c * W * H + gy * W + gx] : 0; // past the scene: nodata → 0
        expect(t[c * plane + y * 56 + x]).toBeCloseTo((v / 255 - sidecar.input.mean[c]) / 0.5, 5);
      }
      expect(tileInput(p.plan, tile, scratch).data.length).toBe(3 * plane);
    }
    await src.close();
  });

  it('decodes detections of rectangular outputs at the window origin and keeps core centres only', async () => {
    const src = await open(path);
    const p = await prepareScene(src, 0, sidecar, { overlapPx: 4, tilePx: 40 });
    const shapes = new Set<string>();
    const infer: InferFn = async (input, dims) => { shapes.add(`${dims[2]}×${dims[3]}`); return fakeInfer(input, dims); };
    const kept: number[][] = [];
    const res = await runScene(p, infer, {
      onTile: (r) => {
        const wm = r.tile.windowModelPx, c = r.tile.corePx;
        const gx = wm.minXPx + (PEAK[0] + 0.5) * 2, gy = wm.minYPx + (PEAK[1] + 0.5) * 2;
        const inCore = gx >= c.minXPx && gx < c.maxXPx && gy >= c.minYPx && gy < c.maxYPx;
        expect(r.table.count).toBe(inCore ? 1 : 0);
        if (inCore) kept.push([gx, gy]);
      },
    });
    expect([...shapes].some((s) => { const [h, w] = s.split('×').map(Number); return h !== w; })).toBe(true);
    expect(res.tables.reduce((s, t) => s + t.count, 0)).toBe(kept.length);
    expect(kept.length).toBeGreaterThan(0);
    await src.close();
  });

  it('refuses a scratch smaller than the window, and a fixed-input model keeps padded tilePx² inputs', async () => {
    const src = await open(path);
    const p = await prepareScene(src, 0, sidecar, { overlapPx: 4, tilePx: 64 });
    expect(() => tileInput(p.plan, p.plan.tiles[0], createTileScratch(48))).toThrow(/scratch holds inputs up to 48 px/);
    const fixed = await prepareScene(src, 0, { ...sidecar, maxTilePx: undefined }, { overlapPx: 4, tilePx: 64 });
    expect(fixed.plan.sizeStepPx).toBeNull();
    const dims: number[][] = [];
    await runScene(fixed, async (input, d) => { dims.push([...d]); return fakeInfer(input, d); });
    expect(dims.every((d) => d[2] === 64 && d[3] === 64)).toBe(true);
    await src.close();
  });
});
