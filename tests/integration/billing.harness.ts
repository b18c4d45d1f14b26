/**
 * The app listening on a real port (so the fake payment provider can deliver its webhooks),
 * an owner with an organization, and helpers that act like the owner on the fake's pages.
 *
 *   const b = await startBillingApp();
 *   const { url } = (await b.owner.browser.post(b.api('/billing/checkout'), { plan: 'mission' }).expect(200)).body;
 *   await b.pay(url, TEST_CARD_OK);      // fills in the fake checkout page, waits for the webhooks
 *   await b.close();
 */
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import Stripe from 'stripe';
import type { FakeProvider } from '@nadirline/server/payments-fake/app.ts';
import { signUpAndVerify, startTestApp, type Person, type TestApp } from './console-api.harness.ts';

export { TEST_CARD_DECLINED, TEST_CARD_OK } from '@nadirline/server/payments-fake/app.ts';

export interface BillingApp {
  t: TestApp;
  fake: FakeProvider;
  /** The app's own address, e.g. http://127.0.0.1:PORT */
  base: string;
  owner: Person;
  orgId: string;
  api(path: string): string;
  /** Submits the fake's checkout form with `card`; resolves with its answer once webhooks are in. */
  pay(checkoutUrl: string, card: string): Promise<{ status: number; location: string | null; html: string }>;
  /** Sends a signed (or forged) event to the app's webhook route. */
  sendEvent(event: object, opts?: { secret?: string; timestamp?: number }): Promise<{ status: number; body: Record<string, unknown> }>;
  /** The app's clock (billing, grace, scheduled work). */
  setNow(ms: number): void;
  close(): Promise<void>;
}

export async function startBillingApp(env: Record<string, string> = {}): Promise<BillingApp> {
  const t = await startTestApp(env);
  const server = http.createServer(t.app);
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const payments = t.context.services.payments;
  if (!payments?.fake) throw new Error('the fake payment provider did not start');
  const fake = payments.fake;
  fake.setWebhookUrl(`${base}/webhooks/payments`);
  const owner = await signUpAndVerify(t, { name: 'Billing Owner', organizationName: 'Harrowgate Planetarium' });
  const orgId = owner.orgId as string;
  let clock: number | null = null;
  t.context.services.clock = () => clock ?? Date.now();
  const signer = new Stripe('sk_test_unused');
  return {
    t,
    fake,
    base,
    owner,
    orgId,
    api: (p) => `/api/orgs/${orgId}${p}`,
    async pay(checkoutUrl, card) {
      const res = await fetch(checkoutUrl, { method: 'POST', redirect: 'manual', headers: { 'content-type': 'application/x-www-form-urlencoded' }, body: new URLSearchParams({ card, holder: 'Ida Test' }) });
      const html = await res.text();
      await fake.idle();
      return { status: res.status, location: res.headers.get('location'), html };
    },
    async sendEvent(event, opts = {}) {
      const payload = JSON.stringify(event);
      const header = signer.webhooks.generateTestHeaderString({ payload, secret: opts.secret ?? payments.webhookSecret, timestamp: opts.timestamp });
      const res = await fetch(`${base}/webhooks/payments`, { method: 'POST', headers: { 'content-type': 'application/json', 'stripe-signature': header }, body: payload });
      return { status: res.status, body: (await res.json()) as Record<string, unknown> };
    },
    setNow(ms) {
      clock = ms;
    },
    async close() {
      await fake.idle();
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await t.close();
    },
  };
}
