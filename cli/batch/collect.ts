// `seamtally batch collect`: once every date is finished, write each date's outputs (detections.geojson, counts.csv,
// counts.json) into DIR/<date>/ from what the finishing jobs kept on Redis, where they are not written yet.
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { SeamtallyError } from '../../web/core/errors.ts';
import { writeDateOutputs } from '../date-run.ts';
import { keptOutputs } from './finish.ts';
import { batchStatus } from './status.ts';
import { takeOptions } from './submit.ts';
import { connect, DEFAULT_PREFIX } from './queue.ts';

export const USAGE = 'Usage: seamtally batch collect --redis URL BATCH_ID [--out DIR] [--prefix P]';

export async function run(argv: string[]): Promise<number> {
  const { values, rest } = takeOptions(argv, ['redis', 'out', 'prefix'], USAGE);
  const url = values.get('redis');
  if (!url) throw new SeamtallyError('bad-argument', `--redis is required. ${USAGE}`);
  if (rest.length !== 1 || rest[0].startsWith('--')) throw new SeamtallyError('bad-argument', `Give one batch id (the line batch submit printed). ${USAGE}`);
  const prefix = values.get('prefix') ?? DEFAULT_PREFIX;
  const status = await batchStatus(url, prefix, rest[0]);
  if (status.state !== 'done') {
    const done = status.dates.filter((d) => d.finished).length;
    throw new SeamtallyError('bad-argument', `Batch ${rest[0]} is ${status.state}: ${done} of ${status.dates.length} dates finished. Run seamtally batch status to follow it, and collect when it says "state: done".`);
  }
  const out = values.get('out') ?? status.plan.out;
  const conn = await connect(url, false);
  try {
    for (let i = 0; i < status.dates.length; i++) {
      const dir = join(out, status.dates[i].date);
      const files = await keptOutputs(conn, prefix, status.plan.id, i);
      if (files.size === 0) throw new SeamtallyError('bad-argument', `The outputs of ${status.dates[i].date} are no longer on Redis: submit that date again.`);
      const missing = [...files.keys()].filter((name) => !existsSync(join(dir, name)));
      if (missing.length) writeDateOutputs(dir, files);
      process.stderr.write(`${status.dates[i].date}: ${missing.length ? 'written to' : 'already in'} ${dir}\n`);
    }
    return 0;
  } finally {
    conn.disconnect();
  }
}
