/**
 * Plans and payments. Plans and their quotas come from services/quota.ts; the provider is
 * reached only through its SDK (services/payments.ts), the local fake outside production.
 *
 *   billingOverview(ctx, org)                 plan, plans with prices, subscription state, invoices
 *   startCheckout(ctx, auth, plan, returnBase) -> { url }
 *       no provider configured: 503 `unavailable`, the plan stays.
 *       paid plan, no live subscription: the customer is created once (idempotency key per
 *         organization) and a checkout session answers the provider's hosted page; the plan
 *         changes only when the provider's webhook says the checkout completed.
 *       paid plan with a live subscription: the subscription's price is swapped (proration by the
 *         provider) and the answer is applied at once.
 *       Starter with a live subscription: cancel at period end (the paid plan runs to its end).
 *   openPortal(ctx, auth, returnBase) -> { url }     the provider's billing page (card, invoices, cancel)
 *   setCancelAtPeriodEnd(ctx, auth, on)              cancel at period end, or keep renewing
 *   handleWebhook(ctx, rawBody, signature)           verify (400 `signature-invalid`), handle each event id once
 *   sweepGrace(ctx, now)                             past-due subscriptions whose grace ran out fall back to Starter
 *   onPlanChanged(ctx, listener)                     told after every plan change of an organization
 *                                                    (quota caches listen; a cross-process broadcast can too)
 *
 * Subscription state follows the provider's events: checkout.session.completed,
 * customer.subscription.created/updated/deleted, invoice.paid and invoice.payment_failed. An event
 * older than the newest one applied to the subscription does not change its state (events may
 * arrive out of order); every event id is written to payment_events in the same transaction as
 * its effect, so a replayed event, or one delivered to two processes, is handled once.
 */
import { nanoid } from 'nanoid';
import { Op, UniqueConstraintError, type Transaction } from 'sequelize';
import type Stripe from 'stripe';
import type { AppContext } from '../context.ts';
import { writeTransaction } from '../db/index.ts';
import { now } from './clock.ts';
import { HttpError } from '../http/problem.ts';
import type { OrgAuth } from '../http/roles.ts';
import { Invoice, Membership, Organization, PaymentEvent, Subscription, User, type Plan } from '../models/index.ts';
import { recordAudit } from './audit.ts';
import { getPayments, type Payments } from './payments.ts';
import { PLAN_CATALOG, getQuotaService, planOf } from './quota.ts';
import { emitEvent } from './webhooks.ts';
import type { Billing } from '@nadirline/shared/contract';

/** Plan prices (services/quota.ts PLAN_CATALOG priceMonthly) are in euros. */
export const PLAN_CURRENCY = 'EUR';

/** Provider statuses under which the paid plan applies. */
const LIVE = new Set(['active', 'trialing', 'past_due']);
/** Provider statuses that end the paid plan. */
const ENDED = new Set(['canceled', 'unpaid', 'incomplete_expired']);

export type SubscriptionJson = NonNullable<Billing['subscription']>;
export type InvoiceJson = Billing['invoices'][number];

/** GET /api/orgs/:org/billing: the contract's Billing. */
export type BillingOverview = Billing;

export interface PlanChange {
  organizationId: string;
  from: Plan;
  to: Plan;
  /** checkout | subscription-updated | subscription-deleted | grace-ended | payment-recovered | direct */
  reason: string;
}

export type PlanListener = (change: PlanChange) => void | Promise<void>;

declare module '../context.ts' {
  interface AppServices {
    /** onPlanChanged listeners, in registration order. */
    planListeners?: PlanListener[];
  }
}

/** Now, cut to the whole second the provider stamps its events with (so an event of this same second still applies). */
function providerSecond(ctx: AppContext): Date {
  return new Date(Math.floor(now(ctx).getTime() / 1000) * 1000);
}

/** Register a listener told after every plan change (after the change is committed). */
export function onPlanChanged(ctx: AppContext, listener: PlanListener): void {
  (ctx.services.planListeners ??= []).push(listener);
}

async function announcePlanChange(ctx: AppContext, change: PlanChange): Promise<void> {
  getQuotaService(ctx).invalidatePlan(change.organizationId);
  for (const listener of ctx.services.planListeners ?? []) {
    try {
      await listener(change);
    } catch (err) {
      ctx.logger.error({ err, organizationId: change.organizationId }, 'plan-change listener failed');
    }
  }
}

function iso(d: Date | null | undefined): string | null {
  return d ? new Date(d).toISOString() : null;
}

function serializeSubscription(sub: Subscription): SubscriptionJson {
  return {
    plan: sub.plan,
    status: sub.status,
    currentPeriodEnd: iso(sub.currentPeriodEnd),
    cancelAtPeriodEnd: Boolean(sub.cancelAtPeriodEnd),
    graceUntil: iso(sub.graceUntil),
    lapsedAt: iso(sub.lapsedAt),
    provider: sub.providerSubscriptionId ? 'external' : 'none',
  };
}

function serializeInvoice(i: Invoice): InvoiceJson {
  return {
    id: i.id,
    number: i.number,
    status: i.status,
    amountDue: i.amountDue,
    amountPaid: i.amountPaid,
    currency: i.currency.toUpperCase(),
    periodStart: iso(i.periodStart),
    periodEnd: iso(i.periodEnd),
    issuedAt: new Date(i.issuedAt).toISOString(),
    hostedUrl: i.hostedUrl,
    pdfUrl: i.pdfUrl,
  };
}

export async function listInvoices(organizationId: string, limit = 24): Promise<InvoiceJson[]> {
  const rows = await Invoice.findAll({ where: { organizationId }, order: [['issuedAt', 'DESC']], limit });
  return rows.map(serializeInvoice);
}

export async function billingOverview(ctx: AppContext, org: Organization): Promise<BillingOverview> {
  const [sub, payments, invoices] = await Promise.all([Subscription.findOne({ where: { organizationId: org.id } }), getPayments(ctx), listInvoices(org.id)]);
  return {
    plan: org.plan,
    plans: PLAN_CATALOG.map((p) => ({ id: p.id, name: p.name, monthlyRequests: p.monthlyRequests, priceMonthly: p.priceMonthly, currency: PLAN_CURRENCY })),
    subscription: sub ? serializeSubscription(sub) : null,
    paymentsAvailable: payments !== null,
    invoices,
  };
}

function requirePayments(payments: Payments | null): Payments {
  if (!payments) {
    throw new HttpError('unavailable', 'No payment provider is configured on this server, so paid plans cannot be bought here and the plan was not changed. The operator sets PAYMENTS_API_BASE, PAYMENTS_SECRET_KEY and PAYMENTS_WEBHOOK_SECRET.');
  }
  return payments;
}

/** Turns a provider error into a problem the console can show; never leaks the provider's wording about keys. */
function providerFailure(err: unknown): HttpError {
  const e = err as { type?: string; message?: string; statusCode?: number };
  if (e?.type === 'StripeConnectionError' || e?.type === 'StripeAPIError' || e?.type === 'StripeAuthenticationError') {
    return new HttpError('unavailable', 'The payment provider did not answer as expected; nothing was changed. Try again in a minute.');
  }
  return new HttpError('unprocessable', `The payment provider refused the request: ${e?.message ?? 'unknown reason'}. Nothing was changed.`);
}

function planPage(returnBase: string, orgId: string, query: string): string {
  return `${returnBase.replace(/\/$/, '')}/o/${encodeURIComponent(orgId)}/plan?${query}`;
}

async function ownerOf(orgId: string): Promise<User | null> {
  const m = await Membership.findOne({ where: { organizationId: orgId, role: 'owner' } });
  return m ? User.findByPk(m.userId) : null;
}

async function ensureCustomer(ctx: AppContext, payments: Payments, org: Organization, sub: Subscription | null): Promise<string> {
  if (sub?.providerCustomerId) return sub.providerCustomerId;
  const owner = await ownerOf(org.id);
  let customer: Stripe.Customer;
  try {
    customer = await payments.client.customers.create(
      { name: org.name, email: owner?.email, metadata: { organizationId: org.id } },
      { idempotencyKey: `nl-customer-${org.id}` },
    );
  } catch (err) {
    throw providerFailure(err);
  }
  if (sub) await sub.update({ providerCustomerId: customer.id });
  else {
    await Subscription.create({ id: nanoid(), organizationId: org.id, plan: org.plan, status: 'none', providerCustomerId: customer.id, providerSubscriptionId: null, currentPeriodEnd: null });
  }
  ctx.logger.info({ organizationId: org.id }, 'payment customer created');
  return customer.id;
}

function liveSubscription(sub: Subscription | null): sub is Subscription & { providerSubscriptionId: string } {
  return Boolean(sub?.providerSubscriptionId && LIVE.has(sub.status) && !sub.lapsedAt);
}

export async function startCheckout(ctx: AppContext, auth: OrgAuth, plan: Plan, returnBase: string): Promise<{ url: string }> {
  const org = auth.organization;
  const sub = await Subscription.findOne({ where: { organizationId: org.id } });
  const live = liveSubscription(sub);
  if (org.plan === plan && (plan === 'starter' || live)) {
    if (!(live && sub.cancelAtPeriodEnd)) throw new HttpError('conflict', `${org.name} is already on the ${planOf(plan).name} plan.`);
  }

  if (plan === 'starter') {
    if (live) {
      await setCancelAtPeriodEnd(ctx, auth, true);
      return { url: planPage(returnBase, org.id, 'checkout=cancel-scheduled') };
    }
    // No paid subscription behind the current plan: moving to the free plan needs no payment.
    await changePlanDirectly(ctx, auth, 'starter');
    return { url: planPage(returnBase, org.id, 'checkout=done') };
  }

  const payments = requirePayments(await getPayments(ctx));
  const price = payments.priceFor(plan);
  if (!price) throw new HttpError('unavailable', `No provider price is configured for the ${planOf(plan).name} plan, so it cannot be bought here.`);

  if (live) {
    // Another paid plan: swap the price on the subscription the provider already bills.
    let updated: Stripe.Subscription;
    try {
      const current = await payments.client.subscriptions.retrieve(sub.providerSubscriptionId);
      const item = current.items.data[0];
      if (!item) throw new HttpError('unprocessable', 'The subscription has no item to change.');
      updated = await payments.client.subscriptions.update(
        current.id,
        { items: [{ id: item.id, price }], cancel_at_period_end: false, proration_behavior: 'create_prorations', metadata: { organizationId: org.id, plan } },
        { idempotencyKey: `nl-switch-${org.id}-${current.id}-${plan}-${nanoid(8)}` },
      );
    } catch (err) {
      if (err instanceof HttpError) throw err;
      throw providerFailure(err);
    }
    await applySubscription(ctx, org.id, updated, providerSecond(ctx), 'subscription-updated', auth.user.id);
    return { url: planPage(returnBase, org.id, 'checkout=changed') };
  }

  const customer = await ensureCustomer(ctx, payments, org, sub);
  // One session per organization, plan and ten minutes: a double click gets the same page.
  const bucket = Math.floor(now(ctx).getTime() / 600_000);
  let session: Stripe.Checkout.Session;
  try {
    session = await payments.client.checkout.sessions.create(
      {
        mode: 'subscription',
        customer,
        client_reference_id: org.id,
        line_items: [{ price, quantity: 1 }],
        metadata: { organizationId: org.id, plan },
        subscription_data: { metadata: { organizationId: org.id, plan } },
        success_url: planPage(returnBase, org.id, 'checkout=done&session={CHECKOUT_SESSION_ID}'),
        cancel_url: planPage(returnBase, org.id, 'checkout=cancelled'),
      },
      { idempotencyKey: `nl-checkout-${org.id}-${plan}-${bucket}` },
    );
  } catch (err) {
    throw providerFailure(err);
  }
  if (!session.url) throw new HttpError('unavailable', 'The payment provider gave no checkout page; nothing was changed.');
  await recordAudit(ctx, { organizationId: org.id, actorUserId: auth.user.id, action: 'billing.checkout', targetType: 'organization', targetId: org.id, detail: { plan } });
  return { url: session.url };
}

/** A plan change with no payment involved (to Starter without a paid subscription). */
async function changePlanDirectly(ctx: AppContext, auth: OrgAuth, plan: Plan): Promise<void> {
  const org = auth.organization;
  const from = org.plan;
  await writeTransaction(ctx.sequelize, async (transaction) => {
    await org.update({ plan }, { transaction });
    const sub = await Subscription.findOne({ where: { organizationId: org.id }, transaction });
    if (sub) await sub.update({ plan, status: 'none', currentPeriodEnd: null, cancelAtPeriodEnd: false, graceUntil: null }, { transaction });
    await recordAudit(ctx, { organizationId: org.id, actorUserId: auth.user.id, action: 'billing.plan', targetType: 'organization', targetId: org.id, detail: { from, to: plan, reason: 'direct' } }, { transaction });
    if (from !== plan) await emitPlanChanged(ctx, org.id, from, plan, 'direct', transaction);
  });
  if (from !== plan) await announcePlanChange(ctx, { organizationId: org.id, from, to: plan, reason: 'direct' });
}

export async function setCancelAtPeriodEnd(ctx: AppContext, auth: OrgAuth, on: boolean): Promise<SubscriptionJson> {
  const org = auth.organization;
  const sub = await Subscription.findOne({ where: { organizationId: org.id } });
  if (!liveSubscription(sub)) throw new HttpError('conflict', `${org.name} has no paid subscription to ${on ? 'cancel' : 'keep'}.`);
  if (Boolean(sub.cancelAtPeriodEnd) === on) {
    throw new HttpError('conflict', on ? 'The subscription already ends at the end of its period.' : 'The subscription already renews.');
  }
  const payments = requirePayments(await getPayments(ctx));
  let updated: Stripe.Subscription;
  try {
    updated = await payments.client.subscriptions.update(sub.providerSubscriptionId, { cancel_at_period_end: on });
  } catch (err) {
    throw providerFailure(err);
  }
  await applySubscription(ctx, org.id, updated, providerSecond(ctx), 'subscription-updated', auth.user.id);
  await recordAudit(ctx, { organizationId: org.id, actorUserId: auth.user.id, action: on ? 'billing.cancel' : 'billing.resume', targetType: 'organization', targetId: org.id, detail: { plan: sub.plan } });
  const fresh = await Subscription.findOne({ where: { organizationId: org.id } });
  return serializeSubscription(fresh as Subscription);
}

export async function openPortal(ctx: AppContext, auth: OrgAuth, returnBase: string): Promise<{ url: string }> {
  const org = auth.organization;
  const sub = await Subscription.findOne({ where: { organizationId: org.id } });
  if (!sub?.providerCustomerId) throw new HttpError('conflict', `${org.name} has not paid for a plan yet, so there is no billing account to manage.`);
  const payments = requirePayments(await getPayments(ctx));
  try {
    const portal = await payments.client.billingPortal.sessions.create({ customer: sub.providerCustomerId, return_url: planPage(returnBase, org.id, 'portal=back') });
    return { url: portal.url };
  } catch (err) {
    throw providerFailure(err);
  }
}

// ---------------------------------------------------------------------------------------------
// Webhooks

/** Organization of a provider object: our metadata first, else the customer we stored. */
async function organizationFor(metadata: Record<string, string> | null | undefined, customer: unknown, transaction?: Transaction): Promise<string | null> {
  const fromMeta = metadata?.['organizationId'];
  if (fromMeta && (await Organization.findByPk(fromMeta, { attributes: ['id'], transaction }))) return fromMeta;
  const customerId = typeof customer === 'string' ? customer : (customer as { id?: string } | null)?.id;
  if (!customerId) return null;
  const sub = await Subscription.findOne({ where: { providerCustomerId: customerId }, transaction });
  return sub?.organizationId ?? null;
}

function periodEndOf(s: Stripe.Subscription): Date | null {
  const item = s.items?.data?.[0];
  return item?.current_period_end ? new Date(item.current_period_end * 1000) : null;
}

interface Applied {
  change: PlanChange | null;
}

/**
 * Writes the provider's subscription into ours and sets the organization's plan from it.
 * `eventAt` older than the newest event applied leaves everything as it is.
 */
async function applySubscriptionIn(
  ctx: AppContext,
  orgId: string,
  s: Stripe.Subscription,
  eventAt: Date,
  reason: string,
  actorUserId: string | null,
  transaction: Transaction,
): Promise<Applied> {
  const payments = ctx.services.payments;
  const org = await Organization.findByPk(orgId, { transaction });
  if (!org) return { change: null };
  let sub = await Subscription.findOne({ where: { organizationId: orgId }, transaction });
  if (sub?.providerEventAt && eventAt < new Date(sub.providerEventAt)) return { change: null };
  // A late word about an earlier subscription does not touch the one that replaced it.
  if (sub?.providerSubscriptionId && sub.providerSubscriptionId !== s.id && LIVE.has(sub.status) && !LIVE.has(s.status)) return { change: null };

  const priceId = s.items?.data?.[0]?.price?.id;
  const plan = payments?.planForPrice(priceId) ?? sub?.plan ?? org.plan;
  const customerId = typeof s.customer === 'string' ? s.customer : s.customer.id;
  const fields = {
    plan,
    status: s.status,
    providerCustomerId: customerId,
    providerSubscriptionId: s.id,
    currentPeriodEnd: periodEndOf(s),
    cancelAtPeriodEnd: Boolean(s.cancel_at_period_end),
    providerEventAt: eventAt,
  };
  if (sub) await sub.update(fields, { transaction });
  else sub = await Subscription.create({ id: nanoid(), organizationId: orgId, ...fields }, { transaction });

  let target: Plan = org.plan;
  if (s.status === 'active' || s.status === 'trialing') {
    target = plan;
    if (sub.graceUntil || sub.lapsedAt) await sub.update({ graceUntil: null, lapsedAt: null }, { transaction });
  } else if (s.status === 'past_due') {
    if (!sub.graceUntil) await sub.update({ graceUntil: new Date(now(ctx).getTime() + ctx.config.PAYMENTS_GRACE_DAYS * 86_400_000) }, { transaction });
    target = sub.lapsedAt ? 'starter' : plan;
  } else if (ENDED.has(s.status)) {
    target = 'starter';
    await sub.update({ graceUntil: null }, { transaction });
  }
  return { change: await setPlanIn(ctx, org, target, reason, actorUserId, transaction) };
}

async function setPlanIn(ctx: AppContext, org: Organization, to: Plan, reason: string, actorUserId: string | null, transaction: Transaction): Promise<PlanChange | null> {
  const from = org.plan;
  if (from === to) return null;
  await org.update({ plan: to }, { transaction });
  await recordAudit(ctx, { organizationId: org.id, actorUserId, action: 'billing.plan', targetType: 'organization', targetId: org.id, detail: { from, to, reason } }, { transaction });
  await emitPlanChanged(ctx, org.id, from, to, reason, transaction);
  return { organizationId: org.id, from, to, reason };
}

/** Webhooks out: `plan.changed`, written in the transaction that changes the plan. */
async function emitPlanChanged(ctx: AppContext, organizationId: string, from: Plan, to: Plan, reason: string, transaction: Transaction): Promise<void> {
  const plan = planOf(to);
  await emitEvent(ctx, { organizationId, type: 'plan.changed', data: { from, to, reason, monthlyRequests: plan.monthlyRequests } }, { transaction });
}

async function applySubscription(ctx: AppContext, orgId: string, s: Stripe.Subscription, eventAt: Date, reason: string, actorUserId: string | null): Promise<void> {
  const { change } = await writeTransaction(ctx.sequelize, (t) => applySubscriptionIn(ctx, orgId, s, eventAt, reason, actorUserId, t));
  if (change) await announcePlanChange(ctx, change);
}

async function upsertInvoice(orgId: string, inv: Stripe.Invoice, transaction: Transaction): Promise<void> {
  const existing = await Invoice.findByPk(inv.id as string, { transaction });
  // Paid is final: a late "failed" about a paid invoice does not reopen it.
  const status = existing?.status === 'paid' ? 'paid' : (inv.status ?? 'open');
  const fields = {
    organizationId: orgId,
    number: inv.number ?? null,
    status,
    amountDue: inv.amount_due,
    amountPaid: status === 'paid' ? Math.max(inv.amount_paid, existing?.amountPaid ?? 0) : inv.amount_paid,
    currency: inv.currency,
    periodStart: inv.period_start ? new Date(inv.period_start * 1000) : null,
    periodEnd: inv.period_end ? new Date(inv.period_end * 1000) : null,
    hostedUrl: inv.hosted_invoice_url ?? null,
    pdfUrl: inv.invoice_pdf ?? null,
    issuedAt: new Date(inv.created * 1000),
  };
  if (existing) await existing.update(fields, { transaction });
  else await Invoice.create({ id: inv.id as string, ...fields }, { transaction });
}

export interface WebhookOutcome {
  eventId: string;
  type: string;
  duplicate: boolean;
}

export type PaymentNoticeListener = (notice: { organizationId: string; kind: 'payment-failed'; invoice: InvoiceJson; graceUntil: string | null }) => void | Promise<void>;

declare module '../context.ts' {
  interface AppServices {
    /** Told after a payment failed (notices e-mail the owner). */
    paymentFailedListeners?: PaymentNoticeListener[];
  }
}

export function onPaymentFailed(ctx: AppContext, listener: PaymentNoticeListener): void {
  (ctx.services.paymentFailedListeners ??= []).push(listener);
}

class AlreadyHandled extends Error {}

/** Verifies and handles one webhook delivery. Throws HttpError 400 for a forged or stale signature. */
export async function handleWebhook(ctx: AppContext, rawBody: Buffer, signature: string | undefined): Promise<WebhookOutcome> {
  const payments = await getPayments(ctx);
  if (!payments) throw new HttpError('unavailable', 'No payment provider is configured on this server.');
  if (!signature) throw new HttpError('signature-invalid', 'The webhook carries no signature header; it was not handled.');
  let event: Stripe.Event;
  try {
    // Default tolerance: signatures older than five minutes are refused (replays of old captures).
    event = payments.client.webhooks.constructEvent(rawBody, signature, payments.webhookSecret);
  } catch (err) {
    throw new HttpError('signature-invalid', `The webhook signature does not match, or is too old; it was not handled (${(err as Error).message.split('\n')[0]}).`);
  }
  const outcome: WebhookOutcome = { eventId: event.id, type: event.type, duplicate: false };
  if (await PaymentEvent.findByPk(event.id, { attributes: ['id'] })) return { ...outcome, duplicate: true };
  const eventAt = new Date(event.created * 1000);

  // What needs the provider is fetched before the transaction (no lock held over the network).
  let subscription: Stripe.Subscription | null = null;
  let orgHint: { metadata?: Record<string, string> | null; customer?: unknown } = {};
  let invoice: Stripe.Invoice | null = null;
  let reason = 'subscription-updated';
  switch (event.type) {
    case 'checkout.session.completed': {
      const session = event.data.object;
      orgHint = { metadata: session.metadata, customer: session.customer };
      const subId = typeof session.subscription === 'string' ? session.subscription : session.subscription?.id;
      if (subId) subscription = await payments.client.subscriptions.retrieve(subId);
      reason = 'checkout';
      break;
    }
    case 'customer.subscription.created':
    case 'customer.subscription.updated':
    case 'customer.subscription.deleted':
      subscription = event.data.object;
      orgHint = { metadata: subscription.metadata, customer: subscription.customer };
      reason = event.type === 'customer.subscription.deleted' ? 'subscription-deleted' : event.type === 'customer.subscription.created' ? 'checkout' : 'subscription-updated';
      break;
    case 'invoice.paid':
    case 'invoice.payment_failed':
      invoice = event.data.object;
      orgHint = { metadata: invoice.parent?.subscription_details?.metadata ?? null, customer: invoice.customer };
      break;
    default:
      break;
  }

  let change: PlanChange | null = null;
  let failedNotice: Parameters<PaymentNoticeListener>[0] | null = null;
  try {
    await writeTransaction(ctx.sequelize, async (transaction) => {
      const orgId = await organizationFor(orgHint.metadata, orgHint.customer, transaction);
      try {
        await PaymentEvent.create({ id: event.id, type: event.type, organizationId: orgId }, { transaction });
      } catch (err) {
        if (err instanceof UniqueConstraintError) throw new AlreadyHandled();
        throw err;
      }
      if (!orgId) {
        ctx.logger.warn({ eventId: event.id, type: event.type }, 'payment event names no organization of ours; recorded and ignored');
        return;
      }
      if (subscription) {
        change = (await applySubscriptionIn(ctx, orgId, subscription, eventAt, reason, null, transaction)).change;
      } else if (invoice) {
        await upsertInvoice(orgId, invoice, transaction);
        const sub = await Subscription.findOne({ where: { organizationId: orgId }, transaction });
        const org = await Organization.findByPk(orgId, { transaction });
        if (!sub || !org) return;
        const newer = !sub.providerEventAt || eventAt >= new Date(sub.providerEventAt);
        if (event.type === 'invoice.paid') {
          if (newer && (sub.graceUntil || sub.lapsedAt || sub.status === 'past_due')) {
            await sub.update({ status: 'active', graceUntil: null, lapsedAt: null, providerEventAt: eventAt }, { transaction });
            change = await setPlanIn(ctx, org, sub.plan, 'payment-recovered', null, transaction);
          }
        } else if (newer && sub.status !== 'canceled') {
          const graceUntil = sub.graceUntil ?? new Date(now(ctx).getTime() + ctx.config.PAYMENTS_GRACE_DAYS * 86_400_000);
          await sub.update({ status: 'past_due', graceUntil, providerEventAt: eventAt }, { transaction });
          const saved = await Invoice.findByPk(invoice.id as string, { transaction });
          if (saved) failedNotice = { organizationId: orgId, kind: 'payment-failed', invoice: serializeInvoice(saved), graceUntil: graceUntil.toISOString() };
        }
      }
    });
  } catch (err) {
    if (err instanceof AlreadyHandled) return { ...outcome, duplicate: true };
    throw err;
  }
  if (change) await announcePlanChange(ctx, change);
  if (failedNotice) {
    for (const listener of ctx.services.paymentFailedListeners ?? []) {
      try {
        await listener(failedNotice);
      } catch (err) {
        ctx.logger.error({ err }, 'payment-failed listener failed');
      }
    }
  }
  return outcome;
}

/** Past-due subscriptions whose grace ended: the organization falls back to Starter. Returns how many. */
export async function sweepGrace(ctx: AppContext, at: Date = now(ctx)): Promise<number> {
  const due = await Subscription.findAll({ where: { status: 'past_due', lapsedAt: null, graceUntil: { [Op.lte]: at } } });
  let n = 0;
  for (const sub of due) {
    const change = await writeTransaction(ctx.sequelize, async (transaction) => {
      const fresh = await Subscription.findByPk(sub.id, { transaction });
      if (!fresh || fresh.status !== 'past_due' || fresh.lapsedAt || !fresh.graceUntil || new Date(fresh.graceUntil) > at) return null;
      await fresh.update({ lapsedAt: at }, { transaction });
      const org = await Organization.findByPk(fresh.organizationId, { transaction });
      return org ? setPlanIn(ctx, org, 'starter', 'grace-ended', null, transaction) : null;
    });
    if (change) {
      n += 1;
      await announcePlanChange(ctx, change);
    }
  }
  return n;
}
