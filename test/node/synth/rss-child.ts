// Child process for the streaming-memory check: writes one scene, prints peak RSS (KiB) and the largest live JS heap
// after a forced GC (sampled every 8 tiles and at the end) as JSON. Run with --expose-gc.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { makeSceneParams } from '../../../synth/scene-params.ts';
import { synthToDir } from '../../../cli/synth.ts';

const sizePx = Number(process.argv[2]);
const gsdM = Number(process.argv[3] ?? 0.3);
const bands = (process.argv[4] ?? 'rgb') as 'rgb' | 'rgbn' | 'pan' | '8';
const bits = Number(process.argv[5] ?? 8) as 8 | 11 | 12 | 16;
const blockCache = process.argv[6] ? Number(process.argv[6]) : undefined;
const gc = (globalThis as { gc?: () => void }).gc;
let liveHeapB = 0;
const sample = () => { if (gc) { gc(); liveHeapB = Math.max(liveHeapB, process.memoryUsage().heapUsed); } };
const dir = mkdtempSync(join(tmpdir(), 'seamtally-rss-'));
try {
  const p = makeSceneParams({ seed: 11, gsdM, widthPx: sizePx, name: 'rss', bands, bits });
  const t0 = performance.now();
  const st = synthToDir(dir, p, { blockCache, onTile: (n) => { if (n % 8 === 0) sample(); } });
  sample();
  process.stdout.write(`${JSON.stringify({ sizePx, gsdM, bands, bits, maxRssKiB: process.resourceUsage().maxRSS, liveHeapMiB: liveHeapB / 2 ** 20, renderMs: st.renderMs, totalMs: performance.now() - t0, objects: st.truthCount, fileSizeB: st.cog.fileSizeB })}\n`);
} finally {
  rmSync(dir, { recursive: true, force: true });
}
