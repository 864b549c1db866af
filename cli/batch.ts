// `seamtally batch <submit|work|status|collect>`: count many scenes on many machines through a Redis-backed BullMQ
// queue, with the same outputs as detect (README, "Many scenes on many machines").
import { SeamtallyError } from '../web/core/errors.ts';

type Sub = { run(argv: string[]): Promise<number>; USAGE: string };
const subs: Record<string, () => Promise<Sub>> = {
  submit: () => import('./batch/submit.ts'),
  work: () => import('./batch/work.ts'),
  status: () => import('./batch/status.ts'),
  collect: () => import('./batch/collect.ts'),
};

export const USAGE = [
  'Usage: seamtally batch submit --redis URL SCENE.tif|URL... --aoi AOI.geojson --model FILE.onnx --out DIR [--date YYYY-MM-DD] [--tiles-per-job N] [--attempts N] [detect\'s --tile/--overlap/--min-score/--bands/--threads]',
  '       seamtally batch work --redis URL [--concurrency N] [--lock-s S] [--idle-exit S]',
  '       seamtally batch status --redis URL BATCH_ID',
  '       seamtally batch collect --redis URL BATCH_ID [--out DIR]',
].join('\n');

export async function run(argv: string[]): Promise<number> {
  const [sub, ...rest] = argv;
  const load = sub ? subs[sub] : undefined;
  if (!load) throw new SeamtallyError('bad-argument', `batch needs one of ${Object.keys(subs).join(', ')}${sub ? `, not "${sub}"` : ''}.\n${USAGE}`);
  return (await load()).run(rest);
}
