import { defineProject } from 'vitest/config';

export default defineProject({
  test: {
    name: 'server',
    include: ['src/**/*.spec.ts'],
    environment: 'node',
    setupFiles: ['../tests/setup/no-console-noise.ts'],
  },
});
