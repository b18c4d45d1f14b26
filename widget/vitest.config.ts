import { defineProject } from 'vitest/config';
import vue from '@vitejs/plugin-vue';

export default defineProject({
  plugins: [vue({ features: { customElement: /\.ce\.vue$/ } })],
  define: {
    // the build defines the hashed names (vite.config.ts); tests use fixed ones
    __NADIR_ASSETS__: JSON.stringify({ world: 'assets/countries-110m.test.json', land: 'assets/land-110m.test.json', fonts: { 400: 'assets/work-sans-400.test.woff2' }, words: { de: 'assets/words-de.test.json', fr: 'assets/words-fr.test.json', es: 'assets/words-es.test.json' } }),
  },
  test: {
    name: 'widget',
    include: ['src/**/*.spec.ts', 'build/**/*.spec.ts'],
    environment: 'happy-dom',
    css: true,
    setupFiles: ['../tests/setup/no-console-noise.ts'],
  },
});
