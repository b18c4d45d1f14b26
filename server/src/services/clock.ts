/**
 * The clock billing, notices and scheduled work read. In-process tests set ctx.services.clock to
 * move time; tests with several server processes point TEST_CLOCK_FILE (refused in production)
 * at one file they all read; everything else uses Date.now.
 *
 *   now(ctx) -> Date
 *   installTestClock(ctx)   with TEST_CLOCK_FILE: ctx.services.clock reads the file
 */
import fs from 'node:fs';
import type { AppContext } from '../context.ts';

declare module '../context.ts' {
  interface AppServices {
    /** Milliseconds since the epoch; default Date.now. */
    clock?: () => number;
  }
}

export function now(ctx: AppContext): Date {
  return new Date((ctx.services.clock ?? Date.now)());
}

/** The time a clock file holds (ms since the epoch, or an ISO date), or null when it holds none. */
export function readClockFile(file: string): number | null {
  let text: string;
  try {
    text = fs.readFileSync(file, 'utf8').trim();
  } catch {
    return null;
  }
  const ms = /^\d+$/.test(text) ? Number(text) : Date.parse(text);
  return Number.isFinite(ms) ? ms : null;
}

/**
 * With TEST_CLOCK_FILE (never in production: config.ts refuses it) the clock reads that file at
 * every call, so every process of a test reads the same time; without a readable time in it,
 * the system clock.
 */
export function installTestClock(ctx: AppContext): void {
  const file = ctx.config.TEST_CLOCK_FILE;
  if (!file) return;
  if (ctx.config.isProduction) throw new Error('TEST_CLOCK_FILE is refused in production');
  ctx.services.clock = () => readClockFile(file) ?? Date.now();
  ctx.logger.warn({ file }, 'test clock: billing, notices and scheduled work read the time from TEST_CLOCK_FILE');
}
