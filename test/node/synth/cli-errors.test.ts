// `seamtally synth` refuses impossible parameters with one clear sentence and a non-zero exit; writes a scene otherwise.
import { describe, expect, it, beforeAll, afterAll } from 'vitest';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseSynthArgs } from '../../../cli/synth.ts';
import { SeamtallyError } from '../../../web/core/errors.ts';
import { writeCog, memorySink, memorySpool } from '../../../synth/cog-writer.ts';

let dir: string;
beforeAll(() => { dir = mkdtempSync(join(tmpdir(), 'seamtally-cli-')); });
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function errorOf(argv: string[]): SeamtallyError {
  try { parseSynthArgs(argv); } catch (e) { return e as SeamtallyError; }
  throw new Error(`no error for ${argv.join(' ')}`);
}

describe('seamtally synth arguments', () => {
  const cases: [string, string[], string, RegExp][] = [
    ['GSD zero', ['--gsd', '0'], 'bad-argument', /positive number of metres/],
    ['GSD negative', ['--gsd=-0.3'], 'bad-argument', /positive number of metres/],
    ['GSD not a number', ['--gsd', 'abc'], 'bad-argument', /--gsd must be a number/],
    ['unknown band layout', ['--bands', 'rgbx'], 'bad-argument', /Unknown band layout "rgbx"/],
    ['bit depth', ['--bits', '10'], 'bad-argument', /Unsupported bit depth 10/],
    ['size too large', ['--size', '300000'], 'too-large', /too large/],
    ['size too small', ['--size', '4'], 'bad-argument', /at least 16/],
    ['bad date', ['--date', '2024-13-40'], 'bad-argument', /not a calendar date/],
    ['not UTM', ['--epsg', '4326'], 'bad-argument', /UTM zone/],
    ['unknown scenario', ['--scenario', 'moon'], 'bad-argument', /Unknown scenario/],
  ];
  for (const [name, extra, kind, msg] of cases) {
    it(name, () => {
      const base = ['--out', dir, '--gsd', '0.3', '--size', '256'];
      const e = errorOf([...base, ...extra]);
      expect(e).toBeInstanceOf(SeamtallyError);
      expect(e.kind).toBe(kind);
      expect(e.message).toMatch(msg);
    });
  }

  it('classic TIFF refuses a raster that can pass 4 GiB (TIFF 6.0 offsets are 32-bit)', () => {
    expect(() => writeCog({ widthPx: 40000, heightPx: 40000, bandCount: 8, bitsPerSample: 16, photometric: 'minisblack', flavour: 'classic' },
      () => { throw new Error('must not render'); }, memorySink(), memorySpool)).toThrow(/4 GiB limit of classic TIFF/);
  });

  it('the CLI exits non-zero with one sentence, and 0 with files on success', () => {
    const cli = join(process.cwd(), 'bin/seamtally.mjs');
    const bad = spawnSync(process.execPath, [cli, 'synth', '--out', dir, '--gsd', '0', '--size', '64'], { encoding: 'utf8' });
    expect(bad.status).toBe(1);
    expect(bad.stderr).toMatch(/^seamtally synth: The ground sampling distance must be a positive number/);
    const ok = spawnSync(process.execPath, [cli, 'synth', '--out', dir, '--seed', '7', '--gsd', '0.5', '--size', '128', '--bands', 'pan', '--bits', '12', '--quiet', '--name', 'cli'], { encoding: 'utf8' });
    expect(ok.status).toBe(0);
    const summary = JSON.parse(ok.stdout);
    expect(summary.widthPx).toBe(128);
    expect(existsSync(join(dir, 'cli.tif'))).toBe(true);
    expect(existsSync(join(dir, 'cli.truth.geojson'))).toBe(true);
  });
});
