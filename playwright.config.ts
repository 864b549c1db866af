// Browser suite: Debian's chromium driven by Playwright against the app served by vite with COOP/COEP.
import { defineConfig } from '@playwright/test';
import { execSync } from 'node:child_process';

const chromiumPath = (() => {
  try { return execSync('command -v chromium', { shell: '/bin/bash' }).toString().trim(); } catch { return '/usr/bin/chromium'; }
})();

/** Port of the test server; SEAMTALLY_TEST_PORT lets two checkouts test side by side. */
export const TEST_PORT = Number(process.env.SEAMTALLY_TEST_PORT ?? 5179);

export default defineConfig({
  testDir: 'test/browser',
  testMatch: '**/*.spec.ts',
  timeout: 300_000,
  // Artifacts go below test-results/, so the screenshots the specs write into test-results/ survive the next run.
  outputDir: 'test-results/playwright-artifacts',
  workers: 1,
  reporter: [['list'], ['json']],
  use: {
    baseURL: `http://127.0.0.1:${TEST_PORT}`,
    launchOptions: {
      executablePath: chromiumPath,
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
        '--disable-background-networking', '--disable-component-update', '--disable-sync'],
    },
    screenshot: 'only-on-failure',
    viewport: { width: 1440, height: 900 },
  },
  webServer: {
    command: `npx vite --port ${TEST_PORT} --strictPort --host 127.0.0.1 --bypass-lock`,
    url: `http://127.0.0.1:${TEST_PORT}/`,
    reuseExistingServer: false,
    timeout: 120_000,
  },
});
