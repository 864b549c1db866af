// Streaming: peak RSS of a child process writing a scene must not grow with the scene's size.
// Default run: 1024² vs 3072² (8 bands × 16 bit, so a writer that kept tiles would show). SEAMTALLY_SYNTH_HEAVY=1: 4000² vs 16000².
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';

function peak(sizePx: number, gsdM: number, bands: string, bits: number): { maxRssKiB: number; renderMs: number } {
  const r = spawnSync(process.execPath, ['--import', 'tsx', join('test/node/synth/rss-child.ts'), String(sizePx), String(gsdM), bands, String(bits)], { encoding: 'utf8', timeout: 3_000_000 });
  if (r.status !== 0) throw new Error(`child failed: ${r.stderr}`);
  return JSON.parse(r.stdout.trim().split('\n').pop()!);
}

describe('streaming memory bound', () => {
  const heavy = process.env.SEAMTALLY_SYNTH_HEAVY === '1';
  const [small, large, gsd, bands, bits] = heavy ? [4000, 16000, 0.3, 'rgb', 8] : [1024, 3072, 0.22, '8', 16];
  it(`peak RSS ${large}² / ${small}² stays under 1.3`, { timeout: heavy ? 3_600_000 : 300_000 }, () => {
    const a = peak(small, gsd, bands, bits);
    const b = peak(large, gsd, bands, bits);
    const ratio = b.maxRssKiB / a.maxRssKiB;
    console.log(`peak RSS ${small}²: ${(a.maxRssKiB / 1024).toFixed(0)} MiB, ${large}²: ${(b.maxRssKiB / 1024).toFixed(0)} MiB, ratio ${ratio.toFixed(2)} (pixels ×${((large / small) ** 2).toFixed(0)})`);
    expect(ratio).toBeLessThan(1.3);
  });
});
