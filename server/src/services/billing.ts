/**
 * Plan and billing for the console. Plans and their quotas come from services/quota.ts.
 *
 *   billingOverview(ctx, org) -> { plan, plans: [{ id, name, monthlyRequests, priceMonthly, currency }], subscription }
 *   PLAN_CURRENCY: the ISO 4217 code every plan price is in
 *   startCheckout(ctx, auth, plan) -> { url }
 *
 * No payment provider is wired in yet (PAYMENTS_API_BASE unset in development, demo and tests):
 * then a checkout changes the plan at once, records an active Subscription without provider ids,
 * and answers the console's plan page as `url`. When a provider is configured and its client is
 * not written yet, checkout answers 503 `unavailable` rather than pretending.
 */
import { nanoid } from 'nanoid';
import type { AppContext } from '../context.ts';
import { HttpError } from '../http/problem.ts';
import type { OrgAuth } from '../http/roles.ts';
import { Subscription, type Organization, type Plan } from '../models/index.ts';
import { recordAudit } from './audit.ts';
import { PLAN_CATALOG, getQuotaService, planOf } from './quota.ts';
import type { Billing } from '@nadirline/shared/contract';

/** Plan prices (services/quota.ts PLAN_CATALOG priceMonthly) are in euros. */
export const PLAN_CURRENCY = 'EUR';

export type SubscriptionJson = NonNullable<Billing['subscription']>;

/** GET /api/orgs/:org/billing: the contract's Billing. */
export type BillingOverview = Billing;

export async function billingOverview(_ctx: AppContext, org: Organization): Promise<BillingOverview> {
  const sub = await Subscription.findOne({ where: { organizationId: org.id } });
  return {
    plan: org.plan,
    plans: PLAN_CATALOG.map((p) => ({ id: p.id, name: p.name, monthlyRequests: p.monthlyRequests, priceMonthly: p.priceMonthly, currency: PLAN_CURRENCY })),
    subscription: sub
      ? {
          plan: sub.plan,
          status: sub.status,
          currentPeriodEnd: sub.currentPeriodEnd ? new Date(sub.currentPeriodEnd).toISOString() : null,
          provider: sub.providerSubscriptionId ? 'external' : 'none',
        }
      : null,
  };
}

export async function startCheckout(ctx: AppContext, auth: OrgAuth, plan: Plan): Promise<{ url: string }> {
  const org = auth.organization;
  if (org.plan === plan) throw new HttpError('conflict', `${org.name} is already on the ${planOf(plan).name} plan.`);
  if (ctx.config.PAYMENTS_API_BASE) {
    throw new HttpError('unavailable', 'Paid checkout through the payment provider is not available on this server yet.');
  }
  const from = org.plan;
  await ctx.sequelize.transaction(async (transaction) => {
    org.plan = plan;
    await org.save({ transaction });
    const sub = await Subscription.findOne({ where: { organizationId: org.id }, transaction });
    if (sub) await sub.update({ plan, status: 'active', currentPeriodEnd: null }, { transaction });
    else {
      await Subscription.create(
        { id: nanoid(), organizationId: org.id, plan, status: 'active', providerCustomerId: null, providerSubscriptionId: null, currentPeriodEnd: null },
        { transaction },
      );
    }
    await recordAudit(ctx, { organizationId: org.id, actorUserId: auth.user.id, action: 'billing.plan', targetType: 'organization', targetId: org.id, detail: { from, to: plan, provider: 'none' } }, { transaction });
  });
  getQuotaService(ctx).invalidatePlan(org.id);
  return { url: `/o/${encodeURIComponent(org.id)}/plan?checkout=done` };
}
