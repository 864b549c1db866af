// Security (issue 7): the Content-Security-Policy is sent and enforced in the page and in the detector workers (no
// eval, no remote or inline scripts, no network beyond the app's own origin), a URL on another origin is refused with
// a sentence, and a whole fixture run plus an export makes requests to the app's own origin only (no egress).
// Outside reference for what each directive must block: W3C Content Security Policy Level 3 (connect-src,
// script-src 'wasm-unsafe-eval', img-src; 'self' also matching ws: of the same host), as Chromium implements it.
import { test, expect, type Page, type Worker } from '@playwright/test';
import { makeBrowserFixture, type BrowserFixture } from './scenes-fixture.ts';

let fx: BrowserFixture;
test.beforeAll(() => { fx = makeBrowserFixture(); });

/** Another origin served by the very same server (localhost vs 127.0.0.1): only the CSP can stop requests to it. */
const PORT = Number(process.env.SEAMTALLY_TEST_PORT ?? 5179);
const OTHER_ORIGIN = `http://localhost:${PORT}`;

interface Violation { directive: string; blockedURI: string }

/** Collect every CSP violation the page reports (securitypolicyviolation, CSP 3 §5.3). */
async function watchViolations(page: Page): Promise<void> {
  await page.addInitScript(() => {
    const list: Array<{ directive: string; blockedURI: string }> = [];
    (window as unknown as { __csp: typeof list }).__csp = list;
    document.addEventListener('securitypolicyviolation', (e) => list.push({ directive: e.effectiveDirective, blockedURI: e.blockedURI }));
  });
}
const violations = (page: Page) => page.evaluate(() => (window as unknown as { __csp: Violation[] }).__csp);

async function detectorWorker(page: Page): Promise<Worker> {
  await expect.poll(() => page.workers().some((w) => w.url().includes('detector.worker'))).toBe(true);
  return page.workers().find((w) => w.url().includes('detector.worker'))!;
}

test('the CSP is sent and enforced: no eval, no inline or remote script, no other origin, in the page and in a worker', async ({ page }) => {
  await watchViolations(page);
  const workerCsp: string[] = [];
  page.on('response', (r) => { if (/detector\.worker/.test(r.url())) workerCsp.push(r.headers()['content-security-policy'] ?? ''); });
  const res = await page.goto(fx.appUrl);
  await page.waitForSelector('body[data-ready=true]');
  const csp = res!.headers()['content-security-policy'];
  expect(csp).toContain("script-src 'self' 'wasm-unsafe-eval'");
  expect(csp).toContain("connect-src 'self'");
  expect(csp).toContain("worker-src 'self' blob:");
  expect(csp).toContain("img-src 'self' blob: data:");
  expect(csp).not.toContain("'unsafe-eval'");
  expect(csp).not.toMatch(/script-src[^;]*'unsafe-inline'/);
  const meta = await page.getAttribute('meta[http-equiv=Content-Security-Policy]', 'content');
  expect(meta).toContain("connect-src 'self'");
  // Workers take their policy from their own script's response: the detector worker's carries the same CSP.
  expect(workerCsp.length).toBeGreaterThan(0);
  for (const c of workerCsp) expect(c).toBe(csp);

  // In the page: eval and new Function throw EvalError; inline and remote scripts do not run; fetch and images
  // to another origin are refused before any request is sent.
  // (eval runs from a timer: DevTools lets code it evaluates itself use eval, but not what runs later.)
  const pageResult = await page.evaluate(async (other) => {
    const later = <T>(fn: () => T) => new Promise<T>((r) => setTimeout(() => r(fn()), 0));
    const evalResult = await later(() => { try { return String(eval('6 * 7')); } catch (e) { return (e as Error).name; } });
    const fnResult = await later(() => { try { return String(new Function('return 6 * 7')()); } catch (e) { return (e as Error).name; } });
    const inline = document.createElement('script');
    inline.textContent = 'window.__inlineRan = true';
    document.head.append(inline);
    const remote = document.createElement('script');
    remote.src = `${other}/app/main.ts`;
    document.head.append(remote);
    const img = new Image();
    img.src = `${other}/favicon.png`;
    const fetched = await fetch(`${other}/demo/manifest.json`).then(() => 'fetched', () => 'blocked');
    await new Promise((r) => setTimeout(r, 300));
    return { evalResult, fnResult, fetched, inlineRan: (window as unknown as { __inlineRan?: boolean }).__inlineRan === true };
  }, OTHER_ORIGIN);
  expect(pageResult).toEqual({ evalResult: 'EvalError', fnResult: 'EvalError', fetched: 'blocked', inlineRan: false });
  const seen = await violations(page);
  const blockedBy = (d: string, uri: RegExp) => seen.some((v) => v.directive === d && uri.test(v.blockedURI));
  expect(blockedBy('connect-src', new RegExp(`^http://localhost:${PORT}/demo`))).toBe(true);
  expect(blockedBy('img-src', new RegExp(`^http://localhost:${PORT}/`))).toBe(true);
  expect(blockedBy('script-src-elem', new RegExp(`^http://localhost:${PORT}/`))).toBe(true);
  expect(blockedBy('script-src-elem', /^inline$/)).toBe(true);

  // In a detector worker (where scenes are read): eval throws and another origin is refused; its own origin works.
  const worker = await detectorWorker(page);
  const inWorker = await worker.evaluate(async (other) => {
    const got: string[] = [];
    self.addEventListener('securitypolicyviolation', (e) => got.push((e as SecurityPolicyViolationEvent).effectiveDirective));
    const evalResult = await new Promise<string>((r) => setTimeout(() => { try { r(String((0, eval)('6 * 7'))); } catch (e) { r((e as Error).name); } }, 0));
    const other1 = await fetch(`${other}/testdata/blob/scene-a.tif`, { headers: { Range: 'bytes=0-7' } }).then(() => 'fetched', () => 'blocked');
    const own = await fetch('/testdata/blob/scene-a.tif', { headers: { Range: 'bytes=0-7' } }).then((r) => String(r.status), () => 'blocked');
    await new Promise((r) => setTimeout(r, 200));
    return { evalResult, other: other1, own, directives: got };
  }, OTHER_ORIGIN);
  expect(inWorker).toEqual({ evalResult: 'EvalError', other: 'blocked', own: '206', directives: expect.arrayContaining(['connect-src']) });

  // The URL box refuses another origin with a sentence saying how to allow it (instead of the browser's silent block).
  await page.fill('input[aria-label="Scene URL"]', `${OTHER_ORIGIN}/testdata/blob/scene-a.tif`);
  await page.click('text=Open URL');
  await expect(page.locator('.notice.error').last()).toContainText(new RegExp(`not one of them: restart it with SEAMTALLY_IMAGERY_ORIGINS=http://localhost:${PORT}`));
  await expect(page.locator('[data-testid=scene-list] li')).toHaveCount(2);
});

test('no egress: every request of a fixture run and its export goes to the app\'s own origin', async ({ page, context }) => {
  await watchViolations(page);
  const requests: Array<{ url: string; range: boolean }> = [];
  // context-level: includes the page, its dedicated workers (detector pool, tally) and anything they start.
  context.on('request', (r) => { requests.push({ url: r.url(), range: 'range' in r.headers() }); });
  await page.goto(`${fx.appUrl}&workers=2`);
  await page.waitForSelector('body[data-ready=true]');
  await expect(page.locator('[data-testid=scene-list] li')).toHaveCount(2);
  await page.click('[data-testid=run]');
  await expect(page.locator('[data-testid=run-stats]')).toHaveAttribute('data-status', 'done', { timeout: 120_000 });
  await page.click('.tabs button[data-tab=takeaway]');
  await Promise.all([page.waitForEvent('download'), page.click('[data-testid=export-geojson]')]);
  await Promise.all([page.waitForEvent('download'), page.click('[data-testid=export-csv]')]);

  const own = new URL(page.url()).origin;
  const elsewhere = requests.filter((r) => !r.url.startsWith('data:') && !r.url.startsWith('blob:') && new URL(r.url).origin !== own);
  expect(elsewhere).toEqual([]);
  // The recording did see the workers' own traffic: only the detector workers load onnxruntime-web and its .wasm.
  expect(requests.some((r) => /ort-wasm[^/]*\.wasm(\?|$)/.test(r.url))).toBe(true);
  expect(requests.filter((r) => r.range && /scene-[ab]\.tif/.test(r.url)).length).toBeGreaterThan(4);
  // And the app ran without tripping its own policy.
  expect(await violations(page)).toEqual([]);
});
