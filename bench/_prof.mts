import { startVite, launch } from './browser.ts';
import { writeFileSync } from 'node:fs';
const s = await startVite(5183, 'bench/cache');
const browser = await launch();
try {
  const page = await (await browser.newContext({ viewport: { width: 1440, height: 900 } })).newPage();
  await page.goto(`${s.url}/?manifest=/demo/app-bench-4000.manifest.json&workers=2`);
  await page.waitForSelector('body[data-ready=true]', { timeout: 180000 });
  await page.waitForTimeout(1500);
  const cdp = await page.context().newCDPSession(page);
  await cdp.send('Profiler.enable'); await cdp.send('Profiler.setSamplingInterval', { interval: 500 }); await cdp.send('Profiler.start');
  await page.locator('#areas-only').check();
  await page.click('[data-testid=run]');
  await page.waitForFunction(() => (document.querySelector('[data-testid=run-stats]') as HTMLElement)?.dataset.status === 'done', undefined, { timeout: 600000 });
  await page.waitForTimeout(1000);
  const { profile } = await cdp.send('Profiler.stop');
  writeFileSync('/tmp/prof3/p.cpuprofile', JSON.stringify(profile));
} finally { await browser.close(); s.stop(); }
