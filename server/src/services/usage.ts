/**
 * Usage counting: every keyed /v1 request is counted per organization, key, route template and
 * UTC day when it arrives (what the monthly quota counts: errors included), and once answered
 * per UTC hour and HTTP status and per calling origin and day; all in memory, added to
 * UsageDaily, UsageHourly and UsageOriginDaily every USAGE_FLUSH_MS and on close.
 * Nothing on the request path writes to the database.
 *
 * Exported API (ctx.services.usage is a UsageRecorder):
 *   record(orgId, keyId, endpoint, at?)          endpoint = route template, e.g. "GET /v1/satellites/{id}/track"
 *   recordOutcome(orgId, keyId, endpoint, at, status, origin)   the answer's status and the calling origin (null: none)
 *   origins(orgId, keyIds, sinceDay) -> Promise<Map<keyId, KeyOrigin[]>>   origins seen per key since a UTC day
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
import { ApiKey, UsageDaily, UsageHourly, UsageOriginDaily } from '../models/index.ts';
import type { KeyOrigin, UsageReport as UsageAnswer } from '@nadirline/shared/contract';

const SEP = '\u0000';

export type UsageRow = UsageAnswer['rows'][number];

export type { KeyOrigin };

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

/** UTC hour YYYY-MM-DDTHH of a time. */
export function utcHour(at: Date | number): string {
  return new Date(typeof at === 'number' ? at : at.getTime()).toISOString().slice(0, 13);
}

/** The longest origin text kept; longer ones are cut (they are not origins a browser sends). */
const MAX_ORIGIN_LENGTH = 300;

export class UsageRecorder {
  /** org SEP key SEP endpoint SEP hour SEP status -> answers not yet written. */
  private pendingHourly = new Map<string, number>();
  /** org SEP key SEP origin SEP day -> requests not yet written. */
  private pendingOrigins = new Map<string, number>();
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

  /** The answer to a counted request: its status per hour, and the origin that called. */
  recordOutcome(orgId: string, keyId: string, endpoint: string, at: Date | number, status: number, origin: string | null): void {
    const h = `${orgId}${SEP}${keyId}${SEP}${endpoint}${SEP}${utcHour(at)}${SEP}${status}`;
    this.pendingHourly.set(h, (this.pendingHourly.get(h) ?? 0) + 1);
    const o = `${orgId}${SEP}${keyId}${SEP}${(origin ?? '').toLowerCase().slice(0, MAX_ORIGIN_LENGTH)}${SEP}${utcDay(at)}`;
    this.pendingOrigins.set(o, (this.pendingOrigins.get(o) ?? 0) + 1);
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
    if (this.pending.size === 0 && this.pendingHourly.size === 0 && this.pendingOrigins.size === 0) return;
    this.flushing = this.flushOnce().finally(() => {
      this.flushing = undefined;
    });
    await this.flushing;
  }

  private async flushOnce(): Promise<void> {
    const batch = this.pending;
    const hourly = this.pendingHourly;
    const origins = this.pendingOrigins;
    this.pending = new Map();
    this.pendingHourly = new Map();
    this.pendingOrigins = new Map();
    try {
      await this.ctx.sequelize.transaction(async (transaction) => {
        for (const [k, n] of hourly) {
          const [organizationId, apiKeyId, endpoint, hour, status] = k.split(SEP) as [string, string, string, string, string];
          const where = { organizationId, apiKeyId, endpoint, hour, status: Number(status) };
          const [row, created] = await UsageHourly.findOrCreate({ where, defaults: { ...where, count: n }, transaction });
          if (!created) await row.increment('count', { by: n, transaction });
        }
        for (const [k, n] of origins) {
          const [organizationId, apiKeyId, origin, day] = k.split(SEP) as [string, string, string, string];
          const where = { organizationId, apiKeyId, origin, day };
          const [row, created] = await UsageOriginDaily.findOrCreate({ where, defaults: { ...where, count: n }, transaction });
          if (!created) await row.increment('count', { by: n, transaction });
        }
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
      for (const [k, n] of hourly) this.pendingHourly.set(k, (this.pendingHourly.get(k) ?? 0) + n);
      for (const [k, n] of origins) this.pendingOrigins.set(k, (this.pendingOrigins.get(k) ?? 0) + n);
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

  /** Answers per hour and status between two UTC days (inclusive), unwritten ones included. */
  async hourlyRows(orgId: string, range: { from: string; to: string }): Promise<Array<{ hour: string; status: number; count: number }>> {
    const stored = await UsageHourly.findAll({
      where: { organizationId: orgId, hour: { [Op.between]: [`${range.from}T00`, `${range.to}T23`] } },
      attributes: ['hour', 'status', 'count'],
      raw: true,
    });
    const out = stored.map((r) => ({ hour: r.hour, status: Number(r.status), count: Number(r.count) }));
    for (const [k, count] of this.pendingHourly) {
      const [o, , , hour, status] = k.split(SEP) as [string, string, string, string, string];
      if (o === orgId && hour >= `${range.from}T00` && hour <= `${range.to}T23`) out.push({ hour, status: Number(status), count });
    }
    return out;
  }

  /** Requests per key and calling origin between two UTC days (inclusive), unwritten ones included. */
  async originRows(orgId: string, range: { from: string; to: string }, keyIds?: string[]): Promise<Array<{ apiKeyId: string; origin: string; day: string; count: number }>> {
    const stored = await UsageOriginDaily.findAll({
      where: { organizationId: orgId, day: { [Op.between]: [range.from, range.to] }, ...(keyIds ? { apiKeyId: keyIds } : {}) },
      attributes: ['apiKeyId', 'origin', 'day', 'count'],
      raw: true,
    });
    const out = stored.map((r) => ({ apiKeyId: r.apiKeyId, origin: r.origin, day: r.day, count: Number(r.count) }));
    const wanted = keyIds ? new Set(keyIds) : null;
    for (const [k, count] of this.pendingOrigins) {
      const [o, apiKeyId, origin, day] = k.split(SEP) as [string, string, string, string];
      if (o === orgId && day >= range.from && day <= range.to && (!wanted || wanted.has(apiKeyId))) out.push({ apiKeyId, origin, day, count });
    }
    return out;
  }

  /** The origins that called each key since `sinceDay` (UTC, inclusive), busiest first. */
  async origins(orgId: string, keyIds: string[], sinceDay: string): Promise<Map<string, KeyOrigin[]>> {
    const result = new Map<string, KeyOrigin[]>();
    if (keyIds.length === 0) return result;
    const rows = await this.originRows(orgId, { from: sinceDay, to: '9999-12-31' }, keyIds);
    const merged = new Map<string, Map<string, KeyOrigin>>();
    for (const r of rows) {
      let perKey = merged.get(r.apiKeyId);
      if (!perKey) merged.set(r.apiKeyId, (perKey = new Map()));
      const prev = perKey.get(r.origin);
      if (prev) {
        prev.count += r.count;
        if (r.day > prev.lastDay) prev.lastDay = r.day;
      } else perKey.set(r.origin, { origin: r.origin, count: r.count, lastDay: r.day });
    }
    for (const [keyId, perKey] of merged) result.set(keyId, [...perKey.values()].sort((a, b) => b.count - a.count || a.origin.localeCompare(b.origin)));
    return result;
  }

  /** The console's usage answer (without `quota`, which QuotaService.status gives). */
  async report(orgId: string, range: { from: string; to: string }): Promise<UsageReport> {
    const [rows, hourly, originRows] = await Promise.all([this.rows(orgId, range), this.hourlyRows(orgId, range), this.originRows(orgId, range)]);
    const perHour = new Map<string, number>();
    for (const day of daysBetween(range.from, range.to).slice(0, 31)) {
      for (let h = 0; h < 24; h++) perHour.set(`${day}T${String(h).padStart(2, '0')}`, 0);
    }
    const perStatus = new Map<number, number>();
    for (const r of hourly) {
      if (perHour.has(r.hour)) perHour.set(r.hour, (perHour.get(r.hour) ?? 0) + r.count);
      perStatus.set(r.status, (perStatus.get(r.status) ?? 0) + r.count);
    }
    const perOrigin = new Map<string, number>();
    for (const r of originRows) perOrigin.set(r.origin, (perOrigin.get(r.origin) ?? 0) + r.count);
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
      hours: [...perHour].map(([hour, count]) => ({ hour, count })),
      byStatus: [...perStatus].map(([status, count]) => ({ status, count })).sort((a, b) => a.status - b.status),
      byOrigin: [...perOrigin].map(([origin, count]) => ({ origin, count })).sort((a, b) => b.count - a.count || a.origin.localeCompare(b.origin)),
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
