// Fuzz: the first KB of small GDAL-written GeoTIFFs mutated at random (fixed seed, xorshift32), each case opened
// through the page's Blob path (openGeoTiffBlob) and read (a window at full resolution and at the first overview).
// Every case must end in a result or a SeamtallyError (no TypeError/RangeError leaking, no 'internal') within 5 s.
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SeamtallyError } from '../../../web/core/errors.ts';
import { openGeoTiffBlob } from '../../../web/io/geotiff-source.ts';
import { baseGeo } from '../../fixtures/bad-input-assets.ts';
import { writeGeoTiff } from '../../fixtures/gdal-scenes.ts';
import { bounded, sentenceProblem, xorshift32 } from './harness.ts';
import { mutateTiff } from './tiff-mutator.ts';

const CASES_PER_BASE = Number(process.env.FUZZ_CASES ?? 100);
const CASE_MS = 5_000;
const SEED = Number(process.env.FUZZ_SEED ?? 0x5eed7);
const dir = mkdtempSync(join(tmpdir(), 'seamtally-fuzz-tiff-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const bases: { name: string; bytes: Uint8Array<ArrayBuffer> }[] = [];

beforeAll(() => {
  const w = 48, h = 40;
  const rgb = new Uint8Array(w * h * 3).map((_, i) => (i * 37) % 251);
  bases.push({ name: 'tiled-deflate-ovr', bytes: new Uint8Array(readFileSync(writeGeoTiff(join(dir, 'a.tif'), { widthPx: w, heightPx: h, bandCount: 3, dtype: 'uint8', data: rgb },
    baseGeo({ blockPx: 16, compress: 'DEFLATE', overviews: [2], nodata: 0, extraArgs: ['-mo', 'TIFFTAG_DATETIME=2024:05:17 10:30:00'] })))) });
  const u16 = new Uint16Array(w * h * 4).map((_, i) => (i * 101) % 4095);
  bases.push({ name: 'strips-lzw-u16', bytes: new Uint8Array(readFileSync(writeGeoTiff(join(dir, 'b.tif'), { widthPx: w, heightPx: h, bandCount: 4, dtype: 'uint16', data: u16 },
    baseGeo({ blockPx: undefined, compress: 'LZW', extraArgs: ['-co', 'PREDICTOR=2', '-co', 'BLOCKYSIZE=7'] })))) });
});

async function openAndRead(bytes: Uint8Array<ArrayBuffer>): Promise<string> {
  const src = await openGeoTiffBlob(new Blob([bytes]), { name: 'fuzz.tif' });
  try {
    const { widthPx, heightPx, overviews } = src.info;
    await src.readWindow({ minXPx: 0, minYPx: 0, maxXPx: Math.min(widthPx, 20), maxYPx: Math.min(heightPx, 20) });
    if (overviews.length) await src.readWindow({ minXPx: 0, minYPx: 0, maxXPx: Math.min(overviews[0].widthPx, 8), maxYPx: Math.min(overviews[0].heightPx, 8) }, { overviewLevel: 1 });
    return 'read';
  } finally {
    await src.close();
  }
}

describe(`mutated GeoTIFF headers (${2 * CASES_PER_BASE} cases, seed ${SEED})`, () => {
  it('the unmutated bases open and read', async () => {
    for (const b of bases) expect(await openAndRead(b.bytes)).toBe('read');
  });

  it('every case ends in a result or a typed error within 5 s', async () => {
    const rng = xorshift32(SEED);
    const tally: Record<string, number> = {};
    const leaks: string[] = [];
    for (const base of bases) {
      for (let k = 0; k < CASES_PER_BASE; k++) {
        const m = mutateTiff(base.bytes, rng);
        if (process.env.SHOW_CASES) process.stderr.write(`case ${base.name} #${k} [${m.what.join(", ")}]\n`);
        const r = await bounded(() => openAndRead(m.bytes), CASE_MS);
        const label = `${base.name} #${k} [${m.what.join(', ')}]`;
        if (r.timedOut) { leaks.push(`${label}: no answer within ${CASE_MS} ms`); continue; }
        if (r.error === undefined) { tally.ok = (tally.ok ?? 0) + 1; continue; }
        if (!(r.error instanceof SeamtallyError) || r.error.kind === 'internal') {
          leaks.push(`${label}: ${r.error instanceof Error ? `${r.error.name}: ${r.error.message}\n${r.error.stack}` : String(r.error)}`);
          continue;
        }
        const problem = sentenceProblem(r.error.message);
        if (problem) leaks.push(`${label}: ${r.error.kind} message ${problem}: ${r.error.message}`);
        tally[r.error.kind] = (tally[r.error.kind] ?? 0) + 1;
      }
    }
    if (process.env.SHOW_ERRORS) console.log('fuzz-tiff outcomes', tally);
    expect(leaks).toEqual([]);
    expect(Object.values(tally).reduce((a, b) => a + b, 0)).toBe(2 * CASES_PER_BASE);
    // the mutations must really reach the error paths (else the fuzz is void): several kinds and some successes
    expect(Object.keys(tally).length).toBeGreaterThanOrEqual(3);
  });
});
