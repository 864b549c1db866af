// Faults (issue 7), each injected on the seam fixture scenes through the test-only `?fault=` flag (web/app/faults.ts)
// or by Playwright itself: a worker killed mid-tile and a tile that throws are retried and the run still ends with
// the counts of `seamtally detect` (the CLI on the same files is the outside reference, as in app.spec.ts); a tile
// that crashes its worker every time is reported failed and left out of coverage; cancel leaves the kept tiles and
// the shown progress in step; a tab closed mid-run resumes to the same counts; a full disk is reported once;
// a failing export leaves no file.
import { test, expect, type Page } from '@playwright/test';
import { readFileSync } from 'node:fs';
import { makeBrowserFixture, cliCounts, type BrowserFixture } from './scenes-fixture.ts';

let fx: BrowserFixture;
let expected: Record<string, number>;
test.beforeAll(() => {
  fx = makeBrowserFixture();
  expected = Object.fromEntries(cliCounts(fx).rows.map((r) => [`${r.aoiName}|${r.date}|${r.className}`, r.count]));
});

const stats = (page: Page) => page.locator('[data-testid=run-stats]');
const statAttr = async (page: Page, name: string) => Number(await stats(page).getAttribute(`data-${name}`));

async function open(page: Page, query: string): Promise<void> {
  await page.goto(`${fx.appUrl}&${query}`);
  await page.waitForSelector('body[data-ready=true]');
  await expect(page.locator('[data-testid=scene-list] li')).toHaveCount(2);
}

async function runToEnd(page: Page): Promise<void> {
  await page.click('[data-testid=run]');
  await expect(stats(page)).toHaveAttribute('data-status', 'done', { timeout: 120_000 });
}

async function tally(page: Page, field: 'count' | 'coverage'): Promise<Record<string, number>> {
  return page.$$eval('[data-testid=tally] tr[data-aoi]', (rows, f) => Object.fromEntries(rows.map((r) => {
    const d = (r as HTMLElement).dataset;
    return [`${d.aoi}|${d.date}|${d.cls}`, Number(d[f])];
  })), field);
}

/** Coverage per AOI once the tally worker has measured it. */
async function coverage(page: Page): Promise<Record<string, number>> {
  await expect.poll(async () => Object.values(await tally(page, 'coverage')).every((c) => Number.isFinite(c))).toBe(true);
  return tally(page, 'coverage');
}

function countDetectorWorkers(page: Page): { n: number } {
  const c = { n: 0 };
  page.on('worker', (w) => { if (w.url().includes('detector.worker')) c.n++; });
  return c;
}

/** Finished tiles kept in IndexedDB (all runs; each test has its own fresh browser context). */
const keptTiles = (page: Page) => page.evaluate(() => new Promise<number>((resolve, reject) => {
  const req = indexedDB.open('seamtally');
  req.onerror = () => reject(req.error);
  req.onsuccess = () => {
    const c = req.result.transaction('tiles').objectStore('tiles').count();
    c.onsuccess = () => { resolve(c.result); req.result.close(); };
  };
}));

let coverageClean: Record<string, number> | null = null;

test('a worker killed mid-tile and a tile that throws are retried: every tile counted once, counts equal seamtally detect', async ({ page }) => {
  const workers = countDetectorWorkers(page);
  await open(page, 'workers=2&fault=kill:3,throw:5');
  await runToEnd(page);
  expect(await statAttr(page, 'failed')).toBe(0);
  expect(await statAttr(page, 'done')).toBe(Number(/(\d+) tiles/.exec(await page.locator('[data-testid=run-message]').innerText())![1]));
  expect(workers.n).toBe(3); // two at start, one replacing the killed worker (the thrown tile keeps its worker)
  expect(await tally(page, 'count')).toEqual(expected);
  await expect(page.locator('.notice.error')).toHaveCount(0);
  coverageClean = await coverage(page);

  // Exports after a faulty run are whole: they parse to the end and hold one row per tally row.
  await page.click('.tabs button[data-tab=takeaway]');
  const [dl] = await Promise.all([page.waitForEvent('download'), page.click('[data-testid=export-geojson]')]);
  const fc = JSON.parse(readFileSync((await dl.path())!, 'utf8'));
  expect(fc.type).toBe('FeatureCollection');
  const [dl2] = await Promise.all([page.waitForEvent('download'), page.click('[data-testid=export-csv]')]);
  const csvLines = readFileSync((await dl2.path())!, 'utf8').trim().split(/\r?\n/);
  expect(csvLines.length - 1).toBe(Object.keys(expected).length);
});

test('an inference worker that crashes takes its detector worker with it: replaced, the tile retried, counts unchanged', async ({ page }) => {
  const workers = countDetectorWorkers(page);
  await open(page, 'workers=2&fault=infercrash:2');
  await runToEnd(page);
  expect(await statAttr(page, 'failed')).toBe(0);
  expect(await statAttr(page, 'done')).toBe(Number(/(\d+) tiles/.exec(await page.locator('[data-testid=run-message]').innerText())![1]));
  expect(workers.n).toBe(3); // two at start, one replacing the worker whose inference worker crashed
  expect(await tally(page, 'count')).toEqual(expected);
  await expect(page.locator('.notice.error')).toHaveCount(0);
});

test('a tile that crashes its worker every time is tried 3 times, then reported failed and left out of coverage', async ({ page }) => {
  const workers = countDetectorWorkers(page);
  await open(page, 'workers=2&fault=crash:1');
  await runToEnd(page);
  expect(await statAttr(page, 'failed')).toBe(1);
  await expect(page.locator('[data-testid=run-message]')).toContainText('1 tile failed and is left out of coverage');
  await expect(page.locator('.notice.error').last()).toContainText(/^Tile 1 of scene-a\.tif failed: its worker failed 3 times .*left out of coverage/);
  expect(workers.n).toBe(5); // two at start, three replacements (one per crash)
  const cov = await coverage(page);
  const clean = coverageClean ?? { 'all|2024-05-17|blob': 1 };
  // The failed tile lies in the west of scene A, inside "all" and "west", where scene B does not reach.
  for (const k of ['all|2024-05-17|blob', 'west|2024-05-17|blob']) expect(cov[k]).toBeLessThan(clean[k] ?? 1);
});

test('cancel keeps shown progress and kept tiles in step; a tab closed mid-run resumes to the uninterrupted counts', async ({ page, context }) => {
  await open(page, 'workers=1&pace=150');
  await page.click('[data-testid=run]');
  await page.waitForFunction(() => Number(document.querySelector<HTMLElement>('[data-testid=run-stats]')?.dataset.done) >= 4);
  await page.click('[data-testid=stop]');
  await expect(stats(page)).toHaveAttribute('data-status', 'cancelled');
  const doneAtStop = await statAttr(page, 'done');
  expect(await keptTiles(page)).toBe(doneAtStop);
  await expect(page.locator('[data-testid=run]')).toHaveText('Resume');
  await expect(page.locator('[data-testid=run-message]')).toContainText(`Stopped after ${doneAtStop} of`);
  await expect(page.locator('.notice.error')).toHaveCount(0);

  // Resume, then close the tab abruptly (no unload handlers; what is not in IndexedDB yet is lost, as in a crash).
  await page.click('[data-testid=run]');
  await page.waitForFunction((n) => Number(document.querySelector<HTMLElement>('[data-testid=run-stats]')?.dataset.done) >= n + 4, doneAtStop);
  await page.waitForTimeout(700); // let one batch of finished tiles reach IndexedDB (batches are written every 500 ms)
  await page.close({ runBeforeUnload: false });
  const page2 = await context.newPage();
  await page2.goto(`${fx.appUrl}&workers=1`);
  await page2.waitForSelector('body[data-ready=true]');
  await expect(stats(page2)).toHaveAttribute('data-status', 'done', { timeout: 120_000 });
  const kept = /\((\d+) kept from before\)/.exec(await page2.locator('[data-testid=run-message]').innerText());
  expect(Number(kept?.[1])).toBeGreaterThan(doneAtStop);
  expect(await tally(page2, 'count')).toEqual(expected);
});

test('a full disk is reported once and the run still ends with its counts; a failing export leaves no file', async ({ page }) => {
  await open(page, 'workers=2&fault=quota,export');
  await runToEnd(page);
  const quota = page.locator('.notice.error', { hasText: 'no room left to keep your work' });
  await expect(quota).toHaveCount(1);
  await expect(quota).toContainText('Free disk space or clear old runs');
  expect(await tally(page, 'count')).toEqual(expected);
  expect(await keptTiles(page)).toBe(0);

  await page.click('.tabs button[data-tab=takeaway]');
  let downloads = 0;
  page.on('download', () => { downloads++; });
  await page.click('[data-testid=export-geojson]');
  await expect(page.locator('.notice.error').last()).toContainText('detections.geojson was not written, and no part of it was saved');
  await page.click('[data-testid=export-csv]');
  await expect(page.locator('.notice.error').last()).toContainText('counts.csv was not written');
  await page.waitForTimeout(500);
  expect(downloads).toBe(0);
});
