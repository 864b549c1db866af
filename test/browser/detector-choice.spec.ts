// The Detector block's choice of shipped detectors: every sidecar models/index.json lists is offered in its order,
// the chosen one is loaded into the workers, and the choice outlives a reload. A second shipped detector is stood in
// for by the test fixture model, served under /models/ by intercepting the page's requests.
import { test, expect } from '@playwright/test';
import { readFileSync } from 'node:fs';
import { FIXTURE_MODEL } from './scenes-fixture.ts';

const shipped = JSON.parse(readFileSync('models/index.json', 'utf8')) as string[];
const EXTRA = 'second-detector.model.json';
const SUMMARY = 'a second detector, for this test only';

test('the Detector block offers each shipped detector, loads the chosen one, and keeps the choice across a reload', async ({ page }) => {
  const fixtureSidecar = JSON.parse(readFileSync(FIXTURE_MODEL.replace(/\.onnx$/, '.model.json'), 'utf8')) as Record<string, unknown>;
  await page.route('**/models/index.json', (r) => r.fulfill({ contentType: 'application/json', body: JSON.stringify([...shipped, EXTRA]) }));
  await page.route(`**/models/${EXTRA}`, (r) => r.fulfill({ contentType: 'application/json', body: JSON.stringify({ ...fixtureSidecar, name: 'second-detector', version: '1', summary: SUMMARY }) }));
  await page.route('**/models/second-detector.onnx', (r) => r.fulfill({ contentType: 'application/octet-stream', body: readFileSync(FIXTURE_MODEL) }));
  const first = JSON.parse(readFileSync(`models/${shipped[0]}`, 'utf8')) as { name: string };

  await page.goto('/?demo=open');
  await page.waitForSelector('body[data-ready=true]', { timeout: 120_000 });
  const info = page.locator('[data-testid=model-info]');
  const choice = page.locator('[data-testid=model-choice]');
  await expect(info).toContainText(first.name);
  await expect(choice).toBeVisible();
  await expect(choice.locator('option')).toHaveCount(shipped.length + 1);
  await expect(choice).toHaveValue(`/models/${shipped[0]}`);

  await choice.selectOption(`/models/${EXTRA}`);
  await expect(info).toContainText('second-detector');
  await expect(page.locator('[data-testid=model-choice-summary]')).toHaveText(SUMMARY);

  await page.reload();
  await page.waitForSelector('body[data-ready=true]', { timeout: 120_000 });
  await expect(info).toContainText('second-detector');
  await expect(choice).toHaveValue(`/models/${EXTRA}`);

  await choice.selectOption(`/models/${shipped[0]}`);
  await expect(info).toContainText(first.name);
  await expect(info).not.toContainText('second-detector');
});
