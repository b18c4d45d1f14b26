import { defineProject } from 'vitest/config';
import vue from '@vitejs/plugin-vue';

export default defineProject({
  plugins: [vue({ template: { compilerOptions: { isCustomElement: (tag) => tag === 'nadir-track' } } })],
  test: {
    name: 'console',
    include: ['src/**/*.spec.ts'],
    environment: 'happy-dom',
    setupFiles: ['../tests/setup/no-console-noise.ts'],
  },
});
