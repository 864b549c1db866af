// `seamtally batch submit`: check the inputs as detect does, plan every scene's tiles with the core planner, and enqueue
// one BullMQ flow per date: a finishing job whose children are the date's blocks of tiles. Prints the batch id.
import { createHash, randomBytes } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { FlowProducer } from 'bullmq';
import { SeamtallyError } from '../../web/core/errors.ts';
import { openNodeModel } from '../../web/io/ort-node.ts';
import { closeDateRun, isUrl, loadSidecar, openDateRun, openScene, prepareDate, readText, sidecarPath } from '../date-run.ts';
import { intArg, parseDetectArgs } from '../detect.ts';
import { defaultTilesPerJob, planBlocks } from './plan.ts';
import { BLOCK_QUEUE, connect, DEFAULT_PREFIX, FINISH_QUEUE, blockJobId, finishJobId, keys, redisOptions, type BatchDate, type BatchPlan, type BlockJobData, type FinishJobData } from './queue.ts';

export const USAGE = 'Usage: seamtally batch submit --redis URL SCENE.tif|URL... --aoi AOI.geojson --model FILE.onnx --out DIR [--date YYYY-MM-DD] [--tile PX] [--overlap PX|auto] [--min-score S] [--bands R,G,B] [--threads N] [--tiles-per-job N] [--attempts N] [--prefix P]';

/** Take the options only the batch commands have out of argv; the rest is parsed by the command. */
export function takeOptions(argv: string[], names: readonly string[], usage: string): { values: Map<string, string>; rest: string[] } {
  const values = new Map<string, string>();
  const rest: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    const eq = a.indexOf('=');
    const name = a.startsWith('--') ? a.slice(2, eq > 0 ? eq : undefined) : '';
    if (!names.includes(name)) { rest.push(a); continue; }
    const v = eq > 0 ? a.slice(eq + 1) : argv[++i];
    if (v === undefined || v.startsWith('--')) throw new SeamtallyError('bad-argument', `--${name} needs a value. ${usage}`);
    values.set(name, v);
  }
  return { values, rest };
}

/** A short id that sorts by time: YYYYMMDD-HHMMSS-xxxx. */
export function newBatchId(now = new Date()): string {
  const t = now.toISOString().replace(/[-:]/g, '').replace('T', '-').slice(0, 15);
  return `${t}-${randomBytes(2).toString('hex')}`;
}

export async function run(argv: string[]): Promise<number> {
  const { values, rest } = takeOptions(argv, ['redis', 'tiles-per-job', 'attempts', 'prefix'], USAGE);
  const url = values.get('redis');
  if (!url) throw new SeamtallyError('bad-argument', `--redis is required. ${USAGE}`);
  redisOptions(url);
  const args = parseDetectArgs(rest, USAGE);
  if (args.features || args.scorer) throw new SeamtallyError('bad-argument', `A batch does not keep features or apply a scorer yet: run seamtally detect for that. ${USAGE}`);
  const attempts = intArg(values.get('attempts'), 'attempts', 1, USAGE) ?? 3;
  const prefix = values.get('prefix') ?? DEFAULT_PREFIX;
  const sidecar = loadSidecar(args.model);
  const sidecarText = readFileSync(sidecarPath(args.model), 'utf8');
  const aoiText = readText(args.aoi, 'AOI file');
  const modelBytes = new Uint8Array(readFileSync(args.model));
  // the model must load here as it will on the workers (detect's sentences for a broken or mismatched model)
  await (await openNodeModel(modelBytes, sidecar, { tilePx: args.tilePx })).close();
  const conn = await connect(url, false);
  try {
    // scenes are grouped by date as detect counts them: --date puts all in one, else by each file's acquisition date
    const scenes = args.scenes.map((s) => (isUrl(s) ? s : resolve(s)));
    const byDate = new Map<string, string[]>();
    for (const s of scenes) {
      const src = await openScene(s);
      const d = args.date ?? src.info.acquisitionDate ?? 'unknown';
      await src.close();
      byDate.set(d, [...(byDate.get(d) ?? []), s]);
    }
    const dates: BatchDate[] = [];
    let tilePx = 0;
    for (const [date, group] of [...byDate].sort((a, b) => a[0].localeCompare(b[0]))) {
      const run = await openDateRun(group, aoiText, sidecar, date);
      try {
        const pipelines = await prepareDate(run, args);
        tilePx = Math.max(tilePx, ...pipelines.map((p) => p.plan.tilePx));
        dates.push({ date, scenes: group, frameEpsg: run.frameEpsg, tilesPerScene: pipelines.map((p) => p.plan.tiles.length), blocks: [] });
      } finally { await closeDateRun(run); }
    }
    const tilesPerJob = intArg(values.get('tiles-per-job'), 'tiles-per-job', 1, USAGE) ?? defaultTilesPerJob(tilePx);
    dates.forEach((d, i) => { d.blocks = planBlocks(i, d.tilesPerScene, tilesPerJob); });
    const modelSha256 = createHash('sha256').update(modelBytes).digest('hex');
    const id = newBatchId();
    const plan: BatchPlan = {
      format: 'seamtally-batch/1', id, createdMs: Date.now(), out: resolve(args.out), aoiText, aoiFile: resolve(args.aoi), modelFile: resolve(args.model), modelSha256, sidecarText,
      options: { tilePx: args.tilePx, overlapPx: args.overlapPx, minScore: args.minScore, bands: args.bands, threads: args.threads }, tilesPerJob, attempts, dates,
    };
    const k = keys(prefix);
    await conn.set(k.model(modelSha256), Buffer.from(modelBytes), 'NX');
    await conn.set(k.batch(id), JSON.stringify(plan));
    await conn.sadd(k.batches, id);
    const flow = new FlowProducer({ connection: { ...redisOptions(url), maxRetriesPerRequest: 1 }, prefix });
    try {
      await flow.addBulk(dates.map((d, dateIdx) => ({
        name: 'finish', queueName: FINISH_QUEUE, data: { batchId: id, dateIdx } satisfies FinishJobData,
        opts: { jobId: finishJobId(id, dateIdx), attempts, backoff: { type: 'exponential', delay: 1000 } },
        children: d.blocks.map((b) => ({
          name: 'block', queueName: BLOCK_QUEUE, data: { batchId: id, ...b } satisfies BlockJobData,
          // a block that fails every try is recorded on its parent (and reported), and the date finishes without it
          opts: { jobId: blockJobId(id, b), attempts, backoff: { type: 'exponential', delay: 1000 }, ignoreDependencyOnFailure: true },
        })),
      })));
    } finally { await flow.close(); }
    const blocks = dates.reduce((a, d) => a + d.blocks.length, 0);
    const tiles = dates.reduce((a, d) => a + d.tilesPerScene.reduce((x, y) => x + y, 0), 0);
    process.stderr.write(`Batch ${id}: ${dates.length} date${dates.length === 1 ? '' : 's'} (${dates.map((d) => `${d.date}: ${d.scenes.length} scene${d.scenes.length === 1 ? '' : 's'}`).join('; ')}), ${tiles} tiles in ${blocks} jobs of up to ${tilesPerJob} tiles. Start workers with: seamtally batch work --redis ${url}\n`);
    process.stdout.write(`${id}\n`);
    return 0;
  } finally {
    conn.disconnect();
  }
}
