// Shared helpers of the robustness suites: a seeded xorshift PRNG, a per-case time bound, and the checks that a
// failure reached the user as one clean sentence.
import { expect } from 'vitest';

/** xorshift32 (Marsaglia 2003): a tiny deterministic PRNG; `next()` in [0, 2^32), `int(n)` in [0, n). */
export function xorshift32(seed: number) {
  let s = seed >>> 0 || 0x9e3779b9;
  const next = () => { s ^= s << 13; s >>>= 0; s ^= s >>> 17; s ^= s << 5; s >>>= 0; return s; };
  return {
    next,
    int: (n: number) => next() % n,
    pick: <T>(xs: readonly T[]): T => xs[next() % xs.length],
    chance: (p: number) => next() / 2 ** 32 < p,
  };
}
export type Rng = ReturnType<typeof xorshift32>;

/** Settles with the promise's outcome, or with a 'timed out' marker after `ms`. Never rejects. */
export async function bounded<T>(work: () => Promise<T>, ms: number): Promise<{ value?: T; error?: unknown; timedOut: boolean; ms: number }> {
  const t0 = performance.now();
  let timer: ReturnType<typeof setTimeout> | undefined;
  const timeout = new Promise<'timeout'>((resolve) => { timer = setTimeout(() => resolve('timeout'), ms); });
  try {
    const r = await Promise.race([work().then((value) => ({ value }), (error: unknown) => ({ error: error ?? new Error('rejected with nothing') })), timeout]);
    if (r === 'timeout') return { timedOut: true, ms: performance.now() - t0 };
    return { ...r, timedOut: false, ms: performance.now() - t0 };
  } finally {
    clearTimeout(timer);
  }
}

/**
 * What is wrong with a text shown to a user, or null: it must be one line that ends a sentence, with no stack trace,
 * no untyped JS error names and no leaked `undefined` / `[object Object]`. (Sentence grammar cannot be checked
 * by machine; these are the failures it can catch.)
 */
export function sentenceProblem(text: string): string | null {
  const lines = text.trim().split('\n').filter((l) => l.trim() !== '');
  if (lines.length !== 1) return `expected exactly one line, got ${lines.length}`;
  if (!/[.)]$/.test(lines[0])) return 'does not end a sentence';
  const bad = /\bat .*\.(ts|js|mjs):\d+|TypeError|RangeError|ReferenceError|undefined|\[object Object\]|Something went wrong inside/.exec(lines[0]);
  return bad ? `contains "${bad[0]}"` : null;
}

export function expectOneCleanSentence(text: string, context: string): void {
  expect(sentenceProblem(text), `${context}: ${text}`).toBeNull();
}
