import { existsSync } from 'node:fs';
import { defineConfig } from 'vitest/config';

// Browser tests: the pages served on the demo data and driven by Debian's chromium (playwright-core).
// CI installs chromium (.ci/run) and must run them; a developer's machine without it skips them with a
// plain message instead of failing.
const CHROMIUM = '/usr/lib/chromium/chromium';
const skip = !existsSync(CHROMIUM) && !process.env.CI;
if (skip) console.warn(`browser tests skipped: ${CHROMIUM} is not installed (apt-get install chromium)`);

export default defineConfig({
  test: {
    include: skip ? [] : ['test/browser/**/*.test.ts'],
    passWithNoTests: skip,
    testTimeout: 120_000,
    hookTimeout: 240_000,
    pool: 'forks',
    // One browser at a time on a 2-core machine.
    maxWorkers: 1,
    fileParallelism: false,
  },
});
