// The built-in demo with the shipped detector: opens on its own, runs, and its per-AOI counts for each date equal
// those of `seamtally detect` on the same files and model (the CLI, with onnxruntime-node, is the reference).
import { test, expect } from '@playwright/test';
import { execFileSync } from 'node:child_process';
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';

const DEMO_DIR = '.cache/demo';
const sidecar = existsSync('models') ? readdirSync('models').find((f) => f.endsWith('.model.json')) : undefined;

interface Manifest { aois: string; scenes: Array<{ file: string; date: string }> }

test.beforeAll(() => {
  if (!sidecar) return;
  if (!existsSync(join(DEMO_DIR, 'manifest.json'))) {
    execFileSync(process.execPath, ['bin/seamtally.mjs', 'demo', '--out', DEMO_DIR, '--quiet'], { stdio: 'inherit' });
  }
});

test('the demo opens with the shipped model, runs, and matches seamtally detect per AOI and date', async ({ page }) => {
  test.skip(!sidecar, 'no shipped model under models/ yet');
  test.setTimeout(600_000);
  const manifest = JSON.parse(readFileSync(join(DEMO_DIR, 'manifest.json'), 'utf8')) as Manifest;
  await page.goto('/');
  await page.waitForSelector('body[data-ready=true]', { timeout: 120_000 });
  await expect(page.locator('[data-testid=scene-list] li')).toHaveCount(manifest.scenes.length);
  await expect(page.locator('[data-testid=model-info]')).toContainText('shipped');
  await page.screenshot({ path: 'test-results/demo-open.png' });
  await page.click('[data-testid=run]');
  await expect(page.locator('[data-testid=run-stats]')).toHaveAttribute('data-status', 'done', { timeout: 540_000 });
  await page.screenshot({ path: 'test-results/demo-run.png' });
  const browser = await page.$$eval('[data-testid=tally] tr[data-aoi]', (rows) => Object.fromEntries(rows.map((r) => {
    const d = (r as HTMLElement).dataset;
    return [`${d.aoi}|${d.date}|${d.cls}`, Number(d.count)];
  })));
  const onnx = join('models', sidecar!.replace(/\.model\.json$/, '.onnx'));
  const expected: Record<string, number> = {};
  for (const date of [...new Set(manifest.scenes.map((s) => s.date))]) {
    const out = join(DEMO_DIR, `cli-${date}`);
    const scenes = manifest.scenes.filter((s) => s.date === date).map((s) => join(DEMO_DIR, s.file));
    execFileSync(process.execPath, ['bin/seamtally.mjs', 'detect', ...scenes, '--aoi', join(DEMO_DIR, manifest.aois), '--model', onnx,
      '--out', out, '--date', date, '--quiet', '--threads', '2'], { stdio: ['ignore', 'ignore', 'inherit'] });
    const counts = JSON.parse(readFileSync(join(out, 'counts.json'), 'utf8')) as { rows: Array<{ aoiName: string; date: string; className: string; count: number }> };
    for (const r of counts.rows) expected[`${r.aoiName}|${r.date}|${r.className}`] = r.count;
  }
  expect(Object.values(expected).some((c) => c > 0)).toBe(true);
  expect(browser).toEqual(expected);

  await page.click('.tabs button[data-tab=compare]');
  await expect(page.locator('[data-testid=compare] tr[data-aoi]').first()).toBeVisible();
  await page.screenshot({ path: 'test-results/demo-compare.png' });
});
