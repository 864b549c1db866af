// The CLI run in-process, its stderr captured: exit code and what it wrote (shared by the CLI tests).
import { vi } from 'vitest';
import { main } from '../../cli/main.ts';

export async function runCli(args: string[]): Promise<{ rc: number; err: string }> {
  let err = '';
  const spy = vi.spyOn(process.stderr, 'write').mockImplementation((chunk: string | Uint8Array) => { err += String(chunk); return true; });
  try { return { rc: await main(args), err }; } finally { spy.mockRestore(); }
}
