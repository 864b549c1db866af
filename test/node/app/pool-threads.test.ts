// Threads per detector worker: never more onnxruntime threads than cores (self-consistency; no outside reference).
import { describe, expect, it } from 'vitest';
import { threadsPerWorker } from '../../../web/app/pool-threads.ts';

describe('threadsPerWorker', () => {
  it('shares the cores out evenly, at least one thread each', () => {
    expect(threadsPerWorker(2, 1, true)).toBe(2);
    expect(threadsPerWorker(2, 2, true)).toBe(1); // a pool grown from 1 to 2 on 2 cores: 1 + 1, not 2 + 1
    expect(threadsPerWorker(8, 3, true)).toBe(2);
    expect(threadsPerWorker(2, 4, true)).toBe(1);
    for (let cores = 1; cores <= 16; cores++) for (let w = 1; w <= cores; w++) expect(threadsPerWorker(cores, w, true) * w).toBeLessThanOrEqual(cores);
  });
  it('gives one thread without cross-origin isolation (onnxruntime-web cannot start threads) or an unknown core count', () => {
    expect(threadsPerWorker(8, 1, false)).toBe(1);
    expect(threadsPerWorker(0, 1, true)).toBe(1);
  });
});
