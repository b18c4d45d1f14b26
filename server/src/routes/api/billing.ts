/** Plan and billing (docs/console-api.md "Usage, plan, activity"): the owner's side of payments. */
import type { Request } from 'express';
import { z } from 'zod';
import type { AppContext } from '../../context.ts';
import { orgAuth } from '../../http/roles.ts';
import { parseBody } from '../../http/validate.ts';
import { PLANS } from '../../models/index.ts';
import { billingOverview, openPortal, setCancelAtPeriodEnd, startCheckout } from '../../services/billing.ts';
import { ApiRoutes } from './routes.ts';

const CheckoutBody = z.object({ plan: z.enum(PLANS, { message: `Choose one of: ${PLANS.join(', ')}.` }) });

/**
 * Where the provider sends the owner back: PUBLIC_URL when set, else this request's own origin
 * (a development server reached as 127.0.0.1 or localhost keeps its session cookie).
 */
function returnBase(ctx: AppContext, req: Request): string {
  return ctx.config.PUBLIC_URL ? ctx.config.publicUrl : `${req.protocol}://${req.get('host') ?? 'localhost'}`;
}

export function billingRoutes(ctx: AppContext): ApiRoutes {
  const r = new ApiRoutes();

  r.get('/orgs/:org/billing', 'billing.read', async (_req, res) => {
    res.json(await billingOverview(ctx, orgAuth(res).organization));
  });

  r.post('/orgs/:org/billing/checkout', 'billing.manage', async (req, res) => {
    const { plan } = parseBody(CheckoutBody, req);
    res.json(await startCheckout(ctx, orgAuth(res), plan, returnBase(ctx, req)));
  });

  r.post('/orgs/:org/billing/portal', 'billing.manage', async (req, res) => {
    res.json(await openPortal(ctx, orgAuth(res), returnBase(ctx, req)));
  });

  r.post('/orgs/:org/billing/cancel', 'billing.manage', async (_req, res) => {
    res.json({ subscription: await setCancelAtPeriodEnd(ctx, orgAuth(res), true) });
  });

  r.post('/orgs/:org/billing/resume', 'billing.manage', async (_req, res) => {
    res.json({ subscription: await setCancelAtPeriodEnd(ctx, orgAuth(res), false) });
  });

  return r;
}
