import { defineConfig } from 'vite';
import vue from '@vitejs/plugin-vue';

// The console is served by the Nadirline server at "/" with a history fallback; /api, /v1,
// /widget and /embed live on the same origin, so the dev server forwards them to the server.
const server = process.env.NADIR_SERVER ?? 'http://127.0.0.1:8080';

export default defineConfig({
  base: '/',
  plugins: [
    vue({
      template: {
        // <nadir-track> is the widget, loaded at run time from /widget/nadir-track.js.
        compilerOptions: { isCustomElement: (tag) => tag === 'nadir-track' },
      },
    }),
  ],
  define: {
    __VUE_OPTIONS_API__: 'false',
    __VUE_PROD_DEVTOOLS__: 'false',
    __VUE_PROD_HYDRATION_MISMATCH_DETAILS__: 'false',
  },
  build: {
    outDir: 'dist',
    // Hashed files of earlier builds stay beside the new ones: during a rolling restart a page
    // loaded from a process of the previous release still finds its files on the new ones.
    emptyOutDir: false,
    target: 'es2022',
    chunkSizeWarningLimit: 400,
  },
  server: {
    proxy: Object.fromEntries(['/api', '/v1', '/widget', '/embed', '/dev'].map((p) => [p, { target: server, changeOrigin: false }])),
  },
});
