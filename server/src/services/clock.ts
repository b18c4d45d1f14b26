/**
 * The clock billing, notices and scheduled work read. Tests set ctx.services.clock to move time;
 * everything else uses Date.now.
 *
 *   now(ctx) -> Date
 */
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
