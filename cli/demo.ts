// `seamtally demo [--out DIR] [--force]`: generates the demo scenes, AOIs and manifest once (default .cache/demo/).
import { existsSync, mkdirSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { SeamtallyError } from '../web/core/errors.ts';
import { DEMO_VERSION, demoAoisGeoJson, demoManifest, demoSceneParams } from '../synth/demo.ts';
import { synthToDir } from './synth.ts';

export const DEFAULT_DEMO_DIR = '.cache/demo';

function writeWhole(path: string, text: string): void {
  writeFileSync(`${path}.part`, text);
  renameSync(`${path}.part`, path);
}

/** True when `dir` already holds a complete demo of the current version. */
export function demoIsCurrent(dir: string): boolean {
  const m = join(dir, 'manifest.json');
  if (!existsSync(m)) return false;
  try {
    const man = JSON.parse(readFileSync(m, 'utf8'));
    return man.version === DEMO_VERSION && man.scenes.every((s: { file: string; truth: string }) => existsSync(join(dir, s.file)) && existsSync(join(dir, s.truth)));
  } catch {
    return false;
  }
}

/** Generate the demo into `dir` (the manifest is written last, so its presence means the demo is whole). */
export function generateDemo(dir: string, log: (line: string) => void = () => {}): void {
  mkdirSync(dir, { recursive: true });
  const params = demoSceneParams();
  for (const p of params) {
    const stats = synthToDir(dir, p);
    log(`seamtally demo: ${p.name}.tif ${p.widthPx}×${p.heightPx} px at ${p.gsdM} m, ${stats.truthCount} objects, ${(stats.totalMs / 1000).toFixed(1)} s`);
  }
  writeWhole(join(dir, 'aois.geojson'), `${JSON.stringify(demoAoisGeoJson(), null, 1)}\n`);
  writeWhole(join(dir, 'manifest.json'), `${JSON.stringify(demoManifest(params), null, 2)}\n`);
}

export const USAGE = 'Usage: seamtally demo [--out DIR] [--force] [--quiet]';

export async function run(argv: string[]): Promise<number> {
  let v: { out?: string; force?: boolean; quiet?: boolean };
  try {
    v = parseArgs({ args: argv, options: { out: { type: 'string' }, force: { type: 'boolean' }, quiet: { type: 'boolean' } } }).values;
  } catch (err) {
    throw new SeamtallyError('bad-argument', `${(err as Error).message}. ${USAGE}`);
  }
  const dir = v.out ?? DEFAULT_DEMO_DIR;
  const log = v.quiet ? () => {} : (l: string) => process.stderr.write(`${l}\n`);
  if (!v.force && demoIsCurrent(dir)) {
    log(`seamtally demo: ${dir} is up to date (use --force to rebuild).`);
    return 0;
  }
  const t0 = performance.now();
  generateDemo(dir, log);
  log(`seamtally demo: written to ${dir} in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  return 0;
}
