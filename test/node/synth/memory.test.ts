// Streaming: memory of a child process writing a scene must not grow with the scene's size. Two measures: peak RSS,
// and the largest live JS heap after forced GCs (precise: a cache or writer that grows with the scene shows at once).
// Default: 1024² vs 2560² at 0.6 m (≈ 40 vs 250 world blocks), block cache 8 (so both runs fill it). SEAMTALLY_SYNTH_HEAVY=1: 4000² vs 16000² at 0.3 m.
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';

interface Peak { maxRssKiB: number; liveHeapMiB: number; renderMs: number }
function peak(sizePx: number, gsdM: number, bands: string, bits: number, blockCache: string): Peak {
  const r = spawnSync(process.execPath, ['--expose-gc', '--import', 'tsx', 'test/node/synth/rss-child.ts', String(sizePx), String(gsdM), bands, String(bits), blockCache], { encoding: 'utf8', timeout: 3_000_000 });
  if (r.status !== 0) throw new Error(`child failed: ${r.stderr}`);
  return JSON.parse(r.stdout.trim().split('\n').pop()!);
}

describe('streaming memory bound', () => {
  const heavy = process.env.SEAMTALLY_SYNTH_HEAVY === '1';
  const [small, large, gsd, bands, bits, cache] = heavy ? [4000, 16000, 0.3, 'rgb', 8, ''] : [1024, 2560, 0.6, 'rgbn', 16, '8'];
  it(`memory ${large}² / ${small}² stays under 1.3`, { timeout: heavy ? 3_600_000 : 300_000 }, () => {
    const a = peak(small, gsd, bands, bits, cache);
    const b = peak(large, gsd, bands, bits, cache);
    const rss = b.maxRssKiB / a.maxRssKiB;
    const heap = b.liveHeapMiB / a.liveHeapMiB;
    console.log(`${small}²: RSS ${(a.maxRssKiB / 1024).toFixed(0)} MiB, live heap ${a.liveHeapMiB.toFixed(1)} MiB; ${large}²: RSS ${(b.maxRssKiB / 1024).toFixed(0)} MiB, live heap ${b.liveHeapMiB.toFixed(1)} MiB; ratios RSS ${rss.toFixed(2)}, heap ${heap.toFixed(2)} (pixels ×${((large / small) ** 2).toFixed(1)})`);
    expect(rss).toBeLessThan(1.3);
    // Live heap: a few MiB of V8 noise (measured +2.6 MiB, ratio 1.16–1.30 on small heaps); something that grows with
    // the scene (the colour cache since fixed made RSS 16000²/4000² = 3.3) adds tens of MiB.
    expect(b.liveHeapMiB - a.liveHeapMiB).toBeLessThan(6);
    expect(heap).toBeLessThan(1.6);
  });
});
