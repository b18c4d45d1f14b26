import { defineConfig } from 'vitest/config';
import { storesReachable } from './tests/support/stores.ts';

// The second integration run needs PostgreSQL and Redis (.ci/run starts them; see tests/support/stores.ts).
const stores = await storesReachable();
if (!stores.ok) {
  console.log(`integration-pg: SKIPPED, the integration suite runs on SQLite only: ${stores.why} (NL_TEST_PG_URL, NL_TEST_REDIS_URL)`);
}

// One runner for everything. Projects:
//  shared, server, widget, console: unit tests beside the code;
//  integration: API tests over real HTTP and a real SQLite file (tests/integration);
//  integration-pg: the same tests on PostgreSQL + Redis, and the multi-process test (tests/multiprocess);
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
      ...(stores.ok ? ['tests/vitest.pg.config.ts'] : []),
      'tests/vitest.e2e.config.ts',
    ],
  },
});
