// Smoke run of `npm run bench -- --smoke --no-browser`: the bench runs end to end on tiny scenes and writes every
// CLI and merge figure. No timed assertions (the bench's targets belong to the bench, not to the test suite).
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

describe('bench smoke', () => {
  it('writes results.json with CLI throughput, the per-tile split, memory, overlap and merge figures', () => {
    const dir = mkdtempSync(join(tmpdir(), 'seamtally-bench-'));
    try {
      const out = join(dir, 'results.json');
      const r = spawnSync(process.execPath, ['scripts/bench.mjs', '--smoke', '--no-browser', '--out', out], { encoding: 'utf8', timeout: 280_000 });
      expect(r.status, r.stderr).toBe(0);
      expect(r.stdout).toContain('inference share (CLI)');
      const res = JSON.parse(readFileSync(out, 'utf8'));
      const cli = res.figures.cli['640'];
      for (const v of [cli.mpixPerS, cli.tilesPerS, cli.msPerTile.inference, cli.msPerTile.readDecode, cli.inferenceShare]) {
        expect(Number.isFinite(v) && v > 0).toBe(true);
      }
      expect(res.cli.block['1280'].tiles).toBeGreaterThan(0);
      expect(res.figures.memoryBound.cli).toBeGreaterThan(0);
      expect(res.figures.overlapOverhead.value).toBeGreaterThanOrEqual(1);
      // the default tiling per scene is recorded, and every scene ran the same block
      for (const k of ['640', '1280']) {
        expect(res.plans[k].default.tiles).toBe(res.plans[k].default.cols * res.plans[k].default.rows);
        expect(res.figures.overlapOverhead.perScene[k].tilePx).toBe(res.plans[k].default.tilePx);
        expect(res.cli.block[k].tiles).toBe(res.blockTiles);
      }
      expect(res.merge.node.map((m: { n: number }) => m.n)).toEqual([10_000, 100_000]);
      expect(res.merge.node[1].kept).toBeLessThan(100_000); // the invented duplicates were merged
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  }, 300_000);
});
