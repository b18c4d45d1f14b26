/** Usage and the activity log (docs/console-api.md "Usage, plan, activity"); plan and billing are in billing.ts. */
import { z } from 'zod';
import type { AppContext } from '../../context.ts';
import { HttpError } from '../../http/problem.ts';
import { orgAuth } from '../../http/roles.ts';
import { parseQuery } from '../../http/validate.ts';
import { listActivity } from '../../services/audit.ts';
import { getQuotaService } from '../../services/quota.ts';
import { getUsageRecorder, utcDay } from '../../services/usage.ts';
import type { UsageReport as UsageAnswer } from '@nadirline/shared/contract';
import { ApiRoutes } from './routes.ts';

/** Longest usage window one request may ask for, in days. */
export const USAGE_MAX_DAYS = 366;
/** Default usage window: the last 30 UTC days, today included. */
export const USAGE_DEFAULT_DAYS = 30;

const day = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, { message: 'Use a UTC day like 2025-03-14.' }).refine((d) => !Number.isNaN(Date.parse(`${d}T00:00:00Z`)) && utcDay(Date.parse(`${d}T00:00:00Z`)) === d, { message: 'Not a calendar day.' });
const UsageQuery = z.object({ from: day.optional(), to: day.optional() });
const ActivityQuery = z.object({
  before: z.coerce.number().int().positive().optional(),
  limit: z.coerce.number().int().min(1).max(200).default(50),
});

function range(q: z.infer<typeof UsageQuery>): { from: string; to: string } {
  const to = q.to ?? utcDay(Date.now());
  const from = q.from ?? utcDay(Date.parse(`${to}T00:00:00Z`) - (USAGE_DEFAULT_DAYS - 1) * 86_400_000);
  if (from > to) throw new HttpError('validation-failed', '`from` is after `to`.', { errors: [{ where: 'from', field: 'from', message: 'after to' }] });
  const days = (Date.parse(`${to}T00:00:00Z`) - Date.parse(`${from}T00:00:00Z`)) / 86_400_000 + 1;
  if (days > USAGE_MAX_DAYS) {
    throw new HttpError('validation-failed', `Ask for at most ${USAGE_MAX_DAYS} days at once (this asks for ${days}).`, { errors: [{ where: 'from', field: 'from', message: `at most ${USAGE_MAX_DAYS} days` }] });
  }
  return { from, to };
}

export function usageRoutes(ctx: AppContext): ApiRoutes {
  const r = new ApiRoutes();
  const usage = getUsageRecorder(ctx);
  const quota = getQuotaService(ctx);

  r.get('/orgs/:org/usage', 'usage.read', async (req, res) => {
    const orgId = orgAuth(res).organization.id;
    const window = range(parseQuery(UsageQuery, req));
    const [report, status] = await Promise.all([usage.report(orgId, window), quota.status(orgId)]);
    const answer: UsageAnswer = { from: window.from, to: window.to, ...report, quota: status };
    res.json(answer);
  });

  r.get('/orgs/:org/usage.csv', 'usage.read', async (req, res) => {
    const orgId = orgAuth(res).organization.id;
    const window = range(parseQuery(UsageQuery, req));
    const csv = await usage.csv(orgId, window);
    res.attachment(`nadirline-usage-${window.from}-to-${window.to}.csv`);
    res.type('text/csv; charset=utf-8');
    res.send(csv);
  });

  r.get('/orgs/:org/activity', 'activity.read', async (req, res) => {
    const q = parseQuery(ActivityQuery, req);
    const events = await listActivity(ctx, orgAuth(res).organization.id, { before: q.before, limit: q.limit });
    res.json({ events });
  });

  return r;
}
