import { defineConfig } from 'vitest/config';

// One runner for everything. Projects:
//  shared, server, widget, console: unit tests beside the code;
//  integration: API tests over real HTTP and a real SQLite file (tests/integration);
//  e2e: Playwright driving Debian's Chromium against the real server (tests/e2e).
export default defineConfig({
  test: {
    // In CI a JSON report is written too, so .ci/run can print one plain "N passed, N failed" line.
    reporters: process.env.CI ? ['default', ['json', { outputFile: 'test-results/vitest.json' }]] : ['default'],
    projects: [
      'shared/vitest.config.ts',
      'server/vitest.config.ts',
      'widget/vitest.config.ts',
      'console/vitest.config.ts',
      'tests/vitest.config.ts',
      'tests/vitest.e2e.config.ts',
    ],
  },
});
