import { defineConfig } from 'vitest/config';

// One runner for everything. Projects:
//  shared, server, widget, console: unit tests beside the code;
//  integration: API tests over real HTTP and a real SQLite file (tests/integration);
//  e2e: Playwright driving Debian's Chromium against the real server (tests/e2e).
export default defineConfig({
  test: {
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
