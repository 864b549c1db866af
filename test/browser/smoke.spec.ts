// Browser smoke: the page loads cross-origin isolated (needed for threaded WASM).
import { test, expect } from '@playwright/test';

test('page is cross-origin isolated', async ({ page }) => {
  await page.goto('/');
  expect(await page.evaluate(() => self.crossOriginIsolated)).toBe(true);
});
