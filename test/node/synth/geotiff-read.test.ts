// Windows read back by geotiff.js and by GDAL (gdal_translate, an outside decoder) equal the renderer's own output.
import { describe, expect, it, beforeAll, afterAll } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fromFile } from 'geotiff';
import { makeSceneParams, type SceneParams } from '../../../synth/scene-params.ts';
import { synthToDir } from '../../../cli/synth.ts';
import { SceneRenderer } from '../../../synth/render.ts';

let dir: string;
beforeAll(() => { dir = mkdtempSync(join(tmpdir(), 'seamtally-read-')); });
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const windows = [
  { x0Px: 0, y0Px: 0, wPx: 64, hPx: 48 },
  { x0Px: 100, y0Px: 117, wPx: 90, hPx: 70 }, // straddles tile seams (tile 128)
  { x0Px: 230, y0Px: 180, wPx: 70, hPx: 60 }, // reaches the right and bottom edges, inside the nodata collar
];

async function check(p: SceneParams): Promise<void> {
  synthToDir(dir, p);
  const path = join(dir, `${p.name}.tif`);
  const tiff = await fromFile(path);
  const img = await tiff.getImage();
  expect(img.getWidth()).toBe(p.widthPx);
  expect(img.getTileWidth()).toBe(p.tilePx);
  expect(await tiff.getImageCount()).toBeGreaterThan(1); // overviews are further IFDs
  const r = new SceneRenderer(p);
  for (const w of windows) {
    const got = await img.readRasters({ window: [w.x0Px, w.y0Px, w.x0Px + w.wPx, w.y0Px + w.hPx], interleave: true });
    const want = r.render(w);
    expect(got.length).toBe(want.length);
    expect(Buffer.from(new Uint8Array((got as Uint8Array).buffer, (got as Uint8Array).byteOffset, (got as Uint8Array).byteLength)).equals(Buffer.from(want.buffer, want.byteOffset, want.byteLength))).toBe(true);
    // GDAL's decoder: gdal_translate -srcwin to a raw ENVI file (band-sequential, native little-endian).
    const raw = join(dir, 'win.bin');
    execFileSync('gdal_translate', ['-q', '-of', 'ENVI', '-co', 'INTERLEAVE=BSQ', '-srcwin', String(w.x0Px), String(w.y0Px), String(w.wPx), String(w.hPx), path, raw]);
    const bytes = readFileSync(raw);
    const gd = p.bits === 8 ? new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.length) : new Uint16Array(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.length));
    const nb = r.nb;
    const n = w.wPx * w.hPx;
    let mismatches = 0;
    for (let i = 0; i < n; i++) for (let b = 0; b < nb; b++) if (gd[b * n + i] !== want[i * nb + b]) mismatches++;
    expect(mismatches).toBe(0);
  }
  // The collar: corners are nodata (0) in every band, the centre is valid (never 0).
  const corner = r.render({ x0Px: 0, y0Px: 0, wPx: 1, hPx: 1 });
  expect([...corner].every((v) => v === 0)).toBe(true);
  const centre = r.render({ x0Px: p.widthPx >> 1, y0Px: p.heightPx >> 1, wPx: 8, hPx: 8 });
  expect([...centre].every((v) => v > 0)).toBe(true);
}

describe('reading windows back', () => {
  it('rgb 8-bit, geotiff.js and GDAL', async () => {
    await check(makeSceneParams({ seed: 21, gsdM: 0.3, widthPx: 300, heightPx: 240, tilePx: 128, name: 'r8', footprintRotDeg: 6 }));
  });
  it('rgbn 12-bit in uint16, geotiff.js and GDAL', async () => {
    await check(makeSceneParams({ seed: 22, gsdM: 0.5, widthPx: 300, heightPx: 240, tilePx: 128, name: 'r12', bands: 'rgbn', bits: 12, footprintRotDeg: -5 }));
  });
  it('overview level 1 equals the 2×2 nodata-aware mean of full resolution (our downsampling rule)', async () => {
    const p = makeSceneParams({ seed: 23, gsdM: 0.3, widthPx: 256, heightPx: 256, tilePx: 128, name: 'ovr' });
    synthToDir(dir, p);
    const tiff = await fromFile(join(dir, 'ovr.tif'));
    const o1 = await tiff.getImage(1);
    expect([o1.getWidth(), o1.getHeight()]).toEqual([128, 128]);
    const ov = (await o1.readRasters({ window: [60, 60, 70, 70], interleave: true })) as Uint8Array;
    const full = new SceneRenderer(p).render({ x0Px: 120, y0Px: 120, wPx: 20, hPx: 20 });
    for (let y = 0; y < 10; y++) for (let x = 0; x < 10; x++) for (let b = 0; b < 3; b++) {
      const px = [0, 1, 20, 21].map((d) => full[((2 * y) * 20 + 2 * x + d) * 3 + b]);
      expect(ov[(y * 10 + x) * 3 + b]).toBe(Math.floor(px.reduce((a, c) => a + c, 0) / 4 + 0.5));
    }
  });
});
