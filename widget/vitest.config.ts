import { defineProject } from 'vitest/config';
import vue from '@vitejs/plugin-vue';

export default defineProject({
  plugins: [vue({ features: { customElement: /\.ce\.vue$/ } })],
  test: {
    name: 'widget',
    include: ['src/**/*.spec.ts'],
    environment: 'happy-dom',
    css: true,
    setupFiles: ['../tests/setup/no-console-noise.ts'],
  },
});
