/**
 * The payment provider's client (the official SDK) and, outside production, the local fake it
 * talks to.
 *
 *   getPayments(ctx): Promise<Payments | null>   (idempotent; null when no provider is configured)
 *   payments.client        the SDK client
 *   payments.webhookSecret what webhook signatures are checked with
 *   payments.priceFor(plan) / payments.planForPrice(priceId)
 *   payments.fake          the in-process fake provider when PAYMENTS_FAKE is on (else null)
 *
 * Which provider: PAYMENTS_FAKE on (the default in development, demo and tests) starts the fake
 * on 127.0.0.1:FAKE_PAYMENTS_PORT with local test secrets; PAYMENTS_API_BASE points the SDK at
 * another address (a fake started by hand); with neither, nothing is configured and checkout
 * answers 503 `unavailable`. The SDK never reaches the provider's real address from this code.
 */
import Stripe from 'stripe';
import type { AppContext } from '../context.ts';
import type { Plan } from '../models/index.ts';
import { createFakeProvider, type FakePrice, type FakeProvider } from '../payments-fake/app.ts';
import { PLAN_CATALOG } from './quota.ts';

/** The fake's secrets when none are given (they guard nothing real). */
export const FAKE_SECRET_KEY = 'sk_test_nadirline_local';
export const FAKE_WEBHOOK_SECRET = 'whsec_nadirline_local';

declare module '../context.ts' {
  interface AppServices {
    /** Set by getPayments (createApp calls it at start-up); null when no provider is configured. */
    payments?: Payments | null;
  }
}

export interface Payments {
  client: Stripe;
  webhookSecret: string;
  fake: FakeProvider | null;
  priceFor(plan: Plan): string | null;
  planForPrice(priceId: string | null | undefined): Plan | null;
}

/** Price ids per paid plan from the configuration. */
export function planPrices(config: AppContext['config']): Partial<Record<Plan, string>> {
  return { mission: config.PAYMENTS_PRICE_MISSION, constellation: config.PAYMENTS_PRICE_CONSTELLATION };
}

/** What the fake sells: one monthly price per paid plan, at the catalogue's price. */
export function fakePrices(config: AppContext['config']): FakePrice[] {
  const ids = planPrices(config);
  return PLAN_CATALOG.filter((p) => p.priceMonthly > 0 && ids[p.id]).map((p) => ({
    id: ids[p.id] as string,
    productName: `Nadirline ${p.name}`,
    unitAmount: Math.round(p.priceMonthly * 100),
    currency: 'eur',
  }));
}

function sdkFor(baseUrl: string, secretKey: string): Stripe {
  const u = new URL(baseUrl);
  const protocol = u.protocol === 'http:' ? 'http' : 'https';
  return new Stripe(secretKey, {
    host: u.hostname,
    port: u.port ? Number(u.port) : protocol === 'http' ? 80 : 443,
    protocol,
    maxNetworkRetries: 1,
    timeout: 10_000,
    telemetry: false,
  });
}

export async function getPayments(ctx: AppContext): Promise<Payments | null> {
  if (ctx.services.payments !== undefined) return ctx.services.payments;
  const { config, logger } = ctx;
  let baseUrl: string | null = null;
  let fake: FakeProvider | null = null;
  let secretKey = config.PAYMENTS_SECRET_KEY ?? null;
  let webhookSecret = config.PAYMENTS_WEBHOOK_SECRET ?? null;
  if (config.paymentsFake) {
    secretKey ??= FAKE_SECRET_KEY;
    webhookSecret ??= FAKE_WEBHOOK_SECRET;
    fake = createFakeProvider({ secretKey, webhookSecret, prices: fakePrices(config), log: (msg) => logger.warn(msg) });
    baseUrl = await fake.listen(config.FAKE_PAYMENTS_PORT, '127.0.0.1');
    logger.info({ url: baseUrl }, 'fake payment provider listening');
    const f = fake;
    ctx.onClose(async () => {
      await f.idle();
      await f.close();
    });
  } else if (config.PAYMENTS_API_BASE) {
    baseUrl = config.PAYMENTS_API_BASE;
  }
  if (!baseUrl || !secretKey || !webhookSecret) {
    if (baseUrl) logger.warn('PAYMENTS_API_BASE is set without PAYMENTS_SECRET_KEY and PAYMENTS_WEBHOOK_SECRET: payments are off');
    ctx.services.payments = null;
    return null;
  }
  const prices = planPrices(config);
  const payments: Payments = {
    client: sdkFor(baseUrl, secretKey),
    webhookSecret,
    fake,
    priceFor: (plan) => prices[plan] ?? null,
    planForPrice: (priceId) => (Object.entries(prices).find(([, id]) => id === priceId)?.[0] as Plan | undefined) ?? null,
  };
  ctx.services.payments = payments;
  return payments;
}
