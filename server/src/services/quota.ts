/**
 * Plans and the monthly request quota.
 *
 * Exported API:
 *   PLAN_CATALOG: [{ id, name, monthlyRequests, defaultRateLimitPerMin, priceMonthly }]
 *   planOf(planId) -> PlanInfo                 (unknown ids fall back to Starter)
 *   class QuotaService (ctx.services.quota):
 *     usedThisMonth(orgId, now?) -> Promise<number>   (DB month total, cached, + this process's counts not in it)
 *     check(orgId, now?) -> Promise<QuotaStatus>      (throws HttpError quota-exceeded when spent)
 *     status(orgId, now?) -> Promise<QuotaStatus>     ({ plan, limit, usedThisMonth, resetsAt } for the console)
 *     invalidatePlan(orgId)                           (call after a plan change)
 *   monthStart(now) / nextMonthStart(now) -> Date (UTC)
 *
 * The month total comes from UsageDaily once per QUOTA_CACHE_TTL_MS per organization; what this
 * process counted and had not flushed at that read is added from the usage recorder. With
 * REDIS_URL the month total is the organization's counter in Redis (usage.ts countShared), which
 * every process increments, so the quota holds across processes.
 *
 * Plans are cached per process for QUOTA_CACHE_TTL_MS; a plan change is published on the
 * invalidation channel (services/shared.ts), so every process drops its copy at once.
 */
import { Op } from 'sequelize';
import type { AppContext } from '../context.ts';
import { HttpError } from '../http/problem.ts';
import { Organization, UsageDaily, type Plan } from '../models/index.ts';
import { invalidationBus } from './shared.ts';
import { getUsageRecorder, utcDay, type UsageRecorder } from './usage.ts';

export interface PlanInfo {
  id: Plan;
  name: string;
  /** Requests to /v1 per calendar month (UTC), all keys of the organization together. */
  monthlyRequests: number;
  /** Rate limit given to new keys when none is asked for, requests per minute per key. */
  defaultRateLimitPerMin: number;
  /** Price per month in euro (0 = free). */
  priceMonthly: number;
}

/** Nadirline's plans (figures are Nadirline's own). */
export const PLAN_CATALOG: readonly PlanInfo[] = [
  { id: 'starter', name: 'Starter', monthlyRequests: 100_000, defaultRateLimitPerMin: 120, priceMonthly: 0 },
  { id: 'mission', name: 'Mission', monthlyRequests: 2_000_000, defaultRateLimitPerMin: 600, priceMonthly: 39 },
  { id: 'constellation', name: 'Constellation', monthlyRequests: 20_000_000, defaultRateLimitPerMin: 3_000, priceMonthly: 240 },
];

export function planOf(plan: string | null | undefined): PlanInfo {
  return PLAN_CATALOG.find((p) => p.id === plan) ?? (PLAN_CATALOG[0] as PlanInfo);
}

export const QUOTA_CACHE_TTL_MS = 60_000;

export function monthStart(now: Date): Date {
  return new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), 1));
}
export function nextMonthStart(now: Date): Date {
  return new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth() + 1, 1));
}
/** YYYY-MM of a date, UTC. */
export function monthKey(now: Date): string {
  return utcDay(now).slice(0, 7);
}

export interface QuotaStatus {
  plan: Plan;
  limit: number;
  usedThisMonth: number;
  resetsAt: string;
}

interface MonthCache {
  month: string;
  dbTotal: number;
  /** What this process had flushed for this org/month when dbTotal was read. */
  flushedAtRead: number;
  at: number;
}

export class QuotaService {
  private readonly months = new Map<string, MonthCache>();
  private readonly plans = new Map<string, { plan: Plan; at: number }>();
  private readonly pendingReads = new Map<string, Promise<MonthCache>>();

  constructor(
    private readonly ctx: AppContext,
    private readonly usage: UsageRecorder,
  ) {
    invalidationBus(ctx).on((msg) => {
      if (msg.t === 'plan' || msg.t === 'org') this.forget(msg.orgId);
      else if (msg.t === 'all') {
        this.plans.clear();
        this.months.clear();
      }
    });
  }

  /** The plan of an organization when cached (no wait), else undefined. */
  cachedPlan(orgId: string): Plan | undefined {
    const hit = this.plans.get(orgId);
    return hit && Date.now() - hit.at < QUOTA_CACHE_TTL_MS ? hit.plan : undefined;
  }

  async planFor(orgId: string): Promise<Plan> {
    const hit = this.plans.get(orgId);
    if (hit && Date.now() - hit.at < QUOTA_CACHE_TTL_MS) return hit.plan;
    const org = await Organization.findByPk(orgId, { attributes: ['id', 'plan'] });
    const plan = planOf(org?.plan).id;
    this.plans.set(orgId, { plan, at: Date.now() });
    return plan;
  }

  /** After a plan change: this process drops the cached plan at once, the others when the message reaches them. */
  invalidatePlan(orgId: string): void {
    this.forget(orgId);
    invalidationBus(this.ctx).publish({ t: 'plan', orgId });
  }

  /**
   * Read the month total from the database again (after usage_daily was restored or corrected by
   * hand): at once in memory mode; with Redis, the shared month counter is started again from it.
   */
  async reloadMonth(orgId: string, now: Date = new Date()): Promise<void> {
    this.months.delete(orgId);
    if (this.usage.shared) await this.usage.resyncMonth(orgId, monthKey(now));
  }

  private forget(orgId: string): void {
    this.plans.delete(orgId);
    this.months.delete(orgId);
  }

  async usedThisMonth(orgId: string, now: Date = new Date()): Promise<number> {
    const month = monthKey(now);
    if (this.usage.shared) return this.usage.sharedMonthCount(orgId, month);
    let c = this.months.get(orgId);
    if (!c || c.month !== month || Date.now() - c.at >= QUOTA_CACHE_TTL_MS) {
      c = await this.readMonth(orgId, now);
    }
    return c.dbTotal + this.usage.processCount(orgId, month) - c.flushedAtRead;
  }

  async status(orgId: string, now: Date = new Date()): Promise<QuotaStatus> {
    const plan = planOf(await this.planFor(orgId));
    return {
      plan: plan.id,
      limit: plan.monthlyRequests,
      usedThisMonth: await this.usedThisMonth(orgId, now),
      resetsAt: nextMonthStart(now).toISOString(),
    };
  }

  /**
   * Fast path for the request path: true when under quota, false when spent, null when the plan
   * or the month total is not cached (then call check()). No promise, no allocation.
   */
  underQuota(orgId: string, nowMs: number): boolean | null {
    const plan = this.plans.get(orgId);
    const c = this.months.get(orgId);
    const t = Date.now();
    if (!plan || t - plan.at >= QUOTA_CACHE_TTL_MS || !c || t - c.at >= QUOTA_CACHE_TTL_MS) return null;
    const month = monthKey(new Date(nowMs));
    if (c.month !== month) return null;
    return c.dbTotal + this.usage.processCount(orgId, month) - c.flushedAtRead < planOf(plan.plan).monthlyRequests;
  }

  /** Throws quota-exceeded when the organization has used its month; returns the status otherwise. */
  async check(orgId: string, now: Date = new Date()): Promise<QuotaStatus> {
    const s = await this.status(orgId, now);
    if (s.usedThisMonth >= s.limit) throw quotaExceeded(s, now);
    return s;
  }

  /**
   * Redis mode: count the request against the month (atomically across processes) or throw
   * quota-exceeded when the month is spent.
   */
  async countOrRefuse(orgId: string, keyId: string, endpoint: string, nowMs: number): Promise<void> {
    const plan = planOf(this.cachedPlan(orgId) ?? (await this.planFor(orgId)));
    let r: { counted: boolean; used: number };
    try {
      r = await this.usage.countShared(orgId, keyId, endpoint, nowMs, plan.monthlyRequests);
    } catch (err) {
      this.ctx.logger.error({ err }, 'could not count a request in Redis');
      // Nothing is answered that could not be counted.
      throw new HttpError('unavailable', 'Nadirline cannot count this request right now (its shared counter store does not answer). Try again in a few seconds.', {}, { 'Retry-After': '5' });
    }
    if (!r.counted) {
      const now = new Date(nowMs);
      throw quotaExceeded({ plan: plan.id, limit: plan.monthlyRequests, usedThisMonth: r.used, resetsAt: nextMonthStart(now).toISOString() }, now);
    }
  }

  private readMonth(orgId: string, now: Date): Promise<MonthCache> {
    const month = monthKey(now);
    const key = `${orgId}\u0000${month}`;
    let p = this.pendingReads.get(key);
    if (!p) {
      const from = monthStart(now).toISOString().slice(0, 10);
      const to = new Date(nextMonthStart(now).getTime() - 1).toISOString().slice(0, 10);
      p = (async () => {
        const total = (await UsageDaily.sum('count', { where: { organizationId: orgId, day: { [Op.between]: [from, to] } } })) ?? 0;
        // used = DB total at the read + everything this process counted - what it had flushed
        // by then. A flush finishing during the read may be counted once too few or too many
        // until the next read (QUOTA_CACHE_TTL_MS): good enough for a monthly quota.
        const c: MonthCache = { month, dbTotal: Number(total), flushedAtRead: this.usage.flushedCount(orgId, month), at: Date.now() };
        this.months.set(orgId, c);
        return c;
      })().finally(() => this.pendingReads.delete(key));
      this.pendingReads.set(key, p);
    }
    return p;
  }
}

/** The quota-exceeded problem for a spent month. */
function quotaExceeded(s: QuotaStatus, now: Date): HttpError {
  const retryAfter = Math.max(1, Math.ceil((Date.parse(s.resetsAt) - now.getTime()) / 1000));
  return new HttpError(
    'quota-exceeded',
    `This organization has used all ${s.limit.toLocaleString('en')} requests of its ${planOf(s.plan).name} plan for this month. The quota resets on ${s.resetsAt}; a larger plan raises it at once.`,
    { limit: s.limit, used: s.usedThisMonth, resetsAt: s.resetsAt, plan: s.plan },
    { 'Retry-After': String(retryAfter) },
  );
}

declare module '../context.ts' {
  interface AppServices {
    /** Set by getQuotaService (app.ts calls it at start-up). */
    quota?: QuotaService;
  }
}

/** The app's QuotaService, created on first use. */
export function getQuotaService(ctx: AppContext): QuotaService {
  ctx.services.quota ??= new QuotaService(ctx, getUsageRecorder(ctx));
  return ctx.services.quota;
}
