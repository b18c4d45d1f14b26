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
 * Each flush adds its counts with one INSERT ... ON CONFLICT DO UPDATE per 500 rows (SQLite and
 * PostgreSQL both take it), in one transaction; counts of a failed flush are kept for the next one.
 *
 * With REDIS_URL (several processes), counting happens in Redis instead, before the answer is
 * sent: countShared() checks the organization's month counter against its quota and, in the same
 * script, adds one to the month counter and to the pending hash (org, key, route, day). A process
 * killed after answering has lost nothing. flush() renames the pending hash into a batch, writes
 * the batch and its id (table usage_flushes) in one transaction, then deletes it; a batch left by
 * a dead process is taken over by any process after batchStaleMs, and its id keeps it from being
 * counted twice.
 */
import crypto from 'node:crypto';
import { Op, QueryTypes, UniqueConstraintError, type Sequelize, type Transaction } from 'sequelize';
import type { AppContext } from '../context.ts';
import { ApiKey, UsageDaily, UsageHourly, UsageOriginDaily } from '../models/index.ts';
import type { KeyOrigin, UsageReport as UsageAnswer } from '@nadirline/shared/contract';
import { invalidationBus, sharedRedis, type SharedRedis } from './shared.ts';

const invalidationSource = (ctx: AppContext) => invalidationBus(ctx).source;

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

/**
 * Add counts to one of the counter tables (usage_daily, usage_hourly, usage_origins_daily), whose
 * unique index is `keys`: one INSERT ... ON CONFLICT DO UPDATE per chunk of rows, safe when
 * several processes write the same row.
 */
async function upsertCounts(
  sequelize: Sequelize,
  table: 'usage_daily' | 'usage_hourly' | 'usage_origins_daily',
  keys: readonly string[],
  rows: ReadonlyArray<{ values: readonly unknown[]; count: number }>,
  transaction: Transaction,
): Promise<void> {
  const columns = [...keys, 'count'].map((c) => `"${c}"`).join(', ');
  const conflict = keys.map((c) => `"${c}"`).join(', ');
  const placeholders = `(${[...keys, 'count'].map(() => '?').join(', ')})`;
  for (let i = 0; i < rows.length; i += 500) {
    const chunk = rows.slice(i, i + 500);
    const replacements: unknown[] = [];
    for (const r of chunk) replacements.push(...r.values, r.count);
    await sequelize.query(
      `INSERT INTO ${table} (${columns}) VALUES ${chunk.map(() => placeholders).join(', ')}
       ON CONFLICT (${conflict}) DO UPDATE SET "count" = ${table}."count" + excluded."count"`,
      { replacements, transaction, type: QueryTypes.INSERT },
    );
  }
}

/** Add counts to usage_daily in one statement per chunk of rows. */
export async function upsertUsage(
  sequelize: Sequelize,
  rows: ReadonlyArray<{ organizationId: string; apiKeyId: string; endpoint: string; day: string; count: number }>,
  transaction: Transaction,
): Promise<void> {
  const values = rows.map((r) => ({ values: [r.organizationId, r.apiKeyId, r.endpoint, r.day], count: r.count }));
  await upsertCounts(sequelize, 'usage_daily', ['organizationId', 'apiKeyId', 'endpoint', 'day'], values, transaction);
}

const splitField = (k: string) => {
  const [organizationId, apiKeyId, endpoint, day] = k.split(SEP) as [string, string, string, string];
  return { organizationId, apiKeyId, endpoint, day };
};

/** Month counters in Redis live this long (seconds): past the end of any month they were seeded in. */
const MONTH_COUNTER_TTL_S = 40 * 86_400;

/**
 * KEYS[1] month counter, KEYS[2] pending hash; ARGV[1] monthly limit, ARGV[2] hash field.
 * Returns {1, used} when counted, {0, used} when the quota is spent, {-1, 0} when the month
 * counter must be seeded from the database first.
 */
const COUNT_SCRIPT = `
local n = redis.call('GET', KEYS[1])
if not n then return {-1, 0} end
n = tonumber(n)
if n >= tonumber(ARGV[1]) then return {0, n} end
redis.call('INCR', KEYS[1])
redis.call('HINCRBY', KEYS[2], ARGV[2], 1)
return {1, n + 1}`;

/** KEYS[1] month counter, KEYS[2] pending hash; ARGV[1] hash field. Counts without a quota check. */
const RECORD_SCRIPT = `
redis.call('HINCRBY', KEYS[2], ARGV[1], 1)
if redis.call('EXISTS', KEYS[1]) == 1 then redis.call('INCR', KEYS[1]) end
return 1`;

/** KEYS[1] pending hash, KEYS[2] batch key, KEYS[3] in-flight set; ARGV[1] now (ms). */
const TAKE_SCRIPT = `
if redis.call('EXISTS', KEYS[1]) == 0 then return 0 end
redis.call('RENAME', KEYS[1], KEYS[2])
redis.call('ZADD', KEYS[3], ARGV[1], KEYS[2])
return 1`;

/** KEYS[1] in-flight set; ARGV[1] batch key, ARGV[2] stale before (ms), ARGV[3] now (ms). Claims a stale batch. */
const CLAIM_SCRIPT = `
local s = redis.call('ZSCORE', KEYS[1], ARGV[1])
if s and tonumber(s) < tonumber(ARGV[2]) then redis.call('ZADD', KEYS[1], ARGV[3], ARGV[1]) return 1 end
return 0`;

/** Run a Lua script by its SHA-1, loading it once when Redis does not know it (NOSCRIPT). */
async function runScript(redis: SharedRedis, script: string, keys: string[], args: string[]): Promise<unknown> {
  const sha = crypto.createHash('sha1').update(script).digest('hex');
  try {
    return await redis.client.evalSha(sha, { keys, arguments: args });
  } catch (err) {
    if (!String((err as Error).message).includes('NOSCRIPT')) throw err;
    return redis.client.eval(script, { keys, arguments: args });
  }
}

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
  private readonly redis: SharedRedis | null;
  private batchSeq = 0;
  private lastPrune = 0;
  /** A batch in Redis not written for this long (its process died or stalled) is taken over. */
  readonly batchStaleMs: number;

  constructor(private readonly ctx: AppContext) {
    this.redis = sharedRedis(ctx);
    this.batchStaleMs = Math.max(2_000, 10 * ctx.config.USAGE_FLUSH_MS);
    this.timer = setInterval(() => void this.flush(), ctx.config.USAGE_FLUSH_MS);
    this.timer.unref();
    ctx.onClose(async () => {
      clearInterval(this.timer);
      this.timer = undefined;
      await this.flush();
    });
  }

  /**
   * Count one request. In memory; with Redis, sent to the pending hash and the month counter
   * (the request path uses countShared instead, which also checks the quota and waits for Redis).
   */
  record(orgId: string, keyId: string, endpoint: string, at: Date | number = Date.now()): void {
    const day = utcDay(at);
    if (this.redis) {
      const field = `${orgId}${SEP}${keyId}${SEP}${endpoint}${SEP}${day}`;
      runScript(this.redis, RECORD_SCRIPT, [this.monthKey(orgId, day.slice(0, 7)), this.pendingKey()], [field]).catch((err: unknown) =>
        this.ctx.logger.error({ err }, 'could not count usage in Redis'),
      );
      return;
    }
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

  /** Usage is counted in Redis (several processes) rather than in this process's memory. */
  get shared(): boolean {
    return this.redis !== null;
  }

  private pendingKey(): string {
    return (this.redis as SharedRedis).key('u:pending');
  }

  private monthKey(orgId: string, month: string): string {
    return (this.redis as SharedRedis).key(`u:month:${orgId}:${month}`);
  }

  /**
   * Redis mode: count one request of this key and route unless the organization's month is
   * spent (`limit` requests). Resolves once Redis holds the count.
   */
  async countShared(orgId: string, keyId: string, endpoint: string, atMs: number, limit: number): Promise<{ counted: boolean; used: number }> {
    const redis = this.redis as SharedRedis;
    const day = utcDay(atMs);
    const month = day.slice(0, 7);
    const keys = [this.monthKey(orgId, month), this.pendingKey()];
    const args = [String(limit), `${orgId}${SEP}${keyId}${SEP}${endpoint}${SEP}${day}`];
    for (let attempt = 0; attempt < 2; attempt++) {
      const [status, used] = (await runScript(redis, COUNT_SCRIPT, keys, args)) as [number, number];
      if (status === 1) return { counted: true, used };
      if (status === 0) return { counted: false, used };
      await this.seedMonth(orgId, month);
    }
    throw new Error('the month counter in Redis could not be seeded');
  }

  /** Redis mode: the organization's requests this month (seeded from the database on first use). */
  async sharedMonthCount(orgId: string, month: string): Promise<number> {
    const redis = this.redis as SharedRedis;
    const v = await redis.client.get(this.monthKey(orgId, month));
    if (v !== null) return Number(v);
    return this.seedMonth(orgId, month);
  }

  /**
   * Redis mode: start the month counter again from the database, after writing what is pending
   * (for operators who restored or corrected usage_daily by hand). Counts other processes add
   * while this runs may be missed by the new counter; usage_daily itself stays exact.
   */
  async resyncMonth(orgId: string, month: string): Promise<number> {
    const redis = this.redis as SharedRedis;
    await this.flush();
    await redis.client.del(this.monthKey(orgId, month));
    return this.seedMonth(orgId, month);
  }

  /** Start a month counter from what the database holds (first request of the month, or Redis emptied). */
  private async seedMonth(orgId: string, month: string): Promise<number> {
    const redis = this.redis as SharedRedis;
    const total = Number((await UsageDaily.sum('count', { where: { organizationId: orgId, day: { [Op.like]: `${month}-%` } } })) ?? 0);
    await redis.client.set(this.monthKey(orgId, month), String(total), { condition: 'NX', expiration: { type: 'EX', value: MONTH_COUNTER_TTL_S } });
    return Number((await redis.client.get(this.monthKey(orgId, month))) ?? total);
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

  /** Counts not yet in the database: this process's memory, or the pending hash in Redis. */
  async unwrittenRows(orgId: string): Promise<UsageRow[]> {
    if (!this.redis) return this.pendingRows(orgId);
    const rows: UsageRow[] = [];
    for await (const entries of this.redis.client.hScanIterator(this.pendingKey(), { MATCH: `${orgId}${SEP}*`, COUNT: 1000 })) {
      for (const { field, value } of entries) {
        const f = splitField(field);
        if (f.organizationId === orgId) rows.push({ day: f.day, apiKeyId: f.apiKeyId, endpoint: f.endpoint, count: Number(value) });
      }
    }
    return rows;
  }

  /** Write pending counts. Concurrent calls share one flush and then run once more. */
  async flush(): Promise<void> {
    while (this.flushing) await this.flushing;
    if (!this.redis && this.pending.size === 0 && this.pendingHourly.size === 0 && this.pendingOrigins.size === 0) return;
    // With Redis the daily counts (the quota's source) live there; answers per hour and status and
    // calling origins are this process's own counts either way, added to the database by upsert.
    this.flushing = (this.redis ? this.flushShared().then(() => this.flushOnce()) : this.flushOnce()).finally(() => {
      this.flushing = undefined;
    });
    await this.flushing;
  }

  private async flushOnce(): Promise<void> {
    if (this.pending.size === 0 && this.pendingHourly.size === 0 && this.pendingOrigins.size === 0) return;
    const batch = this.pending;
    const hourly = this.pendingHourly;
    const origins = this.pendingOrigins;
    this.pending = new Map();
    this.pendingHourly = new Map();
    this.pendingOrigins = new Map();
    try {
      await this.ctx.sequelize.transaction(async (transaction) => {
        const seq = this.ctx.sequelize;
        const hourlyRows = [...hourly].map(([k, count]) => {
          const [organizationId, apiKeyId, endpoint, hour, status] = k.split(SEP) as [string, string, string, string, string];
          return { values: [organizationId, apiKeyId, endpoint, hour, Number(status)], count };
        });
        const originRows = [...origins].map(([k, count]) => ({ values: k.split(SEP).slice(0, 4), count }));
        await upsertCounts(seq, 'usage_hourly', ['organizationId', 'apiKeyId', 'endpoint', 'hour', 'status'], hourlyRows, transaction);
        await upsertCounts(seq, 'usage_origins_daily', ['organizationId', 'apiKeyId', 'origin', 'day'], originRows, transaction);
        await upsertUsage(seq, [...batch].map(([k, count]) => ({ ...splitField(k), count })), transaction);
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

  /** Redis mode: take the pending hash as a batch, and any batch left stale by another process, and write them. */
  private async flushShared(): Promise<void> {
    const redis = this.redis as SharedRedis;
    const inflight = redis.key('u:inflight');
    try {
      const now = Date.now();
      const batches: string[] = [];
      const mine = redis.key(`u:batch:${invalidationSource(this.ctx)}:${++this.batchSeq}`);
      if (Number(await runScript(redis, TAKE_SCRIPT, [this.pendingKey(), mine, inflight], [String(now)])) === 1) batches.push(mine);
      const staleBefore = now - this.batchStaleMs;
      for (const b of await redis.client.zRangeByScore(inflight, '-inf', staleBefore, { LIMIT: { offset: 0, count: 20 } })) {
        if (Number(await runScript(redis, CLAIM_SCRIPT, [inflight], [b, String(staleBefore), String(now)])) === 1) batches.push(b);
      }
      for (const b of batches) await this.writeBatch(b);
      if (now - this.lastPrune > 3_600_000) {
        this.lastPrune = now;
        await this.ctx.sequelize.query('DELETE FROM usage_flushes WHERE "createdAt" < ?', { replacements: [new Date(now - 7 * 86_400_000)], type: QueryTypes.DELETE });
      }
    } catch (err) {
      // The batch stays in Redis; this process (or another) writes it at a later flush.
      this.ctx.logger.error({ err }, 'could not write usage counters; they will be retried');
    }
  }

  private async writeBatch(batchKey: string): Promise<void> {
    const redis = this.redis as SharedRedis;
    const fields = await redis.client.hGetAll(batchKey);
    const rows = Object.entries(fields).map(([k, n]) => ({ ...splitField(k), count: Number(n) }));
    if (rows.length > 0) {
      try {
        await this.ctx.sequelize.transaction(async (transaction) => {
          await this.ctx.sequelize.query('INSERT INTO usage_flushes ("id", "createdAt") VALUES (?, ?)', { replacements: [batchKey, new Date()], transaction, type: QueryTypes.INSERT });
          await upsertUsage(this.ctx.sequelize, rows, transaction);
        });
      } catch (err) {
        // Written already (by a process that died before deleting it, or one that took it meanwhile).
        if (!(err instanceof UniqueConstraintError)) throw err;
      }
    }
    await redis.client.multi().del(batchKey).zRem(redis.key('u:inflight'), batchKey).exec();
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
    for (const r of await this.unwrittenRows(orgId)) if (r.day >= range.from && r.day <= range.to) add(r);
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
