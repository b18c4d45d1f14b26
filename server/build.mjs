/**
 * Builds the server once into server/dist/ (esbuild; entry index.js), so production runs plain Node:
 * `npm start` builds and then runs `node server/dist/index.js`. The workspace packages
 * (@nadirline/shared, TypeScript source) are bundled in; every other package stays a normal
 * import from node_modules (native modules such as sqlite3 included).
 * Paths the server finds at run time are relative to the repository root (config.ts repoRoot),
 * which is two levels above server/dist as it is above server/src.
 */
import { build } from 'esbuild';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const here = path.dirname(fileURLToPath(import.meta.url));

/** Bare imports other than @nadirline/* stay external. */
const externalPackages = {
  name: 'external-packages',
  setup(b) {
    b.onResolve({ filter: /^[^./]/ }, (args) => {
      if (args.path.startsWith('@nadirline/') || args.path.startsWith('node:')) return undefined;
      return { path: args.path, external: true };
    });
  },
};

fs.rmSync(path.join(here, 'dist'), { recursive: true, force: true });

await build({
  entryPoints: [path.join(here, 'src/index.ts')],
  outdir: path.join(here, 'dist'),
  // dynamic imports become their own files, so the fake SMTP server (services/fake-mailbox.ts)
  // is read only when it runs
  splitting: true,
  // beside index.js: config.ts finds the repository root from its own file's place
  chunkNames: '[name]-[hash]',
  bundle: true,
  platform: 'node',
  format: 'esm',
  target: 'node20',
  sourcemap: true,
  logLevel: 'warning',
  plugins: [externalPackages],
});
