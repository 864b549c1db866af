// Streaming: peak RSS of a child process writing a scene must not grow with the scene's size.
// Default run: 1024² vs 2560² at 0.6 m (≈ 40 vs 250 world blocks, 4 bands × 16 bit), each child with a 96 MiB JS heap cap,
// so a cache or a writer that grows with the scene fails. SEAMTALLY_SYNTH_HEAVY=1: 4000² vs 16000² at 0.3 m.
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';

function peak(sizePx: number, gsdM: number, bands: string, bits: number): { maxRssKiB: number; renderMs: number } {
  const r = spawnSync(process.execPath, ['--max-old-space-size=96', '--import', 'tsx', join('test/node/synth/rss-child.ts'), String(sizePx), String(gsdM), bands, String(bits)], { encoding: 'utf8', timeout: 3_000_000 });
  if (r.status !== 0) throw new Error(`child failed: ${r.stderr}`);
  return JSON.parse(r.stdout.trim().split('\n').pop()!);
}

describe('streaming memory bound', () => {
  const heavy = process.env.SEAMTALLY_SYNTH_HEAVY === '1';
  const [small, large, gsd, bands, bits] = heavy ? [4000, 16000, 0.3, 'rgb', 8] : [1024, 2560, 0.6, 'rgbn', 16];
  it(`peak RSS ${large}² / ${small}² stays under 1.3`, { timeout: heavy ? 3_600_000 : 300_000 }, () => {
    const a = peak(small, gsd, bands, bits);
    const b = peak(large, gsd, bands, bits);
    const ratio = b.maxRssKiB / a.maxRssKiB;
    console.log(`peak RSS ${small}²: ${(a.maxRssKiB / 1024).toFixed(0)} MiB, ${large}²: ${(b.maxRssKiB / 1024).toFixed(0)} MiB, ratio ${ratio.toFixed(2)} (pixels ×${((large / small) ** 2).toFixed(0)})`);
    expect(ratio).toBeLessThan(1.3);
  });
});
