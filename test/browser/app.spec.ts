// The app end to end on the seam fixture scenes (two overlapping scenes of one date, different UTM zones, 8-bit RGB
// and 12-bit RGB+NIR with nodata) with the fixture model: the browser's per-AOI counts must equal those of
// `seamtally detect` on the same files (the CLI is the outside reference: same core, onnxruntime-node instead of
// onnxruntime-web), exports validate, review changes the reviewed count, a reload mid-run resumes, bad files get
// their sentence.
import { test, expect, type Page } from '@playwright/test';
import { readFileSync, writeFileSync } from 'node:fs';
import { execFileSync } from 'node:child_process';
import { join } from 'node:path';
import gjv from 'geojson-validation';
import { makeBrowserFixture, cliCounts, FIXTURE_MODEL, type BrowserFixture } from './scenes-fixture.ts';

let fx: BrowserFixture;
test.beforeAll(() => { fx = makeBrowserFixture(); });

/** Counts shown in the tally table, keyed "aoi|date|class". */
async function tallyCounts(page: Page, field: 'count' | 'detected' | 'reviewed' = 'count'): Promise<Record<string, number>> {
  return page.$$eval('[data-testid=tally] tr[data-aoi]', (rows, f) => Object.fromEntries(rows.map((r) => {
    const d = (r as HTMLElement).dataset;
    return [`${d.aoi}|${d.date}|${d.cls}`, Number(d[f])];
  })), field);
}

async function openFixture(page: Page, extra = ''): Promise<void> {
  await page.goto(fx.appUrl + extra);
  await page.waitForSelector('body[data-ready=true]');
  await expect(page.locator('[data-testid=scene-list] li')).toHaveCount(2);
}

async function runToEnd(page: Page): Promise<void> {
  await page.click('[data-testid=run]');
  await expect(page.locator('[data-testid=run-stats]')).toHaveAttribute('data-status', 'done', { timeout: 120_000 });
}

test('fixture demo: browser counts equal seamtally detect, GeoJSON validates, review changes the reviewed count', async ({ page }) => {
  await openFixture(page);
  await runToEnd(page);
  await page.screenshot({ path: 'test-results/app-fixture-run.png' });
  const browser = await tallyCounts(page);
  const cli = cliCounts(fx);
  const expected = Object.fromEntries(cli.rows.map((r) => [`${r.aoiName}|${r.date}|${r.className}`, r.count]));
  expect(Object.keys(expected).length).toBeGreaterThan(1);
  expect(browser).toEqual(expected);
  expect(expected['all|2024-05-17|blob']).toBeGreaterThan(expected['west|2024-05-17|blob']);

  // The slider moves every count at once: at 0.99 nothing of the fixture model's ~0.9 peaks is left... or fewer.
  const slider = page.locator('[data-testid=threshold]');
  await slider.fill('0.95');
  const high = await tallyCounts(page);
  for (const k of Object.keys(expected)) expect(high[k]).toBeLessThanOrEqual(expected[k]);
  await slider.fill('0.5');

  // Export: RFC 7946 FeatureCollection that passes geojson-validation, with review states.
  await page.click('.tabs button[data-tab=takeaway]');
  const [dl] = await Promise.all([page.waitForEvent('download'), page.click('[data-testid=export-geojson]')]);
  const fc = JSON.parse(readFileSync((await dl.path())!, 'utf8'));
  expect(gjv.valid(fc)).toBe(true);
  expect(fc.features.length).toBeGreaterThan(0);
  expect(fc.features[0].properties.review).toBe('unreviewed');

  // Review: reject the first detection by keyboard; the reviewed count rises and the count falls where it lay.
  await page.click('.tabs button[data-tab=check]');
  await expect(page.locator('[data-testid=review-card]')).toContainText('unreviewed');
  await page.locator('body').press('r');
  await expect(page.locator('[data-testid=reviewed-count]')).toHaveAttribute('data-value', '1');
  await page.click('.tabs button[data-tab=tally]');
  const reviewed = await tallyCounts(page, 'reviewed');
  const after = await tallyCounts(page);
  expect(Object.values(reviewed).reduce((a, b) => a + b, 0)).toBeGreaterThanOrEqual(1);
  expect(Object.values(after).reduce((a, b) => a + b, 0)).toBeLessThan(Object.values(expected).reduce((a, b) => a + b, 0));
  await page.screenshot({ path: 'test-results/app-fixture-review.png' });
  await page.click('.tabs button[data-tab=takeaway]');
  const [dl2] = await Promise.all([page.waitForEvent('download'), page.click('[data-testid=export-geojson]')]);
  const fc2 = JSON.parse(readFileSync((await dl2.path())!, 'utf8'));
  expect(fc2.features.filter((f: { properties: { review: string } }) => f.properties.review === 'rejected')).toHaveLength(1);
});

test('a reload in the middle of a run resumes from what was kept and ends with the same counts', async ({ page }) => {
  const cli = cliCounts(fx);
  const expected = Object.fromEntries(cli.rows.map((r) => [`${r.aoiName}|${r.date}|${r.className}`, r.count]));
  await openFixture(page, '&pace=120&workers=1');
  await page.click('[data-testid=run]');
  await page.waitForFunction(() => Number(document.querySelector<HTMLElement>('[data-testid=run-stats]')?.dataset.done) >= 8);
  // mid-run the tally says its counts are partial
  await expect(page.locator('[data-testid=tally-partial]')).toContainText(/partial until the run ends/);
  await page.reload();
  await page.waitForSelector('body[data-ready=true]');
  await expect(page.locator('[data-testid=run-stats]')).toHaveAttribute('data-status', 'done', { timeout: 120_000 });
  const kept = /\((\d+) kept from before\)/.exec(await page.locator('[data-testid=run-message]').innerText());
  expect(Number(kept?.[1])).toBeGreaterThanOrEqual(1);
  await page.screenshot({ path: 'test-results/app-fixture-resumed.png' });
  expect(await tallyCounts(page)).toEqual(expected);
});

test('a non-TIFF, a TIFF without georeferencing and a broken model sidecar each get their sentence', async ({ page }) => {
  await openFixture(page);
  for (const [path, words] of [[fx.notTiffPath, /not a TIFF/i], [fx.plainTiffPath, /no georeferencing/i]] as const) {
    const [chooser] = await Promise.all([page.waitForEvent('filechooser'), page.click('[data-testid=dropzone] button')]);
    await chooser.setFiles(path);
    await expect(page.locator('.notice.error').last()).toContainText(words);
  }
  const [chooser] = await Promise.all([page.waitForEvent('filechooser'), page.click('[data-testid=other-model]')]);
  await chooser.setFiles([FIXTURE_MODEL, fx.badSidecarPath]);
  await expect(page.locator('.notice.error').last()).toContainText('"tilePx"');
  await page.screenshot({ path: 'test-results/app-bad-inputs.png' });
  await expect(page.locator('[data-testid=scene-list] li')).toHaveCount(2);
  await expect(page.locator('[data-testid=model-info]')).toContainText('fixture-blob-detector');
});

test('one threshold: the slider shows the model default in force, and tally, Check queue, export and report all use it', async ({ page }) => {
  // A sidecar whose default (0.41) differs from the page's fallback: the slider must show 0.41 and every count use it.
  const sidecarPath = fx.badSidecarPath.replace('broken', 'default-041');
  const sidecar = JSON.parse(readFileSync(FIXTURE_MODEL.replace(/\.onnx$/, '.model.json'), 'utf8'));
  writeFileSync(sidecarPath, JSON.stringify({ ...sidecar, minScore: 0.41 }));
  await openFixture(page);
  const [chooser] = await Promise.all([page.waitForEvent('filechooser'), page.click('[data-testid=other-model]')]);
  await chooser.setFiles([FIXTURE_MODEL, sidecarPath]);
  const slider = page.locator('[data-testid=threshold]');
  await expect(slider).toHaveValue('0.41');
  await expect(page.locator('[data-testid=threshold-value]')).toHaveText('0.41');
  await runToEnd(page);
  const cli = cliCounts(fx, { minScore: 0.41 }); // the CLI at the same threshold is the reference
  const expected = Object.fromEntries(cli.rows.map((r) => [`${r.aoiName}|${r.date}|${r.className}`, r.count]));
  expect(await tallyCounts(page)).toEqual(expected);
  // one step away and back: the same counts (the bug was a slider showing one value while another was in force)
  await slider.fill('0.6');
  await expect(page.locator('[data-testid=threshold-value]')).toHaveText('0.60');
  await slider.fill('0.41');
  expect(await tallyCounts(page)).toEqual(expected);
  // export and report say and use 0.41; the Check queue holds exactly the exported (counted-or-candidate) detections
  await page.click('.tabs button[data-tab=takeaway]');
  const [dl] = await Promise.all([page.waitForEvent('download'), page.click('[data-testid=export-geojson]')]);
  const fc = JSON.parse(readFileSync((await dl.path())!, 'utf8'));
  expect(fc.seamtally.minScore).toBe(0.41);
  for (const f of fc.features) expect(f.properties.score).toBeGreaterThanOrEqual(0.41);
  const [rep] = await Promise.all([page.waitForEvent('download'), page.click('[data-testid=export-report]')]);
  expect(readFileSync((await rep.path())!, 'utf8')).toContain('score ≥ 0.41');
  await page.click('.tabs button[data-tab=check]');
  await expect(page.locator('[data-testid=reviewed-count]')).toHaveAttribute('data-total', String(fc.features.length));
});

test('a scene in another CRS opened after the first ones: the map takes its CRS (Swiss LV95), undistorted, with a true scale', async ({ page }) => {
  // a real 0.2 m orthophoto crop (test/fixtures/real/CREDITS.md) wrapped as EPSG:2056 with GDAL
  const crop = join(fx.dir, 'lv95-crop.tif');
  execFileSync('gdal_translate', ['-q', '-a_srs', 'EPSG:2056', '-a_ullr', '2558426.5', '1217469.5', '2558451.5', '1217444.5',
    '-mo', 'TIFFTAG_DATETIME=2023:06:14 10:00:00', 'test/fixtures/real/ortho_2558439_1217457.png', crop]);
  await openFixture(page);
  const map = page.locator('#map');
  const first = await map.getAttribute('data-projection');
  expect(first).toMatch(/^EPSG:326\d\d$/);
  const [chooser] = await Promise.all([page.waitForEvent('filechooser'), page.click('[data-testid=dropzone] button')]);
  await chooser.setFiles(crop);
  await expect(page.locator('[data-testid=scene-list] li')).toHaveCount(3);
  await expect(map).toHaveAttribute('data-projection', 'EPSG:2056');
  // the 25 m crop fills the map: the scale bar (OpenLayers ScaleLine, metric) names a few metres, not hundreds
  const scale = await page.locator('.ol-scale-line-inner').innerText();
  const m = /^([\d.]+)\s*(m|km)$/.exec(scale.trim());
  expect(m, scale).not.toBeNull();
  expect(Number(m![1]) * (m![2] === 'km' ? 1000 : 1)).toBeLessThanOrEqual(25);
  await page.screenshot({ path: 'test-results/app-lv95-crop.png' });
});

test('a file without a date gets a suggestion from its name, marked unconfirmed until the analyst confirms it', async ({ page }) => {
  const crop = join(fx.dir, 'roofs_20230614_lv95.tif');
  execFileSync('gdal_translate', ['-q', '-a_srs', 'EPSG:2056', '-a_ullr', '2558426.5', '1217469.5', '2558451.5', '1217444.5',
    'test/fixtures/real/ortho_2558439_1217457.png', crop]);
  await openFixture(page);
  const [chooser] = await Promise.all([page.waitForEvent('filechooser'), page.click('[data-testid=dropzone] button')]);
  await chooser.setFiles(crop);
  const item = page.locator('[data-testid=scene-list] li[data-scene="roofs_20230614_lv95.tif"]');
  await expect(item.locator('input[type=date]')).toHaveValue('2023-06-14');
  await expect(item.locator('[data-testid=date-unconfirmed]')).toBeVisible();
  await item.locator('[data-testid=confirm-date]').click();
  await expect(item.locator('[data-testid=date-unconfirmed]')).toHaveCount(0);
});

test('own files after a reload: the page names the files to drop again, and once they are back the kept run, review and sample return', async ({ page }) => {
  // no demo: the analyst's own files, opened through the file chooser (Chromium under automation has no File System
  // Access picker, so the plain input serves and no handle is kept: the "drop again" path)
  await page.goto('/?manifest=/testdata/none.json&model=/fixtures/fixture-model.model.json');
  await page.waitForSelector('body[data-ready=true]');
  const [chooser] = await Promise.all([page.waitForEvent('filechooser'), page.click('[data-testid=dropzone] button')]);
  await chooser.setFiles(fx.scenePaths);
  await expect(page.locator('[data-testid=scene-list] li')).toHaveCount(fx.scenePaths.length);
  const [aoiChooser] = await Promise.all([page.waitForEvent('filechooser'), page.click('button:has-text("Import GeoJSON")')]);
  await aoiChooser.setFiles(fx.aoiPath);
  await expect(page.locator('[data-testid=aoi-list] li[data-aoi]')).not.toHaveCount(0);
  await runToEnd(page);
  const before = await tallyCounts(page);
  expect(Object.values(before).some((n) => n > 0)).toBe(true);
  // a review decision and a drawn sample are kept with the run
  await page.click('.tabs button[data-tab=check]');
  await page.click('[data-testid=reject]');
  await page.locator('[data-testid=sample-seed]').fill('7');
  await page.click('[data-testid=draw-sample]');
  await expect(page.locator('[data-testid=sample-progress]')).toHaveAttribute('data-checked', '0');
  await page.click('.tabs button[data-tab=tally]');
  const reviewed = await tallyCounts(page);
  await page.reload();
  await page.waitForSelector('body[data-ready=true]');
  const names = fx.scenePaths.map((p) => p.split('/').pop()!);
  await expect(page.locator('[data-testid=drop-again]')).toContainText(names[0]);
  await expect(page.locator('[data-testid=tally] tr[data-aoi]')).toHaveCount(0);
  const [again] = await Promise.all([page.waitForEvent('filechooser'), page.click('[data-testid=dropzone] button')]);
  await again.setFiles(fx.scenePaths);
  await expect(page.locator('[data-testid=drop-again]')).toHaveCount(0);
  await expect(page.locator('[data-testid=run-stats]')).toHaveAttribute('data-status', 'done', { timeout: 60_000 });
  await expect.poll(() => tallyCounts(page)).toEqual(reviewed);
  expect(before).not.toEqual(reviewed); // the rejection changed a count, and it came back
  await page.click('.tabs button[data-tab=check]');
  await expect(page.locator('[data-testid=sample-info]')).toContainText('seed 7');
});

test('layout: at 1 440 px the map takes at least half the width; at 1 280 × 720 the tally table fits its panel, all columns on request', async ({ page }) => {
  await openFixture(page);
  await runToEnd(page);
  const mapW = await page.locator('#map').evaluate((e) => e.getBoundingClientRect().width);
  expect(mapW).toBeGreaterThanOrEqual(720);
  await page.screenshot({ path: 'test-results/layout-1440.png' });
  await page.setViewportSize({ width: 1280, height: 720 });
  const tally = page.locator('[data-testid=tally]');
  await expect(tally.locator('tr[data-aoi]').first()).toBeVisible();
  const fits = () => tally.evaluate((e) => { const t = e.querySelector('table')!; return t.getBoundingClientRect().right <= e.getBoundingClientRect().right + 0.5; });
  expect(await fits()).toBe(true);
  // every main column is there: area, class, count, estimate, imaged share, resolution caveat
  const heads = await tally.locator('th').evaluateAll((ths) => ths.filter((t) => getComputedStyle(t).display !== 'none').map((t) => t.textContent));
  expect(heads).toEqual(['Area', 'Class', 'Count', 'Estimated', 'Imaged', 'Res.']);
  await page.screenshot({ path: 'test-results/layout-1280.png' });
  await page.check('[data-testid=all-columns]');
  await expect(tally.locator('th:has-text("95 %")')).toBeVisible();
});
