// Browser side of the bench, driven from Node: Vite (COOP/COEP) + headless Debian chromium via Playwright; runs the
// in-page harness (tiles on 1 and 2 workers, merge in the tally worker), reads the renderer's peak RSS from /proc,
// and runs the real app on a scene with an area, recording the main thread's long tasks (Long Tasks API).
import { spawn, execSync, type ChildProcess } from 'node:child_process';
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { chromium, type Browser, type Page } from 'playwright-core';
import type { CpuSnapshot, TileRunFigures, TileRunSpec } from './browser-harness.ts';

const REPO = resolve(import.meta.dirname, '..');
/** The flags of playwright.config.ts. */
const CHROMIUM_ARGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
  '--disable-background-networking', '--disable-component-update', '--disable-sync'];

export function chromiumPath(): string {
  try { return execSync('command -v chromium', { shell: '/bin/bash' }).toString().trim(); } catch { return '/usr/bin/chromium'; }
}

export interface Server { url: string; stop(): void }

/** Start Vite on `port`, serving `demoDir` at /demo/ (the app's data route). */
export async function startVite(port: number, demoDir: string): Promise<Server> {
  const proc: ChildProcess = spawn('npx', ['vite', '--port', String(port), '--strictPort', '--host', '127.0.0.1', '--bypass-lock'], {
    cwd: REPO, env: { ...process.env, SEAMTALLY_DEMO_DIR: demoDir }, stdio: ['ignore', 'pipe', 'pipe'], detached: true,
  });
  let log = '';
  proc.stdout?.on('data', (b) => { log += b; });
  proc.stderr?.on('data', (b) => { log += b; });
  const url = `http://127.0.0.1:${port}`;
  const stop = () => { try { process.kill(-proc.pid!, 'SIGTERM'); } catch { /* gone */ } };
  for (let i = 0; i < 240; i++) {
    if (proc.exitCode !== null) throw new Error(`vite exited: ${log}`);
    try { if ((await fetch(`${url}/models/index.json`)).ok) return { url, stop }; } catch { /* not yet */ }
    await new Promise((r) => setTimeout(r, 500));
  }
  stop();
  throw new Error(`vite did not answer on ${url}: ${log}`);
}

export async function launch(): Promise<Browser> {
  // SEAMTALLY_BENCH_JS_FLAGS: V8 flags for a profiling run (e.g. "--prof", then `node --prof-process` on the
  // isolate logs chromium writes into its working directory); never set by the bench itself
  const jsFlags = process.env.SEAMTALLY_BENCH_JS_FLAGS;
  return chromium.launch({ executablePath: chromiumPath(), args: jsFlags ? [...CHROMIUM_ARGS, `--js-flags=${jsFlags}`] : CHROMIUM_ARGS });
}

/** Renderer processes (chromium `--type=renderer`) below `rootPid`. */
function rendererPids(rootPid: number): number[] {
  const parent = new Map<number, number>();
  for (const d of readdirSync('/proc')) {
    if (!/^\d+$/.test(d)) continue;
    try {
      const stat = readFileSync(`/proc/${d}/stat`, 'utf8');
      parent.set(Number(d), Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[1]));
    } catch { /* exited */ }
  }
  const below = (pid: number) => { for (let p = pid; p > 1; p = parent.get(p) ?? 0) if (p === rootPid) return true; return false; };
  return [...parent.keys()].filter((pid) => {
    try { return below(pid) && readFileSync(`/proc/${pid}/cmdline`, 'utf8').includes('--type=renderer'); } catch { return false; }
  });
}

/** Peak RSS (VmHWM) of the largest renderer process below `rootPid`, bytes (0 when none is found). */
export function rendererPeakRssB(rootPid: number): number {
  let peak = 0;
  for (const pid of rendererPids(rootPid)) {
    try {
      const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
      if (m) peak = Math.max(peak, Number(m[1]) * 1024);
    } catch { /* exited */ }
  }
  return peak;
}

/** Linux clock ticks per second (USER_HZ, `getconf CLK_TCK`): 100 on every mainstream kernel build. */
const TICK_MS = 10;
/** utime + stime (fields 14, 15 of proc_pid_stat(5)) in ms. */
const statCpuMs = (stat: string) => { const f = stat.slice(stat.lastIndexOf(')') + 2).split(' '); return (Number(f[11]) + Number(f[12])) * TICK_MS; };

/**
 * CPU time so far of the renderers below `rootPid` (all threads: page, workers, wasm) and of their dedicated-worker
 * threads one by one, and the whole machine's busy time (/proc/stat: user + nice + system + irq + softirq + steal).
 */
export function cpuSnapshot(rootPid: number): CpuSnapshot {
  let rendererMs = 0;
  const workerMs: Record<string, number> = {};
  for (const pid of rendererPids(rootPid)) {
    try {
      rendererMs += statCpuMs(readFileSync(`/proc/${pid}/stat`, 'utf8'));
      for (const tid of readdirSync(`/proc/${pid}/task`)) {
        try {
          const st = readFileSync(`/proc/${pid}/task/${tid}/stat`, 'utf8');
          if (/\(DedicatedWorker/.test(st)) workerMs[`${pid}/${tid}`] = statCpuMs(st);
        } catch { /* thread ended */ }
      }
    } catch { /* exited */ }
  }
  const cpu = readFileSync('/proc/stat', 'utf8').split('\n')[0].trim().split(/\s+/).slice(1).map(Number);
  const machineBusyMs = (cpu[0] + cpu[1] + cpu[2] + cpu[5] + cpu[6] + cpu[7]) * TICK_MS;
  return { rendererMs, workerMs, machineBusyMs };
}

/** A page on the Vite origin (cross-origin isolated) with the harness imported. */
async function harnessPage(browser: Browser, server: Server): Promise<Page> {
  const page = await (await browser.newContext()).newPage();
  page.on('pageerror', (e) => process.stderr.write(`[page] ${e.message}\n`));
  await page.goto(`${server.url}/models/index.json`);
  const isolated = await page.evaluate(() => self.crossOriginIsolated);
  if (!isolated) process.stderr.write('[bench] warning: the bench page is not cross-origin isolated\n');
  return page;
}

const harnessUrl = () => `/@fs${REPO}/bench/browser-harness.ts`;

/** Id of the page's file input that holds the scene of 'file' runs. */
const BENCH_FILE_INPUT = 'bench-scene';

/**
 * Tiles on 1 worker then on 2, in one fresh browser; plus the renderer's peak RSS after both. `scenePath`: the scene
 * on disk, handed to the page as a File (Playwright's setInputFiles on a local browser gives a disk-backed file,
 * read lazily like one an analyst picks) for specs that read 'file'.
 */
export async function browserTiles(server: Server, specs: TileRunSpec[], scenePath: string): Promise<{ runs: TileRunFigures[]; rendererPeakRssB: number }> {
  const browser = await launch();
  try {
    const page = await harnessPage(browser, server);
    if (specs.some((s) => s.read !== 'url')) {
      await page.evaluate((id) => {
        const input = document.createElement('input');
        input.type = 'file';
        input.id = id;
        document.body.appendChild(input);
      }, BENCH_FILE_INPUT);
      await page.setInputFiles(`#${BENCH_FILE_INPUT}`, scenePath);
    }
    // the harness calls this at the edges of its timed part, so the CPU figures cover exactly the timed tiles
    await page.exposeFunction('__benchCpu', () => cpuSnapshot(process.pid));
    const runs: TileRunFigures[] = [];
    for (const spec of specs) {
      const withInput = { ...spec, fileInputId: BENCH_FILE_INPUT };
      runs.push(await page.evaluate(async ([url, s]) => (await import(/* @vite-ignore */ url)).runTiles(s), [harnessUrl(), withInput] as const));
    }
    // chromium is a child of this process; its renderer holds the page and the workers
    return { runs, rendererPeakRssB: rendererPeakRssB(process.pid) };
  } finally {
    await browser.close();
  }
}

export async function browserMerge(server: Server, ns: number[]): Promise<Array<{ n: number; ms: number; kept: number }>> {
  const browser = await launch();
  try {
    const page = await harnessPage(browser, server);
    return await page.evaluate(async ([url, n]) => (await import(/* @vite-ignore */ url)).mergeInTally(n), [harnessUrl(), ns] as const);
  } finally {
    await browser.close();
  }
}

export interface AppRunFigures {
  tiles: number;
  wallMs: number;
  longTasksMs: number[];
  longestTaskMs: number;
  longTasksOver100: number;
  /** Longest main-thread task while the page opened (before the run). */
  longestOpenTaskMs: number;
  status: string;
}

/** The real app on `manifestPath` (served at /demo/) with "areas only": long tasks from the click to the end. */
export async function appRun(server: Server, manifestPath: string, workers: number): Promise<AppRunFigures> {
  const browser = await launch();
  try {
    const context = await browser.newContext({ viewport: { width: 1440, height: 900 } });
    const page = await context.newPage();
    page.on('pageerror', (e) => process.stderr.write(`[app] ${e.message}\n`));
    await page.addInitScript(() => {
      const w = window as unknown as { __longTasks: Array<{ start: number; ms: number }> };
      w.__longTasks = [];
      new PerformanceObserver((list) => { for (const e of list.getEntries()) w.__longTasks.push({ start: e.startTime, ms: e.duration }); })
        .observe({ type: 'longtask', buffered: true });
    });
    await page.goto(`${server.url}/?manifest=/demo/${manifestPath}&workers=${workers}`);
    await page.waitForSelector('body[data-ready=true]', { timeout: 180_000 });
    await page.waitForTimeout(1500); // the scene preview and first draws settle
    const tStart = await page.evaluate(() => performance.now());
    const areasOnly = page.locator('#areas-only');
    if (!(await areasOnly.isChecked())) await areasOnly.check();
    await page.click('[data-testid=run]');
    await page.waitForFunction(() => {
      const s = document.querySelector('[data-testid=run-stats]') as HTMLElement | null;
      return s?.dataset.status === 'done' || s?.dataset.status === 'failed';
    }, undefined, { timeout: 900_000, polling: 250 });
    await page.waitForTimeout(1000); // the final redraw
    const out = await page.evaluate((t0) => {
      const w = window as unknown as { __longTasks: Array<{ start: number; ms: number }> };
      const s = document.querySelector('[data-testid=run-stats]') as HTMLElement;
      return { tasks: w.__longTasks, now: performance.now(), status: s.dataset.status ?? '', done: Number(s.dataset.done ?? 0), t0 };
    }, tStart);
    const during = out.tasks.filter((t) => t.start >= tStart).map((t) => t.ms);
    const before = out.tasks.filter((t) => t.start < tStart).map((t) => t.ms);
    return {
      tiles: out.done, wallMs: out.now - tStart - 1000, longTasksMs: during.sort((a, b) => b - a).slice(0, 20),
      longestTaskMs: Math.max(0, ...during), longTasksOver100: during.filter((m) => m > 100).length,
      longestOpenTaskMs: Math.max(0, ...before), status: out.status,
    };
  } finally {
    await browser.close();
  }
}

export function haveChromium(): boolean {
  return existsSync(chromiumPath());
}
