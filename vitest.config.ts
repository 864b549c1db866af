// Node-side test runner: everything under test/node mirrors a source path.
import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/node/**/*.test.ts'],
    environment: 'node',
    testTimeout: 120_000,
    hookTimeout: 300_000,
    pool: 'forks',
    maxWorkers: 2,
  },
});
