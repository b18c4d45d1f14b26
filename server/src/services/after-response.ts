/**
 * Work that runs after the answer has gone (sending e-mails whose existence must not show in the
 * answer's timing: password reset, verification resend, sign-up for a taken address).
 *
 *   afterResponse(ctx, 'what', async () => { ... })   errors are logged, never thrown
 *   settleAfterResponse(ctx) -> Promise<void>          waits for all of it (tests; close)
 */
import type { AppContext } from '../context.ts';

declare module '../context.ts' {
  interface AppServices {
    /** Work started by afterResponse and not finished yet. */
    afterResponse?: Set<Promise<void>>;
  }
}

function pending(ctx: AppContext): Set<Promise<void>> {
  if (!ctx.services.afterResponse) {
    const set = new Set<Promise<void>>();
    ctx.services.afterResponse = set;
    ctx.onClose(() => settleAfterResponse(ctx));
  }
  return ctx.services.afterResponse;
}

export function afterResponse(ctx: AppContext, what: string, fn: () => Promise<void>): void {
  const set = pending(ctx);
  const p: Promise<void> = new Promise<void>((resolve) => setImmediate(resolve))
    .then(fn)
    .catch((err: unknown) => ctx.logger.error({ err }, `${what} failed after the answer was sent`))
    .finally(() => set.delete(p));
  set.add(p);
}

export async function settleAfterResponse(ctx: AppContext): Promise<void> {
  const set = ctx.services.afterResponse;
  while (set && set.size > 0) await Promise.all([...set]);
}
