import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { defineConfig, type Plugin } from 'vite';
import vue from '@vitejs/plugin-vue';
import { trimD3 } from './build/trim-d3.ts';

const require = createRequire(import.meta.url);

/** Files served beside the script, with a content hash in their names so they can be cached for a year. */
const ASSETS = [
  { key: 'world', src: 'world-atlas/countries-110m.json', name: 'countries-110m', ext: 'json' },
  // the land alone, half the size: drawn first, while the countries (for place names) wait for an idle moment
  { key: 'land', src: 'world-atlas/land-110m.json', name: 'land-110m', ext: 'json' },
  { key: '400', src: '@fontsource/work-sans/files/work-sans-latin-400-normal.woff2', name: 'work-sans-latin-400', ext: 'woff2' },
  { key: '600', src: '@fontsource/work-sans/files/work-sans-latin-600-normal.woff2', name: 'work-sans-latin-600', ext: 'woff2' },
] as const;

/** The widget's words in the languages beyond English, fetched only by pages that need them (src/lib/words.ts). */
const LOCALES = ['de', 'fr', 'es'] as const;

function hashedAssets(): { files: { fileName: string; source: Buffer }[]; define: { world: string; land: string; fonts: Record<string, string>; words: Record<string, string> } } {
  const words = LOCALES.map((lang) => {
    // parsed and written again: a broken file fails the build, and the copy is minified
    const source = Buffer.from(JSON.stringify(JSON.parse(readFileSync(new URL(`./src/locales/${lang}.json`, import.meta.url), 'utf8'))));
    const hash = createHash('sha256').update(source).digest('hex').slice(0, 10);
    return { lang, fileName: `assets/words-${lang}.${hash}.json`, source };
  });
  const files = ASSETS.map((a) => {
    const source = readFileSync(require.resolve(a.src));
    const hash = createHash('sha256').update(source).digest('hex').slice(0, 10);
    return { key: a.key, fileName: `assets/${a.name}.${hash}.${a.ext}`, source };
  });
  const world = files.find((f) => f.key === 'world')!.fileName;
  const land = files.find((f) => f.key === 'land')!.fileName;
  const fonts = Object.fromEntries(files.filter((f) => f.key === '400' || f.key === '600').map((f) => [f.key, f.fileName]));
  return {
    files: [...files, ...words],
    define: { world, land, fonts, words: Object.fromEntries(words.map((w) => [w.lang, w.fileName])) },
  };
}

/** Emits the map and font files and tells the code their names through __NADIR_ASSETS__. */
function nadirAssets(): Plugin {
  const { files, define } = hashedAssets();
  return {
    name: 'nadir-assets',
    config: () => ({ define: { __NADIR_ASSETS__: JSON.stringify(define) } }),
    generateBundle() {
      for (const f of files) this.emitFile({ type: 'asset', fileName: f.fileName, source: f.source });
    },
  };
}

/** The trims of d3-array and d3-geo (build/trim-d3.ts); a trim that finds nothing to change fails the build. */
function trimmedD3(): Plugin {
  return {
    name: 'nadir-trim-d3',
    transform: {
      filter: { id: /[\\/]node_modules[\\/]d3-(array|geo)[\\/]/ },
      handler(code, id) {
        const t = trimD3(code, id);
        if (!t) return null;
        // the versions are pinned; a new one that reads differently should be looked at again
        for (const [name, n] of Object.entries(t.changes)) if (n === 0) this.error(`trim-d3: "${name}" changed nothing in ${id}; look at widget/build/trim-d3.ts again`);
        return { code: t.code, map: null };
      },
    },
  };
}

export default defineConfig({
  plugins: [vue({ features: { customElement: /\.ce\.vue$/ } }), nadirAssets(), trimmedD3()],
  // stack.md: library mode keeps process.env in the classic script unless it is defined
  define: {
    'process.env.NODE_ENV': JSON.stringify('production'),
    __VUE_OPTIONS_API__: 'false',
    __VUE_PROD_DEVTOOLS__: 'false',
    __VUE_PROD_HYDRATION_MISMATCH_DETAILS__: 'false',
  },
  build: {
    target: 'es2022',
    outDir: 'dist',
    // Hashed files of earlier builds stay beside the new ones: during a rolling restart a page
    // loaded from a process of the previous release still finds its files on the new ones.
    emptyOutDir: false,
    copyPublicDir: false,
    reportCompressedSize: true,
    // the ES module is a finished script for pages, not a library to bundle again: minify it fully
    rolldownOptions: {
      output: { minify: !process.env.NADIR_DEBUG_BUILD, comments: { annotation: false, legal: false, jsdoc: false } },
      // assets.ts reads import.meta.url only after document.currentScript, which the classic script has
      checks: { emptyImportMeta: false },
      // d3-array builds its bisect helpers at load time; the widget uses none of them (d3-geo takes
      // Adder, merge and range), so these calls may go when nothing reads their results
      treeshake: { manualPureFunctions: ['bisector'] },
    },
    lib: {
      entry: 'src/auto.ts',
      name: 'NadirTrack',
      formats: ['es', 'iife'],
      fileName: (format) => (format === 'es' ? 'nadir-track.js' : `nadir-track.${format}.js`),
    },
  },
});
