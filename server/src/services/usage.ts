/**
 * Usage counting: every keyed /v1 request is counted per organization, key, route template and
 * UTC day, in memory; the counts are added to UsageDaily every USAGE_FLUSH_MS and on close.
 * Nothing on the request path writes to the database.
 *
 * Exported API (ctx.services.usage is a UsageRecorder):
 *   record(orgId, keyId, endpoint, at?)          endpoint = route template, e.g. "GET /v1/satellites/{id}/track"
 *   flush() -> Promise<void>                     (runs by itself; call it in tests to settle counts)
 *   processCount(orgId, 'YYYY-MM') / flushedCount(orgId, 'YYYY-MM') -> number   (for the quota)
 *   report(orgId, { from, to }, keyNames?) -> Promise<UsageReport>   (the console's usage answer minus quota)
 *   csv(orgId, { from, to }) -> Promise<string>  (day,key,endpoint,count)
 *
 * The upsert is portable (SQLite and PostgreSQL): findOrCreate then increment, in one transaction
 * per flush; counts of a failed flush go back into memory for the next one.
 */
import { Op } from 'sequelize';
import type { AppContext } from '../context.ts';
import { ApiKey, UsageDaily } from '../models/index.ts';
import type { UsageReport as UsageAnswer } from '@nadirline/shared/contract';

const SEP = '\u0000';

export type UsageRow = UsageAnswer['rows'][number];

/** The counts of GET /api/orgs/:org/usage (the route adds the window and the quota). */
export type UsageReport = Omit<UsageAnswer, 'from' | 'to' | 'quota'>;

let dayCache = { index: Number.NaN, text: '' };
/** UTC day YYYY-MM-DD of a time (the last answer is kept: the request path asks many times a day). */
export function utcDay(at: Date | number): string {
  const ms = typeof at === 'number' ? at : at.getTime();
  const index = Math.floor(ms / 86_400_000);
  if (index !== dayCache.index) dayCache = { index, text: new Date(index * 86_400_000).toISOString().slice(0, 10) };
  return dayCache.text;
}

/** Every UTC day from `from` to `to` inclusive (YYYY-MM-DD). */
export function daysBetween(from: string, to: string): string[] {
  const out: string[] = [];
  const end = Date.parse(`${to}T00:00:00Z`);
  for (let t = Date.parse(`${from}T00:00:00Z`); t <= end && out.length < 3700; t += 86_400_000) out.push(utcDay(t));
  return out;
}

export class UsageRecorder {
  /** org SEP key SEP endpoint SEP day -> count not yet written. */
  private pending = new Map<string, number>();
  /** org SEP YYYY-MM -> everything counted by this process. */
  private readonly counted = new Map<string, number>();
  /** org SEP YYYY-MM -> everything this process has written. */
  private readonly flushed = new Map<string, number>();
  private flushing: Promise<void> | undefined;
  private timer: NodeJS.Timeout | undefined;

  constructor(private readonly ctx: AppContext) {
    this.timer = setInterval(() => void this.flush(), ctx.config.USAGE_FLUSH_MS);
    this.timer.unref();
    ctx.onClose(async () => {
      clearInterval(this.timer);
      this.timer = undefined;
      await this.flush();
    });
  }

  record(orgId: string, keyId: string, endpoint: string, at: Date | number = Date.now()): void {
    const day = utcDay(at);
    const k = `${orgId}${SEP}${keyId}${SEP}${endpoint}${SEP}${day}`;
    this.pending.set(k, (this.pending.get(k) ?? 0) + 1);
    const m = `${orgId}${SEP}${day.slice(0, 7)}`;
    this.counted.set(m, (this.counted.get(m) ?? 0) + 1);
  }

  processCount(orgId: string, month: string): number {
    return this.counted.get(`${orgId}${SEP}${month}`) ?? 0;
  }

  flushedCount(orgId: string, month: string): number {
    return this.flushed.get(`${orgId}${SEP}${month}`) ?? 0;
  }

  /** Counts not yet written, as rows (for live reports). */
  pendingRows(orgId: string): UsageRow[] {
    const rows: UsageRow[] = [];
    for (const [k, count] of this.pending) {
      const [o, apiKeyId, endpoint, day] = k.split(SEP) as [string, string, string, string];
      if (o === orgId) rows.push({ day, apiKeyId, endpoint, count });
    }
    return rows;
  }

  /** Write pending counts. Concurrent calls share one flush and then run once more. */
  async flush(): Promise<void> {
    while (this.flushing) await this.flushing;
    if (this.pending.size === 0) return;
    this.flushing = this.flushOnce().finally(() => {
      this.flushing = undefined;
    });
    await this.flushing;
  }

  private async flushOnce(): Promise<void> {
    const batch = this.pending;
    this.pending = new Map();
    try {
      await this.ctx.sequelize.transaction(async (transaction) => {
        for (const [k, n] of batch) {
          const [organizationId, apiKeyId, endpoint, day] = k.split(SEP) as [string, string, string, string];
          const [row, created] = await UsageDaily.findOrCreate({
            where: { organizationId, apiKeyId, endpoint, day },
            defaults: { organizationId, apiKeyId, endpoint, day, count: n },
            transaction,
          });
          if (!created) await row.increment('count', { by: n, transaction });
        }
      });
      for (const [k, n] of batch) {
        const parts = k.split(SEP);
        const m = `${parts[0]}${SEP}${(parts[3] ?? '').slice(0, 7)}`;
        this.flushed.set(m, (this.flushed.get(m) ?? 0) + n);
      }
    } catch (err) {
      for (const [k, n] of batch) this.pending.set(k, (this.pending.get(k) ?? 0) + n);
      this.ctx.logger.error({ err }, 'could not write usage counters; they will be retried');
    }
  }

  /** Usage rows of an organization between two UTC days (inclusive), unflushed counts included. */
  async rows(orgId: string, range: { from: string; to: string }): Promise<UsageRow[]> {
    const stored = await UsageDaily.findAll({
      where: { organizationId: orgId, day: { [Op.between]: [range.from, range.to] } },
      raw: true,
    });
    const merged = new Map<string, UsageRow>();
    const add = (r: UsageRow) => {
      const k = `${r.day}${SEP}${r.apiKeyId}${SEP}${r.endpoint}`;
      const prev = merged.get(k);
      if (prev) prev.count += r.count;
      else merged.set(k, { ...r });
    };
    for (const r of stored) add({ day: r.day, apiKeyId: r.apiKeyId, endpoint: r.endpoint, count: Number(r.count) });
    for (const r of this.pendingRows(orgId)) if (r.day >= range.from && r.day <= range.to) add(r);
    return [...merged.values()].sort((a, b) => a.day.localeCompare(b.day) || a.apiKeyId.localeCompare(b.apiKeyId) || a.endpoint.localeCompare(b.endpoint));
  }

  /** The console's usage answer (without `quota`, which QuotaService.status gives). */
  async report(orgId: string, range: { from: string; to: string }): Promise<UsageReport> {
    const rows = await this.rows(orgId, range);
    const perDay = new Map<string, number>(daysBetween(range.from, range.to).map((d) => [d, 0]));
    const perKey = new Map<string, number>();
    const perRoute = new Map<string, number>();
    for (const r of rows) {
      perDay.set(r.day, (perDay.get(r.day) ?? 0) + r.count);
      perKey.set(r.apiKeyId, (perKey.get(r.apiKeyId) ?? 0) + r.count);
      perRoute.set(r.endpoint, (perRoute.get(r.endpoint) ?? 0) + r.count);
    }
    const names = new Map<string, string>();
    if (perKey.size > 0) {
      const keys = await ApiKey.findAll({ where: { id: [...perKey.keys()] }, attributes: ['id', 'name', 'lastFour'] });
      for (const k of keys) names.set(k.id, `${k.name} (…${k.lastFour})`);
    }
    return {
      days: [...perDay].map(([day, count]) => ({ day, count })),
      byKey: [...perKey].map(([apiKeyId, count]) => ({ apiKeyId, name: names.get(apiKeyId) ?? 'deleted key', count })).sort((a, b) => b.count - a.count),
      byRoute: [...perRoute].map(([endpoint, count]) => ({ endpoint, count })).sort((a, b) => b.count - a.count),
      rows,
    };
  }

  /** text/csv `day,key,endpoint,count` (key = name and last four). */
  async csv(orgId: string, range: { from: string; to: string }): Promise<string> {
    const report = await this.report(orgId, range);
    const names = new Map(report.byKey.map((k) => [k.apiKeyId, k.name]));
    const cell = (v: string) => (/[",\n\r]/.test(v) || /^[=+\-@]/.test(v) ? `"${v.replace(/^([=+\-@])/, "'$1").replace(/"/g, '""')}"` : v);
    const lines = ['day,key,endpoint,count'];
    for (const r of report.rows) lines.push([r.day, cell(names.get(r.apiKeyId) ?? r.apiKeyId), cell(r.endpoint), String(r.count)].join(','));
    return `${lines.join('\r\n')}\r\n`;
  }
}

declare module '../context.ts' {
  interface AppServices {
    /** Set by getUsageRecorder (app.ts calls it at start-up). */
    usage?: UsageRecorder;
  }
}

/** The app's UsageRecorder, created on first use. */
export function getUsageRecorder(ctx: AppContext): UsageRecorder {
  ctx.services.usage ??= new UsageRecorder(ctx);
  return ctx.services.usage;
}
