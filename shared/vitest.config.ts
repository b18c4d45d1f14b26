import { defineProject } from 'vitest/config';

export default defineProject({
  test: {
    name: 'shared',
    include: ['src/**/*.spec.ts'],
    environment: 'node',
    setupFiles: ['../tests/setup/no-console-noise.ts'],
  },
});
