// CLI dispatcher: `seamtally <command> ...`; each command lives in its own module under cli/.
export async function main(argv: string[]): Promise<number> {
  const [cmd] = argv;
  process.stderr.write(`seamtally: unknown command "${cmd ?? ''}". Commands: detect, synth, eval, demo.\n`);
  return 2;
}
