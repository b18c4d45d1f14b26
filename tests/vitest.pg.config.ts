import { defineProject } from 'vitest/config';

// The integration suite again, on PostgreSQL and Redis (tests/support/stores.ts gives every test
// app its own database and Redis key prefix), and the multi-process test (several real server
// processes on one database and one Redis). The root vitest.config.ts adds this project only
// when both services answer.
export default defineProject({
  test: {
    name: 'integration-pg',
    include: ['integration/**/*.spec.ts', 'multiprocess/**/*.spec.ts'],
    environment: 'node',
    testTimeout: 60_000,
    hookTimeout: 90_000,
    env: { NL_TEST_STORES: 'pg-redis' },
  },
});
