/**
 * `npm run bench`: runs every benchmark module in turn, each printing its own figures.
 * To add one, write `tests/bench/<name>.bench.ts` exporting `async function run(): Promise<void>`
 * and list it below. Figures are only comparable within one run on one machine.
 */
export {};

interface BenchModule {
  name: string;
  load: () => Promise<{ run: () => Promise<void> }>;
}

const modules: BenchModule[] = [
  { name: 'orbit engine', load: () => import('./orbit.bench.ts') },
  { name: 'element-set parsing (hostile texts)', load: () => import('./parse.bench.ts') },
  { name: 'server', load: () => import('./server.bench.ts') },
  { name: 'server beyond one process (PostgreSQL + Redis)', load: () => import('./scale.bench.ts') },
  { name: 'server under a flood of over-limit requests', load: () => import('./flood.bench.ts') },
  { name: 'concurrent writes', load: () => import('./writes.bench.ts') },
  { name: 'sign-ins and the event loop (password hashing)', load: () => import('./signin.bench.ts') },
  { name: 'widget', load: () => import('./widget.bench.ts') },
];

console.log(`Nadirline benchmarks, Node ${process.version}, ${new Date().toISOString()}`);
let failed = 0;
for (const m of modules) {
  console.log(`\n== ${m.name} ==`);
  try {
    await (await m.load()).run();
  } catch (err) {
    failed++;
    console.error(`${m.name} failed:`, err);
  }
}
if (failed > 0) process.exitCode = 1;
