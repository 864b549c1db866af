// CLI dispatcher: `seamtally <command> ...`; each command lives in its own module under cli/ and exports run(argv).
import { inflateSync } from 'node:zlib';
import { toErrorInfo } from '../web/core/errors.ts';
import { setSyncInflate } from '../web/io/inflate.ts';

type Command = { run(argv: string[]): Promise<number> };
const commands: Record<string, () => Promise<Command>> = {
  detect: () => import('./detect.ts'),
  synth: () => import('./synth.ts'),
  demo: () => import('./demo.ts'),
  eval: () => import('./eval.ts'),
};

export async function main(argv: string[]): Promise<number> {
  // Node's zlib inflates DEFLATE tiles ~3× faster than DecompressionStream; maxOutputLength keeps the bound
  setSyncInflate((bytes, maxOutBytes) => inflateSync(bytes, { maxOutputLength: maxOutBytes }));
  const [cmd, ...rest] = argv;
  const load = cmd ? commands[cmd] : undefined;
  if (!load) {
    process.stderr.write(`seamtally: unknown command "${cmd ?? ''}". Commands: ${Object.keys(commands).join(', ')}.\n`);
    return 2;
  }
  try {
    return await (await load()).run(rest);
  } catch (err) {
    const info = toErrorInfo(err);
    process.stderr.write(`seamtally ${cmd}: ${info.message}\n`);
    return info.kind === 'internal' ? 70 : 1;
  }
}
