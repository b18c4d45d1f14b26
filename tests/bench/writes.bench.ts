/**
 * Concurrent writes on one SQLite file (the app in this process, real HTTP): 100 simultaneous
 * uploads of one epoch, then 20 uploaders for BENCH_WRITE_SECONDS (default 15; a third of their
 * uploads repeat an epoch another uploader is storing at that moment) while one reader asks for
 * another satellite's position every 20 ms. Prints the 5xx count and share, duplicate rows,
 * usage-flush errors and the reader's p50 / p99 / max. Goals: 0 5xx, 0 duplicates, reader p99
 * under 100 ms. The baseline in the same run is the reader alone (no writers).
 */
import { runWriteLoad, type WriteLoadFigures } from '../support/write-load.ts';

const SECONDS = Number(process.env.BENCH_WRITE_SECONDS ?? 15);

function line(name: string, f: WriteLoadFigures): string {
  const pct = f.uploads ? ((100 * f.status5xx) / f.uploads).toFixed(2) : '0';
  return (
    `${name.padEnd(22)} uploads ${String(f.uploads).padStart(6)}  5xx ${String(f.status5xx).padStart(4)} (${pct} %)  busy ${f.busy}  timeouts ${f.statuses['timeout'] ?? 0}` +
    `  duplicates ${f.duplicates}  burst rows ${f.burstRows}  flush errors ${f.flushErrors}` +
    `  reader p50 ${f.readerP50Ms.toFixed(1)} ms  p99 ${f.readerP99Ms.toFixed(1)} ms  max ${f.readerMaxMs.toFixed(1)} ms`
  );
}

export async function run(): Promise<void> {
  // Warm-up (not printed): the first app in a process pays for loading and compiling.
  await runWriteLoad({ writers: 2, seconds: 2 });
  const alone = await runWriteLoad({ writers: 0, seconds: Math.min(5, SECONDS) });
  console.log(line('reader alone', alone));
  const loaded = await runWriteLoad({ writers: 20, seconds: SECONDS, sameEpochBurst: 100 });
  console.log(line('20 writers + reader', loaded));
  console.log(`reader p99 with writers / alone: ${(loaded.readerP99Ms / alone.readerP99Ms).toFixed(2)}x (goal: 5xx 0, duplicates 0, p99 < 100 ms)`);
}
