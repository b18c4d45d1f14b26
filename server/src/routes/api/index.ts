/**
 * The console's own API, /api, behind a session cookie (contract: docs/console-api.md).
 * Order: security headers, no-store, session, CSRF check (non-GET), JSON body, then each route
 * as requireRole(action) + handlers. Route lists live beside their handlers (account.ts, orgs.ts, ...).
 */
import express, { Router } from 'express';
import type { AppContext } from '../../context.ts';
import { csrfProtection } from '../../http/csrf.ts';
import { refuseNulInJson } from '../../http/input-guards.ts';
import { ACCESS, requireRole, type Access, type Action } from '../../http/roles.ts';
import { securityHeaders } from '../../http/security.ts';
import { createSessionMiddleware } from '../../http/session.ts';
import { getMailService } from '../../services/mail.ts';
import { accountRoutes } from './account.ts';
import { billingRoutes } from './billing.ts';
import { embedRoutes } from './embeds.ts';
import { keyRoutes } from './keys.ts';
import { noticeRoutes } from './notices.ts';
import { orgRoutes } from './orgs.ts';
import { previewRoutes } from './preview.ts';
import type { ApiRoute } from './routes.ts';
import { satelliteRoutes } from './satellites.ts';
import { usageRoutes } from './usage.ts';
import { webhookRoutes } from './webhooks.ts';

declare module '../../context.ts' {
  interface AppServices {
    /** What createApiRouter mounted: method, path under /api, role-table action and who may call it. */
    apiRoutes?: Array<{ method: ApiRoute['method']; path: string; action: Action; access: Access }>;
  }
}

/** Every /api route with its action, in mounting order. */
export function buildApiRoutes(ctx: AppContext): ApiRoute[] {
  return [accountRoutes, orgRoutes, keyRoutes, satelliteRoutes, embedRoutes, usageRoutes, billingRoutes, noticeRoutes, webhookRoutes, previewRoutes].flatMap((routes) => routes(ctx).list);
}

export async function createApiRouter(ctx: AppContext): Promise<Router> {
  // Start the mail service (and the fake SMTP server when SMTP_URL is unset) with the app.
  await getMailService(ctx);
  const router = Router();
  router.use(securityHeaders(ctx.config, 'api'));
  router.use((_req, res, next) => {
    res.set('Cache-Control', 'no-store');
    next();
  });
  router.use(createSessionMiddleware(ctx));
  router.use(csrfProtection(ctx.config));
  router.use(express.json({ limit: '2mb' }));
  router.use(refuseNulInJson);
  const routes = buildApiRoutes(ctx);
  ctx.services.apiRoutes = routes.map((r) => ({ method: r.method, path: r.path, action: r.action, access: ACCESS[r.action] }));
  for (const route of routes) {
    router[route.method](route.path, requireRole(route.action), ...route.handlers);
  }
  return router;
}
