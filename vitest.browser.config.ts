import { defineConfig } from 'vitest/config';

// Browser tests: the pages served on the demo data and driven by Debian's chromium (playwright-core).
export default defineConfig({
  test: {
    include: ['test/browser/**/*.test.ts'],
    testTimeout: 120_000,
    hookTimeout: 240_000,
    pool: 'forks',
    // One browser at a time on a 2-core machine.
    maxWorkers: 1,
    fileParallelism: false,
  },
});
