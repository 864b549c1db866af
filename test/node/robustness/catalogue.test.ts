// Every bad-input catalogue entry (test/fixtures/bad-inputs.ts) three ways, built once:
// 1. the real command line (`node bin/seamtally.mjs detect` as a subprocess, 2 at a time, in the background): exit 1
//    (a typed error, not 70 = internal), one clean sentence on stderr matching the entry, killed after
//    CASE_TIMEOUT_MS (a hang); supported entries exit 0 and count the planted squares;
// 2. the CLI command's run() in process: a SeamtallyError of the entry's kind within CASE_MS, or success;
// 3. for scene entries, the page's path (openGeoTiffBlob → prepareScene → first tile into the model tensor).
import { execFile } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { run } from '../../../cli/detect.ts';
import { SeamtallyError } from '../../../web/core/errors.ts';
import { parseSidecar } from '../../../web/core/model-contract.ts';
import { createTileScratch, fillTensor, prepareScene, readTile } from '../../../web/core/pipeline.ts';
import { openGeoTiffBlob } from '../../../web/io/geotiff-source.ts';
import { BASE, FIXTURE_SIDECAR, squareMask } from '../../fixtures/bad-input-assets.ts';
import { BAD_INPUTS, CONTROL, type BadInput, type BadInputPaths } from '../../fixtures/bad-inputs.ts';
import { bounded, expectOneCleanSentence } from './harness.ts';

const CASE_TIMEOUT_MS = 30_000;
const CASE_MS = 10_000;
/** Subprocesses at once: the box has 2 cores; each run is mostly Node + tsx + onnxruntime start-up (~0.5 s CPU). */
const CONCURRENCY = 2;
const dir = mkdtempSync(join(tmpdir(), 'seamtally-robust-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const all = [CONTROL, ...BAD_INPUTS];
const paths = new Map<string, BadInputPaths>();

interface CliRun { rc: number | null; signal: string | null; stderr: string; ms: number; out: string }
let cliRuns: Promise<Map<string, CliRun>>;

function runCli(e: BadInput): Promise<CliRun> {
  const p = paths.get(e.id)!;
  const out = join(dir, `cli-${e.id}`);
  const args = ['bin/seamtally.mjs', 'detect', ...p.scenes, '--aoi', p.aoi, '--model', p.model, '--out', out, '--quiet', ...(p.args ?? [])];
  const t0 = performance.now();
  return new Promise((resolve) => {
    execFile(process.execPath, args, { timeout: CASE_TIMEOUT_MS, killSignal: 'SIGKILL', encoding: 'utf8' }, (err, _stdout, stderr) => {
      const rc = err ? (typeof err.code === 'number' ? err.code : null) : 0;
      resolve({ rc, signal: err?.signal ?? null, stderr, ms: performance.now() - t0, out });
    });
  });
}

beforeAll(() => {
  for (const e of all) paths.set(e.id, e.make(dir));
  // the subprocesses run while the in-process tests below do; the CLI tests at the end await them
  const queue = [...all];
  const runs = new Map<string, CliRun>();
  cliRuns = Promise.all(Array.from({ length: CONCURRENCY }, async () => {
    for (let e = queue.shift(); e; e = queue.shift()) runs.set(e.id, await runCli(e));
  })).then(() => runs);
}, 120_000);

function expectTyped(e: BadInput, r: Awaited<ReturnType<typeof bounded>>, where: string): void {
  expect(r.timedOut, `${e.id} (${where}) did not settle within ${CASE_MS} ms`).toBe(false);
  if (e.maxMs) expect(r.ms).toBeLessThan(e.maxMs);
  expect(r.error, `${e.id} (${where}) should fail with ${e.expectKind}`).toBeInstanceOf(SeamtallyError);
  const err = r.error as SeamtallyError;
  expect(err.kind, `${where}: ${err.message}`).toBe(e.expectKind);
  expectOneCleanSentence(err.message, `${e.id} (${where})`);
  expect(err.message).toMatch(e.expectMessage);
}

describe(`run() of seamtally detect on ${all.length} catalogue inputs (in process)`, () => {
  for (const e of all) {
    it(`${e.id} → ${e.expectKind}`, async () => {
      const p = paths.get(e.id)!;
      const out = join(dir, `api-${e.id}`);
      const r = await bounded(() => run([...p.scenes, '--aoi', p.aoi, '--model', p.model, '--out', out, '--quiet', ...(p.args ?? [])]), CASE_MS);
      if (e.expectKind !== 'ok') return expectTyped(e, r, 'run()');
      expect(r.error).toBeUndefined();
      expect(r.value).toBe(0);
      const counts = JSON.parse(readFileSync(join(out, 'counts.json'), 'utf8')) as { rows: { count: number }[] };
      expect(counts.rows.map((x) => x.count)).toEqual([e.expectCount]);
    });
  }
});

describe('the page path (Blob source → prepareScene → first tile) on the scene entries', () => {
  const sidecar = parseSidecar(readFileSync(FIXTURE_SIDECAR, 'utf8'));
  for (const e of all.filter((x) => x.stage === 'scene')) {
    it(`${e.id} → ${e.expectKind}`, async () => {
      const path = paths.get(e.id)!.scenes[0];
      const r = await bounded(async () => {
        const src = await openGeoTiffBlob(new Blob([readFileSync(path)]), { name: basename(path) });
        try {
          const p = await prepareScene(src, 0, sidecar);
          const tile = p.plan.tiles[0];
          const scratch = createTileScratch(p.plan.tilePx);
          const read = await readTile(p, tile);
          return { p, tile, scratch, filled: read.win ? fillTensor(p, tile, read.win, scratch) : false };
        } finally {
          await src.close();
        }
      }, CASE_MS);
      if (e.expectKind !== 'ok') return expectTyped(e, r, 'page path');
      expect(r.error).toBeUndefined();
      const { p, tile, scratch, filled } = r.value!;
      expect(filled).toBe(true);
      // The documented stretch (identity for 8-bit, 1–99 % percentiles otherwise; radiometry.ts) must leave the
      // planted squares clearly brighter than the ground in every model channel of the one 128 px tile.
      expect(p.plan.tiles).toHaveLength(1);
      expect(tile.windowModelPx).toEqual({ minXPx: 0, minYPx: 0, maxXPx: BASE.widthPx, maxYPx: BASE.heightPx });
      const mask = squareMask();
      const T = scratch.tilePx;
      for (let c = 0; c < 3; c++) {
        let inS = 0, nIn = 0, outS = 0, nOut = 0;
        for (let y = 0; y < BASE.heightPx; y++) for (let x = 0; x < BASE.widthPx; x++) {
          const v = scratch.tensor[c * T * T + y * T + x];
          if (mask[y * BASE.widthPx + x]) { inS += v; nIn++; } else { outS += v; nOut++; }
        }
        expect(inS / nIn - outS / nOut, `channel ${c}`).toBeGreaterThan(0.5); // fixture input scale 1/255: > 127 levels
      }
    });
  }
});

describe(`seamtally detect on ${all.length} catalogue inputs (subprocess)`, () => {
  it('the catalogue covers every input class the issue lists', () => {
    const ids = all.map((e) => e.id).join(' ');
    for (const re of [/not-tiff/, /truncated/, /no-georef/, /datum-grid-epsg/, /user-defined-cassini/, /compression-/, /float32/, /int16/, /bands-1\b/, /bands-2/,
      /bands-4/, /bands-8/, /huge-200k/, /all-nodata/, /bigtiff/, /aoi-outside/, /aoi-bowtie/, /aoi-empty/, /aoi-projected/, /aoi-antimeridian/,
      /model-corrupt/, /model-input-size/, /model-unknown-op/, /sidecar-missing/, /sidecar-no-classes/]) expect(ids).toMatch(re);
    expect(new Set(all.map((e) => e.id)).size).toBe(all.length);
  });

  for (const e of all) {
    it(`${e.id}: ${e.description} → ${e.expectKind}`, async () => {
      const r = (await cliRuns).get(e.id)!;
      expect(r.signal, `${e.id} was killed after ${CASE_TIMEOUT_MS} ms (a hang)`).toBeNull();
      if (e.maxMs) expect(r.ms).toBeLessThan(e.maxMs);
      if (process.env.SHOW_ERRORS) console.log(`${e.id} [${r.ms.toFixed(0)} ms]: ${r.stderr.trim()}`);
      if (e.expectKind === 'ok') {
        expect(r.rc, r.stderr).toBe(0);
        expect(r.stderr).toMatch(e.expectMessage);
        const counts = JSON.parse(readFileSync(join(r.out, 'counts.json'), 'utf8')) as { rows: { count: number }[] };
        expect(counts.rows.map((x) => x.count)).toEqual([e.expectCount]);
        return;
      }
      expect(r.rc, `exit code (70 would mean an untyped internal error): ${r.stderr}`).toBe(1);
      expect(r.stderr.startsWith('seamtally detect: ')).toBe(true);
      expectOneCleanSentence(r.stderr, e.id);
      expect(r.stderr).toMatch(e.expectMessage);
    });
  }
});
