// Bad inputs in the page (issue 7): every entry of the shared catalogue (test/fixtures/bad-inputs.ts) that the page
// can be given — scenes, AOI files, models and sidecars — is fed through the page's own file pickers. A bad one must
// end in one sentence saying what is wrong and what to do (the catalogue's expected message, the same as the CLI's,
// unless the page words it differently below), within a time bound, never a blank page or a hang; a supported but
// unusual scene must open. Afterwards the page still runs the fixture scenes to the end.
import { test, expect, type Page } from '@playwright/test';
import { mkdirSync, readdirSync, rmSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { BAD_INPUTS, type BadInput } from '../fixtures/bad-inputs.ts';
import { makeBrowserFixture, TESTDATA_DIR, type BrowserFixture } from './scenes-fixture.ts';

/** Where the page's wording differs from the CLI's (the page asks for files, the CLI for paths). */
const PAGE_MESSAGE: Record<string, RegExp> = {
  'sidecar-missing': /Pick two files together: the model \(\.onnx\) and its sidecar \(\.model\.json\)/,
  'bands-5-unnamed': /has 5 bands and no band names.*write an RGB copy first, for example gdal_translate -b 3 -b 2 -b 1/,
};
/** Entries the page cannot be given (command-line arguments). */
const inPage = (b: BadInput) => b.stage !== 'args';

let fx: BrowserFixture;
let cases: Array<{ entry: BadInput; files: string[] }> = [];
test.beforeAll(() => {
  fx = makeBrowserFixture();
  const dir = join(TESTDATA_DIR, 'bad-inputs');
  rmSync(dir, { recursive: true, force: true });
  mkdirSync(dir, { recursive: true });
  cases = BAD_INPUTS.filter(inPage).map((entry) => {
    const p = entry.make(dir);
    const files = entry.stage === 'scene' ? p.scenes
      : entry.stage === 'aoi' ? [p.aoi]
      : readdirSync(dirname(p.model)).filter((f) => f.startsWith(p.model.split('/').pop()!.replace(/\.onnx$/, ''))).map((f) => join(dirname(p.model), f));
    return { entry, files };
  });
});

const PICKER: Record<string, string> = {
  scene: '[data-testid=dropzone] button',
  aoi: 'text=Import GeoJSON',
  model: '[data-testid=other-model]',
  sidecar: '[data-testid=other-model]',
};

async function give(page: Page, stage: string, files: string[]): Promise<void> {
  await page.evaluate(() => document.querySelectorAll('.notice').forEach((n) => n.remove()));
  const [chooser] = await Promise.all([page.waitForEvent('filechooser'), page.click(PICKER[stage])]);
  await chooser.setFiles(files);
}

test('every bad input of the catalogue the page can take gets its one sentence; unusual but valid scenes open', async ({ page }) => {
  test.setTimeout(240_000);
  await page.goto(fx.appUrl);
  await page.waitForSelector('body[data-ready=true]');
  await expect(page.locator('[data-testid=scene-list] li')).toHaveCount(2);
  const outcomes: string[] = [];
  for (const { entry, files } of cases) {
    const t0 = Date.now();
    await give(page, entry.stage, files);
    if (entry.expectKind === 'ok') {
      const name = files[0].split('/').pop()!;
      const li = page.locator(`[data-testid=scene-list] li[data-scene="${name}"]`);
      await expect.soft(li, entry.id).toHaveCount(1, { timeout: 20_000 });
      await expect.soft(page.locator('.notice.error'), entry.id).toHaveCount(0);
      if (await page.locator('.notice.error').count()) outcomes.push(`${entry.id}: ERROR ${await page.locator('.notice.error').allInnerTexts()}`);
      if (await li.count() === 0) { outcomes.push(`${entry.id}: NOT opened: ${await page.locator('.notice').allInnerTexts()}`); continue; }
      await li.locator('button', { hasText: 'Remove' }).click();
      await expect(li).toHaveCount(0);
      outcomes.push(`${entry.id}: opened`);
      continue;
    }
    const notice = page.locator('.notice.error .text').last();
    await expect.soft(notice, entry.id).toBeVisible({ timeout: entry.maxMs ?? 20_000 });
    if (await notice.count() === 0) { outcomes.push(`${entry.id}: NO NOTICE ${await page.locator('.notice').allInnerTexts()}`); continue; }
    const text = (await notice.innerText()).trim();
    outcomes.push(`${entry.id} (${Date.now() - t0} ms): ${text}`);
    expect.soft(text, entry.id).toMatch(PAGE_MESSAGE[entry.id] ?? entry.expectMessage);
    expect.soft(text, entry.id).not.toMatch(/Something went wrong inside seamtally/);
    expect.soft(text, entry.id).toMatch(/[.)]$/);
  }
  if (process.env.SEAMTALLY_SHOW_OUTCOMES) console.log(outcomes.join('\n'));
  await test.info().attach('outcomes.txt', { body: outcomes.join('\n'), contentType: 'text/plain' });
  expect(outcomes).toHaveLength(cases.length);
  // Nothing was broken by all that: the fixture scenes and model are still in place and run to the end.
  await expect(page.locator('[data-testid=scene-list] li')).toHaveCount(2);
  await expect(page.locator('[data-testid=model-info]')).toContainText('fixture-blob-detector');
  await page.click('[data-testid=run]');
  await expect(page.locator('[data-testid=run-stats]')).toHaveAttribute('data-status', 'done', { timeout: 120_000 });
  expect(Number(await page.locator('[data-testid=run-stats]').getAttribute('data-failed'))).toBe(0);
});
