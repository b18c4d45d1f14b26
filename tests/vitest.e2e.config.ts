import { defineProject } from 'vitest/config';

// Browser end-to-end tests: Playwright (playwright-core) driving Debian's Chromium against the
// real server started as a child process. One file at a time: the machine has 2 cores.
export default defineProject({
  test: {
    name: 'e2e',
    include: ['e2e/**/*.spec.ts'],
    environment: 'node',
    testTimeout: 60_000,
    hookTimeout: 120_000,
    fileParallelism: false,
  },
});
