// `seamtally synth`: writes one synthetic scene DIR/<name>.tif (tiled COG) and DIR/<name>.truth.geojson.
import { closeSync, mkdirSync, openSync, writeSync, renameSync } from 'node:fs';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { SeamtallyError } from '../web/core/errors.ts';
import { makeSceneParams, type BandLayout, type BitDepth, type SceneParams } from '../synth/scene-params.ts';
import { writeScene, type WriteSceneStats } from '../synth/write-scene.ts';
import { fileSink, fileSpools } from './file-sink.ts';

export const USAGE = 'Usage: seamtally synth --out DIR --seed N --gsd M --size PX [--width PX --height PX] [--date YYYY-MM-DD] [--bands rgb|rgbn|pan|8] [--bits 8|11|12|16] [--scenario town|business-park] [--name NAME] [--tile PX] [--format auto|classic|bigtiff] [--haze F] [--sun-azimuth DEG --sun-elevation DEG] [--occupancy F] [--origin EASTING,NORTHING] [--epsg 326NN] [--quiet]';

function bad(message: string): never {
  throw new SeamtallyError('bad-argument', `${message} ${USAGE}`);
}

function num(v: string | undefined, name: string): number | undefined {
  if (v === undefined) return undefined;
  const n = Number(v);
  if (v.trim() === '' || !Number.isFinite(n)) bad(`--${name} must be a number, not "${v}".`);
  return n;
}

export interface SynthArgs { out: string; params: SceneParams; flavour: 'auto' | 'classic' | 'bigtiff'; quiet: boolean }

/** Parse argv (after `synth`) into scene parameters; throws SeamtallyError with a sentence and the usage line. */
export function parseSynthArgs(argv: string[]): SynthArgs {
  let v: Record<string, string | boolean | undefined>;
  try {
    v = parseArgs({
      args: argv,
      options: {
        out: { type: 'string' }, seed: { type: 'string' }, gsd: { type: 'string' }, size: { type: 'string' },
        width: { type: 'string' }, height: { type: 'string' }, date: { type: 'string' }, bands: { type: 'string' },
        bits: { type: 'string' }, scenario: { type: 'string' }, name: { type: 'string' }, tile: { type: 'string' },
        format: { type: 'string' }, haze: { type: 'string' }, 'sun-azimuth': { type: 'string' }, 'sun-elevation': { type: 'string' },
        occupancy: { type: 'string' }, origin: { type: 'string' }, epsg: { type: 'string' }, quiet: { type: 'boolean' },
      },
    }).values;
  } catch (err) {
    bad(`${(err as Error).message}.`);
  }
  const out = v.out as string | undefined;
  if (!out) bad('--out DIR is required.');
  const gsdM = num(v.gsd as string, 'gsd');
  if (gsdM === undefined) bad('--gsd M (ground sampling distance in metres) is required.');
  const size = num(v.size as string, 'size');
  const widthPx = num(v.width as string, 'width') ?? size;
  const heightPx = num(v.height as string, 'height') ?? size;
  if (widthPx === undefined || heightPx === undefined) bad('--size PX (or --width and --height) is required.');
  const seed = num(v.seed as string, 'seed') ?? 1;
  if (!Number.isInteger(seed) || seed < 0 || seed > 0xffffffff) bad(`--seed must be a whole number from 0 to 4294967295, not "${v.seed}".`);
  const bits = num(v.bits as string, 'bits');
  const scenario = (v.scenario as string | undefined) ?? 'town';
  if (scenario !== 'town' && scenario !== 'business-park') bad(`Unknown scenario "${scenario}": use town or business-park.`);
  const format = (v.format as string | undefined) ?? 'auto';
  if (format !== 'auto' && format !== 'classic' && format !== 'bigtiff') bad(`Unknown --format "${format}": use auto, classic or bigtiff.`);
  let originXM: number | undefined;
  let originYM: number | undefined;
  if (v.origin !== undefined) {
    const parts = String(v.origin).split(',').map(Number);
    if (parts.length !== 2 || !parts.every(Number.isFinite)) bad(`--origin must be EASTING,NORTHING in metres, not "${v.origin}".`);
    [originXM, originYM] = parts;
  }
  const params = makeSceneParams({
    seed, gsdM, widthPx, heightPx,
    name: v.name as string | undefined,
    date: v.date as string | undefined,
    bands: v.bands as BandLayout | undefined,
    bits: bits as BitDepth | undefined,
    scenario,
    tilePx: num(v.tile as string, 'tile'),
    hazeFraction: num(v.haze as string, 'haze'),
    sunAzimuthDeg: num(v['sun-azimuth'] as string, 'sun-azimuth'),
    sunElevationDeg: num(v['sun-elevation'] as string, 'sun-elevation'),
    occupancy: num(v.occupancy as string, 'occupancy'),
    epsg: num(v.epsg as string, 'epsg'),
    originXM, originYM,
  });
  return { out, params, flavour: format, quiet: Boolean(v.quiet) };
}

/** Write one scene's files into `dir` (whole or not at all: temp names renamed at the end). */
export function synthToDir(dir: string, p: SceneParams, o: { flavour?: 'auto' | 'classic' | 'bigtiff'; onTile?: (done: number) => void; blockCache?: number } = {}): WriteSceneStats {
  mkdirSync(dir, { recursive: true });
  const tifPath = join(dir, `${p.name}.tif`);
  const truthPath = join(dir, `${p.name}.truth.geojson`);
  const tif = fileSink(tifPath);
  const truthTmp = `${truthPath}.part`;
  const fd = openSync(truthTmp, 'w');
  let pending = '';
  const flush = () => { if (pending) { writeSync(fd, pending); pending = ''; } };
  try {
    const stats = writeScene(p, {
      tif, newSpool: fileSpools(tifPath),
      truth: (t) => { pending += t; if (pending.length > 1 << 20) flush(); },
    }, o);
    flush();
    closeSync(fd);
    tif.commit();
    renameSync(truthTmp, truthPath);
    return stats;
  } catch (err) {
    tif.abort();
    try { closeSync(fd); } catch { /* closed */ }
    throw err;
  }
}

export async function run(argv: string[]): Promise<number> {
  const a = parseSynthArgs(argv);
  const p = a.params;
  const tiles = Math.ceil(p.widthPx / p.tilePx) * Math.ceil(p.heightPx / p.tilePx);
  const stats = synthToDir(a.out, p, {
    flavour: a.flavour,
    onTile: a.quiet ? undefined : (n) => { if (n === tiles || n % 16 === 0) process.stderr.write(`\rseamtally synth: ${n}/${tiles} tiles`); },
  });
  if (!a.quiet) process.stderr.write('\n');
  const mpix = (p.widthPx * p.heightPx) / 1e6;
  process.stdout.write(`${JSON.stringify({
    tif: join(a.out, `${p.name}.tif`), truth: join(a.out, `${p.name}.truth.geojson`), objects: stats.truthCount,
    widthPx: p.widthPx, heightPx: p.heightPx, gsdM: p.gsdM, epsg: p.epsg, date: p.date, bands: p.bands, bits: p.bits,
    overviews: stats.cog.levels.length - 1, bigTiff: stats.cog.bigTiff, fileSizeB: stats.cog.fileSizeB,
    renderMPixPerS: Number((mpix / (stats.renderMs / 1000)).toFixed(3)), totalS: Number((stats.totalMs / 1000).toFixed(2)),
  })}\n`);
  return 0;
}
