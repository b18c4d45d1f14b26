/**
 * The demo's payments (invented, like the rest of the demo): the Ostwick Science Centre pays for
 * Mission through the built-in fake provider and has one paid invoice; its owner also owns the
 * Brackenfell Astronomy Club on the free Starter plan, to try an upgrade through the fake
 * checkout page. The fake keeps nothing across restarts, so every start puts Ostwick's customer
 * and subscription back into it under the ids Nadirline stored. Without the fake (another
 * provider configured) only the Starter organization is made.
 *
 *   seedDemoBilling(ctx, owner)
 */
import { nanoid } from 'nanoid';
import type { AppContext } from '../context.ts';
import { Invoice, Membership, Organization, Subscription, type User } from '../models/index.ts';

export const DEMO_PAID_ORG_ID = 'org_demo_ostwick';
export const DEMO_STARTER_ORG_ID = 'org_demo_brackenfell';
export const DEMO_STARTER_ORG_NAME = 'Brackenfell Astronomy Club';

export async function seedDemoBilling(ctx: AppContext, owner: User | null): Promise<void> {
  if (!owner) return;
  if (!(await Organization.findByPk(DEMO_STARTER_ORG_ID))) {
    await Organization.create({ id: DEMO_STARTER_ORG_ID, name: DEMO_STARTER_ORG_NAME, plan: 'starter' });
  }
  if (!(await Membership.findOne({ where: { organizationId: DEMO_STARTER_ORG_ID, userId: owner.id } }))) {
    await Membership.create({ id: nanoid(), organizationId: DEMO_STARTER_ORG_ID, userId: owner.id, role: 'owner' });
  }

  const payments = ctx.services.payments;
  const fake = payments?.fake;
  const priceId = payments?.priceFor('mission');
  if (!fake || !priceId) return;
  const org = await Organization.findByPk(DEMO_PAID_ORG_ID);
  if (!org) return;
  const metadata = { organizationId: org.id, plan: 'mission' };
  const sub = await Subscription.findOne({ where: { organizationId: org.id } });
  if (sub?.providerCustomerId && sub.providerSubscriptionId) {
    fake.restoreSubscription({
      customerId: sub.providerCustomerId,
      subscriptionId: sub.providerSubscriptionId,
      priceId: payments.priceFor(sub.plan) ?? priceId,
      email: owner.email,
      name: org.name,
      metadata,
      periodEnd: Math.floor(new Date(sub.currentPeriodEnd ?? Date.now() + 30 * 86_400_000).getTime() / 1000),
      cancelAtPeriodEnd: Boolean(sub.cancelAtPeriodEnd),
    });
    return;
  }
  const made = fake.createPaidSubscription({ priceId, email: owner.email, name: org.name, metadata, events: false });
  const item = (made.subscription['items'] as { data: Array<Record<string, unknown>> }).data[0] as Record<string, number>;
  await ctx.sequelize.transaction(async (transaction) => {
    await org.update({ plan: 'mission' }, { transaction });
    await Subscription.create(
      {
        id: nanoid(),
        organizationId: org.id,
        plan: 'mission',
        status: 'active',
        providerCustomerId: made.customer.id,
        providerSubscriptionId: made.subscription.id,
        currentPeriodEnd: new Date((item['current_period_end'] as number) * 1000),
        cancelAtPeriodEnd: false,
        providerEventAt: new Date(Math.floor(Date.now() / 1000) * 1000),
      },
      { transaction },
    );
    const inv = made.invoice;
    await Invoice.create(
      {
        id: inv.id,
        organizationId: org.id,
        number: inv['number'] as string,
        status: 'paid',
        amountDue: inv['amount_due'] as number,
        amountPaid: inv['amount_paid'] as number,
        currency: inv['currency'] as string,
        periodStart: new Date((inv['period_start'] as number) * 1000),
        periodEnd: new Date((inv['period_end'] as number) * 1000),
        hostedUrl: inv['hosted_invoice_url'] as string,
        pdfUrl: inv['invoice_pdf'] as string,
        issuedAt: new Date((inv['created'] as number) * 1000),
      },
      { transaction },
    );
  });
}
