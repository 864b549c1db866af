// `seamtally batch status`: progress per date from BullMQ's own bookkeeping (each finishing job's children: processed,
// waiting, failed every try), failed blocks with their error sentence, throughput and time left. Ends with a line
// `state: done | running | queued | failed`.
import { Job, Queue } from 'bullmq';
import { SeamtallyError } from '../../web/core/errors.ts';
import { takeOptions } from './submit.ts';
import { BLOCK_QUEUE, connect, DEFAULT_PREFIX, FINISH_QUEUE, finishJobId, readPlan, redisOptions, type BatchPlan, type BlockResult, type FinishResult } from './queue.ts';

export const USAGE = 'Usage: seamtally batch status --redis URL BATCH_ID [--prefix P]';

export type BatchState = 'done' | 'running' | 'queued' | 'failed';

export interface DateProgress {
  date: string;
  blocks: number;
  blocksDone: number;
  blocksFailed: number;
  tiles: number;
  tilesDone: number;
  tilesFailed: number;
  /** BullMQ's state of the date's finishing job. */
  finishing: string;
  finished: FinishResult | null;
  finishError: string | null;
  failed: { block: string; error: string }[];
  /** Earliest start and latest end of the date's finished blocks (ms since 1970), for throughput. */
  firstStartMs: number;
  lastEndMs: number;
  /** Sum of the finished blocks' own run time (ms). */
  blockMs: number;
}

export interface BatchStatus {
  plan: BatchPlan;
  dates: DateProgress[];
  state: BatchState;
}

/** The batch's progress, read from its finishing jobs and their children. */
export async function batchStatus(url: string, prefix: string, id: string): Promise<BatchStatus> {
  const conn = await connect(url, false);
  const connection = { ...redisOptions(url), maxRetriesPerRequest: 1 };
  const finishQ = new Queue(FINISH_QUEUE, { connection, prefix });
  const blockQ = new Queue(BLOCK_QUEUE, { connection, prefix });
  try {
    const plan = await readPlan(conn, prefix, id);
    const dates: DateProgress[] = [];
    for (let i = 0; i < plan.dates.length; i++) {
      const d = plan.dates[i];
      const parent = await Job.fromId<unknown, FinishResult>(finishQ, finishJobId(id, i));
      const tiles = d.tilesPerScene.reduce((a, b) => a + b, 0);
      const p: DateProgress = { date: d.date, blocks: d.blocks.length, blocksDone: 0, blocksFailed: 0, tiles, tilesDone: 0, tilesFailed: 0, finishing: 'missing', finished: null, finishError: null, failed: [], firstStartMs: Infinity, lastEndMs: 0, blockMs: 0 };
      if (parent) {
        p.finishing = await parent.getState();
        if (p.finishing === 'completed') p.finished = parent.returnvalue;
        if (p.finishing === 'failed') p.finishError = parent.failedReason;
        const deps = await parent.getDependencies();
        for (const [key, value] of Object.entries(deps.processed ?? {})) {
          const r = (typeof value === 'string' ? JSON.parse(value) : value) as BlockResult;
          p.blocksDone++;
          p.tilesDone += r.tiles;
          p.blockMs += r.ms;
          const job = await Job.fromId(blockQ, key.slice(key.lastIndexOf(':') + 1));
          if (job?.processedOn) p.firstStartMs = Math.min(p.firstStartMs, job.processedOn);
          if (job?.finishedOn) p.lastEndMs = Math.max(p.lastEndMs, job.finishedOn);
        }
        for (const [key, error] of Object.entries(deps.ignored ?? {})) {
          p.blocksFailed++;
          const m = /\.t(\d+)-(\d+)$/.exec(key);
          if (m) p.tilesFailed += Number(m[2]) - Number(m[1]);
          p.failed.push({ block: key.slice(key.lastIndexOf(':') + 1), error: String(error) });
        }
      }
      dates.push(p);
    }
    const state: BatchState = dates.some((d) => d.finishing === 'failed' || d.finishing === 'missing') ? 'failed'
      : dates.every((d) => d.finishing === 'completed') ? 'done'
      : dates.some((d) => d.blocksDone + d.blocksFailed > 0 || d.finishing === 'active' || d.finishing === 'waiting') ? 'running' : 'queued';
    return { plan, dates, state };
  } finally {
    await finishQ.close();
    await blockQ.close();
    conn.disconnect();
  }
}

/** A duration in words: "45 s", "12 min", "3.5 h". */
function duration(s: number): string {
  return s < 90 ? `${Math.round(s)} s` : s < 5400 ? `${Math.round(s / 60)} min` : `${(s / 3600).toFixed(1)} h`;
}

/** The block a job id names, for people: scene file and tiles counted from 1. */
function blockWords(plan: BatchPlan, jobId: string): string {
  const m = /\.d(\d+)\.s(\d+)\.t(\d+)-(\d+)$/.exec(jobId);
  if (!m) return jobId;
  const scene = plan.dates[Number(m[1])]?.scenes[Number(m[2])] ?? `scene ${Number(m[2]) + 1}`;
  return `${scene.split('/').pop()} tiles ${Number(m[3]) + 1}–${m[4]}`;
}

export function statusLines(s: BatchStatus, nowMs = Date.now()): string[] {
  const lines = [`batch ${s.plan.id}: ${s.dates.length} date${s.dates.length === 1 ? '' : 's'}, output ${s.plan.out}`];
  for (const d of s.dates) {
    const fin = d.finished ? `finished: ${d.finished.detections} detections${d.finished.writtenTo ? `, written to ${d.finished.writtenTo}` : ', kept on Redis (batch collect writes them)'}`
      : d.finishError ? `finishing failed: ${d.finishError}` : `finishing job: ${d.finishing}`;
    lines.push(`${d.date}: blocks ${d.blocksDone}/${d.blocks} done, ${d.blocksFailed} failed; tiles ${d.tilesDone}/${d.tiles} done, ${d.tilesFailed} failed; ${fin}`);
    for (const f of d.failed) lines.push(`  failed every try: ${blockWords(s.plan, f.block)}: ${f.error} (its tiles count as not imaged)`);
  }
  const tilesDone = s.dates.reduce((a, d) => a + d.tilesDone, 0);
  const tilesLeft = s.dates.reduce((a, d) => a + d.tiles - d.tilesDone - d.tilesFailed, 0);
  const start = Math.min(...s.dates.map((d) => d.firstStartMs));
  const end = s.state === 'done' ? Math.max(...s.dates.map((d) => d.lastEndMs)) : nowMs;
  if (tilesDone > 0 && Number.isFinite(start) && end > start) {
    const perS = tilesDone / ((end - start) / 1000);
    const left = s.state === 'done' ? 'none' : `about ${duration(tilesLeft / perS)}`;
    lines.push(`throughput: ${perS.toFixed(2)} tiles/s over all workers; time left: ${left}`);
  }
  lines.push(`state: ${s.state}`);
  return lines;
}

export async function run(argv: string[]): Promise<number> {
  const { values, rest } = takeOptions(argv, ['redis', 'prefix'], USAGE);
  const url = values.get('redis');
  if (!url) throw new SeamtallyError('bad-argument', `--redis is required. ${USAGE}`);
  if (rest.length !== 1 || rest[0].startsWith('--')) throw new SeamtallyError('bad-argument', `Give one batch id (the line batch submit printed). ${USAGE}`);
  const s = await batchStatus(url, values.get('prefix') ?? DEFAULT_PREFIX, rest[0]);
  process.stdout.write(`${statusLines(s).join('\n')}\n`);
  return 0;
}
