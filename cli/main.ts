// CLI dispatcher: `seamtally <command> ...`; each command lives in its own module under cli/ and exports run(argv).
import { inflateSync } from 'node:zlib';
import { toErrorInfo } from '../web/core/errors.ts';
import { setSyncInflate } from '../web/io/inflate.ts';

type Command = { run(argv: string[]): Promise<number>; USAGE: string };
const commands: Record<string, () => Promise<Command>> = {
  detect: () => import('./detect.ts'),
  synth: () => import('./synth.ts'),
  demo: () => import('./demo.ts'),
  eval: () => import('./eval.ts'),
  sample: () => import('./sample.ts'),
  estimate: () => import('./estimate.ts'),
  adapt: () => import('./adapt.ts'),
  batch: () => import('./batch.ts'),
};

export async function main(argv: string[]): Promise<number> {
  // Node's zlib inflates DEFLATE tiles ~3× faster than DecompressionStream; maxOutputLength keeps the bound
  setSyncInflate((bytes, maxOutBytes) => inflateSync(bytes, { maxOutputLength: maxOutBytes }));
  const [cmd, ...rest] = argv;
  const isHelp = (a: string | undefined) => a === '--help' || a === '-h' || a === 'help';
  if (isHelp(cmd)) {
    const only = rest[0] && commands[rest[0]] ? [rest[0]] : Object.keys(commands);
    const lines = await Promise.all(only.map(async (c) => (await commands[c]()).USAGE));
    process.stdout.write(`${lines.join('\n')}\n`);
    return 0;
  }
  const load = cmd ? commands[cmd] : undefined;
  if (!load) {
    process.stderr.write(`seamtally: unknown command "${cmd ?? ''}". Commands: ${Object.keys(commands).join(', ')} (seamtally --help shows how to call each).\n`);
    return 2;
  }
  if (rest.includes('--help') || rest.includes('-h')) {
    process.stdout.write(`${(await load()).USAGE}\n`);
    return 0;
  }
  try {
    return await (await load()).run(rest);
  } catch (err) {
    const info = toErrorInfo(err);
    process.stderr.write(`seamtally ${cmd}: ${info.message}\n`);
    return info.kind === 'internal' ? 70 : 1;
  }
}
