/**
 * Plans and payments through the provider's SDK against the local fake provider: checkout on
 * the fake's hosted page, signed webhooks (forged, replayed, out of order), payment failure and
 * the grace period, cancel at period end, the billing portal and invoices.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import request from 'supertest';
import { Organization, PaymentEvent, Subscription } from '@nadirline/server/models/index.ts';
import { onPlanChanged, sweepGrace, type PlanChange } from '@nadirline/server/services/billing.ts';
import { getQuotaService } from '@nadirline/server/services/quota.ts';
import { startTestApp } from './console-api.harness.ts';
import { signUpAndVerify } from './console-api.harness.ts';
import { TEST_CARD_DECLINED, TEST_CARD_OK, startBillingApp, type BillingApp } from './billing.harness.ts';

let b: BillingApp;

beforeEach(async () => {
  b = await startBillingApp();
});
afterEach(async () => {
  await b.close();
});

async function checkout(plan: string): Promise<string> {
  const res = await b.owner.browser.post(b.api('/billing/checkout'), { plan }).expect(200);
  return res.body.url as string;
}

async function overview() {
  return (await b.owner.browser.get(b.api('/billing')).expect(200)).body;
}

async function upgradeToMission(): Promise<void> {
  const url = await checkout('mission');
  const paid = await b.pay(url, TEST_CARD_OK);
  expect(paid.status).toBe(303);
}

function subscriptionId(): string {
  const subs = [...b.fake.store.subscriptions.values()];
  return subs.at(-1)!.id;
}

describe('checkout through the fake provider', () => {
  it('answers the hosted checkout page and changes nothing until the payment is made', async () => {
    const url = await checkout('mission');
    expect(url).toMatch(new RegExp(`^${b.fake.url()}/pay/cs_test_`));
    const page = await fetch(url);
    expect(page.status).toBe(200);
    expect(await page.text()).toContain('Pay for Nadirline Mission');
    expect((await overview()).plan).toBe('starter');
    // The customer was made once, with our organization in its metadata.
    const customers = [...b.fake.store.customers.values()];
    expect(customers).toHaveLength(1);
    expect(customers[0]!['metadata']).toEqual({ organizationId: b.orgId });
    // Asking again reuses the customer and, within minutes, the same session.
    expect(await checkout('mission')).toBe(url);
    expect(b.fake.store.customers.size).toBe(1);
  });

  it('a paid checkout moves the organization to Mission, raises the quota at once and lists the invoice', async () => {
    await getQuotaService(b.t.context).status(b.orgId); // warm the plan cache
    const url = await checkout('mission');
    const paid = await b.pay(url, TEST_CARD_OK);
    expect(paid.location).toBe(`http://console.test/o/${b.orgId}/plan?checkout=done&session=${url.split('/').at(-1)}`);
    const o = await overview();
    expect(o.plan).toBe('mission');
    expect(o.subscription).toMatchObject({ plan: 'mission', status: 'active', cancelAtPeriodEnd: false, graceUntil: null, provider: 'external' });
    expect(Date.parse(o.subscription.currentPeriodEnd)).toBeGreaterThan(Date.now() + 29 * 86_400_000);
    expect(o.invoices).toHaveLength(1);
    expect(o.invoices[0]).toMatchObject({ status: 'paid', amountDue: 3900, amountPaid: 3900, currency: 'EUR' });
    expect(o.invoices[0].hostedUrl).toMatch(/\/receipt\/in_/);
    const usage = (await b.owner.browser.get(b.api('/usage')).expect(200)).body;
    expect(usage.quota).toMatchObject({ plan: 'mission', limit: 2_000_000 });
    const activity = (await b.owner.browser.get(b.api('/activity')).expect(200)).body.events as Array<{ action: string; detail: Record<string, unknown> }>;
    expect(activity.find((e) => e.action === 'billing.plan')?.detail).toMatchObject({ from: 'starter', to: 'mission' });
  });

  it('a declined card leaves the plan as it was and says so on the page', async () => {
    const url = await checkout('mission');
    const declined = await b.pay(url, TEST_CARD_DECLINED);
    expect(declined.status).toBe(402);
    expect(declined.html).toContain('Your card was declined. Nothing was charged.');
    expect((await overview()).plan).toBe('starter');
    expect(b.fake.store.subscriptions.size).toBe(0);
  });

  it('refuses the plan already held and an unknown plan', async () => {
    const same = await b.owner.browser.post(b.api('/billing/checkout'), { plan: 'starter' });
    expect(same.status).toBe(409);
    const bad = await b.owner.browser.post(b.api('/billing/checkout'), { plan: 'galaxy' });
    expect(bad.status).toBe(400);
    expect(bad.headers['content-type']).toMatch(/problem\+json/);
  });

  it('tells plan-change listeners (the hook a cross-process broadcast uses)', async () => {
    const seen: PlanChange[] = [];
    onPlanChanged(b.t.context, (c) => void seen.push(c));
    await upgradeToMission();
    expect(seen).toEqual([{ organizationId: b.orgId, from: 'starter', to: 'mission', reason: 'checkout' }]);
  });

  it('moves a paid subscription to Constellation by swapping its price', async () => {
    await upgradeToMission();
    const res = await b.owner.browser.post(b.api('/billing/checkout'), { plan: 'constellation' }).expect(200);
    expect(res.body.url).toContain('checkout=changed');
    await b.fake.idle();
    expect((await overview()).plan).toBe('constellation');
    expect(b.fake.store.subscriptions.size).toBe(1);
  });
});

describe('the webhook route', () => {
  it('refuses a forged signature, a missing one and a stale one with 400 and handles nothing', async () => {
    const event = { id: 'evt_forged', object: 'event', type: 'customer.subscription.deleted', created: Math.floor(Date.now() / 1000), data: { object: { id: 'sub_x', object: 'subscription', customer: 'cus_x', status: 'canceled', metadata: { organizationId: b.orgId }, items: { data: [] } } } };
    const forged = await b.sendEvent(event, { secret: 'whsec_not_ours' });
    expect(forged.status).toBe(400);
    expect(forged.body).toMatchObject({ code: 'signature-invalid' });
    const stale = await b.sendEvent(event, { timestamp: Math.floor(Date.now() / 1000) - 3600 });
    expect(stale.status).toBe(400);
    const none = await fetch(`${b.base}/webhooks/payments`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(event) });
    expect(none.status).toBe(400);
    expect(await PaymentEvent.count()).toBe(0);
  });

  it('handles a replayed event once', async () => {
    await upgradeToMission();
    const sub = b.fake.store.subscriptions.get(subscriptionId())!;
    const event = { id: 'evt_replay_1', object: 'event', type: 'customer.subscription.deleted', created: Math.floor(Date.now() / 1000) + 5, data: { object: { ...sub, status: 'canceled' } } };
    const first = await b.sendEvent(event);
    expect(first).toEqual({ status: 200, body: { received: true, duplicate: false } });
    expect((await overview()).plan).toBe('starter');
    // Back to Mission by a newer event; the replay of the old deletion must not undo it.
    await b.sendEvent({ id: 'evt_replay_2', object: 'event', type: 'customer.subscription.updated', created: Math.floor(Date.now() / 1000) + 10, data: { object: { ...sub, status: 'active' } } });
    expect((await overview()).plan).toBe('mission');
    const again = await b.sendEvent(event);
    expect(again).toEqual({ status: 200, body: { received: true, duplicate: true } });
    expect((await overview()).plan).toBe('mission');
    // The fake's own resend of a delivered event is a duplicate too.
    const delivered = b.fake.store.events.find((e) => e['type'] === 'checkout.session.completed')!;
    await fetch(`${b.fake.url()}/_control/events/${delivered.id}/resend`, { method: 'POST' });
    await b.fake.idle();
    expect(await PaymentEvent.count({ where: { id: delivered.id } })).toBe(1);
  });

  it('an older event arriving after a newer one does not undo it', async () => {
    await upgradeToMission();
    const sub = b.fake.store.subscriptions.get(subscriptionId())!;
    const t0 = Math.floor(Date.now() / 1000);
    await b.sendEvent({ id: 'evt_new', object: 'event', type: 'customer.subscription.updated', created: t0 + 20, data: { object: { ...sub, status: 'active', cancel_at_period_end: true } } });
    const late = await b.sendEvent({ id: 'evt_old', object: 'event', type: 'customer.subscription.updated', created: t0 + 10, data: { object: { ...sub, status: 'canceled' } } });
    expect(late.status).toBe(200);
    const o = await overview();
    expect(o.plan).toBe('mission');
    expect(o.subscription).toMatchObject({ status: 'active', cancelAtPeriodEnd: true });
  });

  it('two deliveries of the same event at once are handled once', async () => {
    await upgradeToMission();
    const sub = b.fake.store.subscriptions.get(subscriptionId())!;
    const event = { id: 'evt_twice', object: 'event', type: 'customer.subscription.updated', created: Math.floor(Date.now() / 1000) + 30, data: { object: { ...sub, status: 'active' } } };
    const results = await Promise.all([b.sendEvent(event), b.sendEvent(event), b.sendEvent(event)]);
    expect(results.map((r) => r.status)).toEqual([200, 200, 200]);
    expect(results.filter((r) => r.body['duplicate'] === false)).toHaveLength(1);
  });
});

describe('payment failure and the grace period', () => {
  it('keeps Mission while in grace, falls back to Starter when it ends, and comes back when paid', async () => {
    await upgradeToMission();
    const start = Date.now();
    b.setNow(start);
    b.fake.renew(subscriptionId(), 'failed');
    await b.fake.idle();
    let o = await overview();
    expect(o.plan).toBe('mission');
    expect(o.subscription.status).toBe('past_due');
    expect(Date.parse(o.subscription.graceUntil)).toBe(start + 7 * 86_400_000);
    expect(o.invoices[0]).toMatchObject({ status: 'open', amountPaid: 0 });

    // The day before the grace ends nothing changes; after it, Starter.
    expect(await sweepGrace(b.t.context, new Date(start + 6 * 86_400_000))).toBe(0);
    expect((await overview()).plan).toBe('mission');
    expect(await sweepGrace(b.t.context, new Date(start + 7 * 86_400_000 + 1000))).toBe(1);
    o = await overview();
    expect(o.plan).toBe('starter');
    expect(o.subscription.lapsedAt).not.toBeNull();
    expect((await b.owner.browser.get(b.api('/usage')).expect(200)).body.quota.limit).toBe(100_000);

    // The owner replaces the card on the provider's billing page: paid, Mission again.
    const portal = (await b.owner.browser.post(b.api('/billing/portal')).expect(200)).body.url as string;
    const paid = await fetch(`${portal}/card`, { method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded' }, body: new URLSearchParams({ card: TEST_CARD_OK }) });
    expect(paid.status).toBe(200);
    await b.fake.idle();
    o = await overview();
    expect(o.plan).toBe('mission');
    expect(o.subscription).toMatchObject({ status: 'active', graceUntil: null, lapsedAt: null });
    expect(o.invoices.every((i: { status: string }) => i.status === 'paid')).toBe(true);
  });
});

describe('cancel, resume and the portal', () => {
  it('cancels at period end, keeps Mission until then, and ends on the provider\u2019s deletion', async () => {
    await upgradeToMission();
    const cancelled = await b.owner.browser.post(b.api('/billing/cancel')).expect(200);
    expect(cancelled.body.subscription).toMatchObject({ plan: 'mission', cancelAtPeriodEnd: true });
    expect((await b.owner.browser.post(b.api('/billing/cancel'))).status).toBe(409);
    const resumed = await b.owner.browser.post(b.api('/billing/resume')).expect(200);
    expect(resumed.body.subscription.cancelAtPeriodEnd).toBe(false);
    // Choosing Starter is the same as cancelling at period end.
    const starter = await b.owner.browser.post(b.api('/billing/checkout'), { plan: 'starter' }).expect(200);
    expect(starter.body.url).toContain('checkout=cancel-scheduled');
    await b.fake.idle();
    expect((await overview()).plan).toBe('mission');
    b.fake.renew(subscriptionId(), 'paid');
    await b.fake.idle();
    const o = await overview();
    expect(o.plan).toBe('starter');
    expect(o.subscription.status).toBe('canceled');
  });

  it('opens the provider\u2019s billing page only for an organization that has paid', async () => {
    const before = await b.owner.browser.post(b.api('/billing/portal'));
    expect(before.status).toBe(409);
    await upgradeToMission();
    const url = (await b.owner.browser.post(b.api('/billing/portal')).expect(200)).body.url as string;
    const page = await (await fetch(url)).text();
    expect(page).toContain('Nadirline Mission');
    expect(page).toContain(`http://console.test/o/${b.orgId}/plan?portal=back`);
  });
});

describe('without a payment provider', () => {
  it('checkout answers 503 problem+json and the plan stays', async () => {
    const t = await startTestApp({ PAYMENTS_FAKE: 'false' });
    try {
      const owner = await signUpAndVerify(t, { organizationName: 'Quiet Observatory' });
      const res = await owner.browser.post(`/api/orgs/${owner.orgId}/billing/checkout`, { plan: 'mission' });
      expect(res.status).toBe(503);
      expect(res.headers['content-type']).toMatch(/problem\+json/);
      expect(res.body.detail).toMatch(/No payment provider is configured/);
      expect((await Organization.findByPk(owner.orgId))?.plan).toBe('starter');
      expect(await Subscription.count()).toBe(0);
      expect((await owner.browser.get(`/api/orgs/${owner.orgId}/billing`).expect(200)).body.paymentsAvailable).toBe(false);
      const hook = await request(t.app).post('/webhooks/payments').set('stripe-signature', 't=1,v1=00').send('{}');
      expect(hook.status).toBe(503);
    } finally {
      await t.close();
    }
  });
});
