// The CLI's help and usage errors: `seamtally --help`, `seamtally help CMD`, `seamtally CMD --help` print the usage
// lines on stdout and exit 0; an unknown option is the user's mistake (exit 1, the option named, the usage line), not
// an internal error (exit 70); an unknown command exits 2 and lists the commands.
import { afterEach, describe, expect, it, vi } from 'vitest';
import { main } from '../../../cli/main.ts';

function capture() {
  let out = '', err = '';
  vi.spyOn(process.stdout, 'write').mockImplementation((s) => { out += String(s); return true; });
  vi.spyOn(process.stderr, 'write').mockImplementation((s) => { err += String(s); return true; });
  return { out: () => out, err: () => err };
}

afterEach(() => { vi.restoreAllMocks(); });

describe('seamtally help', () => {
  it('--help lists every command with its usage', async () => {
    const c = capture();
    expect(await main(['--help'])).toBe(0);
    for (const cmd of ['detect', 'synth', 'demo', 'eval']) expect(c.out()).toContain(`Usage: seamtally ${cmd}`);
  });
  it('help CMD and CMD --help / -h print that command\'s usage only', async () => {
    for (const argv of [['help', 'eval'], ['eval', '--help'], ['eval', '-h']]) {
      const c = capture();
      expect(await main(argv)).toBe(0);
      expect(c.out()).toMatch(/^Usage: seamtally eval --model FILE\.onnx --scenes DIR --out FILE\.json/);
      expect(c.out()).not.toContain('seamtally detect');
      vi.restoreAllMocks();
    }
  });
  it('an unknown option names the option and shows the usage (exit 1, not an internal error)', async () => {
    for (const cmd of ['detect', 'synth', 'demo', 'eval']) {
      const c = capture();
      expect(await main([cmd, '--bogus'])).toBe(1);
      expect(c.err()).toContain("'--bogus'");
      expect(c.err()).toContain(`Usage: seamtally ${cmd}`);
      expect(c.err()).not.toMatch(/went wrong inside/);
      vi.restoreAllMocks();
    }
  });
  it('eval without its required options says which are required', async () => {
    const c = capture();
    expect(await main(['eval', '--model', 'm.onnx'])).toBe(1);
    expect(c.err()).toMatch(/--model, --scenes and --out are required/);
  });
  it('an unknown command exits 2 and lists the commands', async () => {
    const c = capture();
    expect(await main(['count'])).toBe(2);
    expect(c.err()).toMatch(/unknown command "count".*detect, synth, demo, eval/);
  });
});
