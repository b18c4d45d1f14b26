/**
 * Throttles for the account routes (sign-up, sign-in failures, e-mail requests, invitations):
 * fixed windows counted per key, behind a small store interface so the counts can move to a
 * shared store (Redis) when several processes serve one site. One store per app
 * (ctx.services.throttleStore): RedisThrottleStore when REDIS_URL is set (every process counts the
 * same tries), else MemoryThrottleStore, unless something else is put there before the routes are built.
 *
 *   const t = new Throttle(store, { name: 'signup-address', limit: 3, windowMs: HOUR });
 *   await t.hit(key)     -> { count, retryAfterS }       count includes this hit
 *   await t.peek(key)    -> { count, retryAfterS }
 *   await t.reset(key)
 *   throttle(...) middleware: 429 too-many-attempts with Retry-After once any limit is passed.
 */
import type { Request, RequestHandler } from 'express';
import { ipKeyGenerator } from 'express-rate-limit';
import type { AppContext } from '../context.ts';
import { sharedRedis, type SharedRedis } from '../services/shared.ts';
import { HttpError } from './problem.ts';

export interface ThrottleCount {
  count: number;
  /** Seconds until the window ends. */
  retryAfterS: number;
}

/** Where counts live. Implementations must be safe for concurrent calls. */
export interface ThrottleStore {
  /** Add one to `key` (a new window of windowMs starts when none is open) and return the count. */
  increment(key: string, windowMs: number): Promise<ThrottleCount>;
  get(key: string): Promise<ThrottleCount>;
  reset(key: string): Promise<void>;
}

export class MemoryThrottleStore implements ThrottleStore {
  private readonly windows = new Map<string, { count: number; endsAt: number }>();
  /** Past this many keys, ended windows are dropped (and, if still full, the oldest keys). */
  constructor(private readonly maxKeys = 100_000) {}

  private open(key: string, now: number) {
    const w = this.windows.get(key);
    if (w && w.endsAt > now) return w;
    if (w) this.windows.delete(key);
    return undefined;
  }

  async increment(key: string, windowMs: number, now = Date.now()): Promise<ThrottleCount> {
    let w = this.open(key, now);
    if (!w) {
      if (this.windows.size >= this.maxKeys) this.prune(now);
      w = { count: 0, endsAt: now + windowMs };
      this.windows.set(key, w);
    }
    w.count++;
    return { count: w.count, retryAfterS: Math.max(1, Math.ceil((w.endsAt - now) / 1000)) };
  }

  async get(key: string, now = Date.now()): Promise<ThrottleCount> {
    const w = this.open(key, now);
    return w ? { count: w.count, retryAfterS: Math.max(1, Math.ceil((w.endsAt - now) / 1000)) } : { count: 0, retryAfterS: 0 };
  }

  async reset(key: string): Promise<void> {
    this.windows.delete(key);
  }

  private prune(now: number): void {
    for (const [k, w] of this.windows) if (w.endsAt <= now) this.windows.delete(k);
    for (const k of this.windows.keys()) {
      if (this.windows.size < this.maxKeys) break;
      this.windows.delete(k);
    }
  }
}

/**
 * Add one and open the window in one step: the first hit sets the expiry; a key left without one
 * (should not happen) gets it too, so no count outlives its window. Answers { count, ms left }.
 */
const INCREMENT_SCRIPT = `
local n = redis.call('INCR', KEYS[1])
local ttl = redis.call('PTTL', KEYS[1])
if n == 1 or ttl < 0 then
  redis.call('PEXPIRE', KEYS[1], ARGV[1])
  ttl = tonumber(ARGV[1])
end
return {n, ttl}`;

/**
 * Counts in Redis under the deployment's prefix (`<prefix>th:<rule>:<key>`), one fixed window per
 * key ending by Redis's expiry, shared by every process. While Redis does not answer, throttled
 * routes answer 503 `unavailable` rather than go unthrottled.
 */
export class RedisThrottleStore implements ThrottleStore {
  constructor(
    private readonly redis: SharedRedis,
    private readonly onError: (err: unknown) => void = () => undefined,
  ) {}

  private k(key: string): string {
    return this.redis.key(`th:${key}`);
  }

  private unavailable = (err: unknown): never => {
    this.onError(err);
    throw new HttpError('unavailable', 'Nadirline cannot check the sign-in and e-mail limits right now (its shared counter store does not answer). Try again in a few seconds.', {}, { 'Retry-After': '5' });
  };

  async increment(key: string, windowMs: number): Promise<ThrottleCount> {
    const reply = (await this.redis.client.eval(INCREMENT_SCRIPT, { keys: [this.k(key)], arguments: [String(windowMs)] }).catch(this.unavailable)) as [number, number];
    return { count: Number(reply[0]), retryAfterS: Math.max(1, Math.ceil(Number(reply[1]) / 1000)) };
  }

  async get(key: string): Promise<ThrottleCount> {
    const [count, ttl] = (await this.redis.client.multi().get(this.k(key)).pTTL(this.k(key)).exec().catch(this.unavailable)) as unknown as [string | null, number];
    const n = Number(count ?? 0);
    const left = Number(ttl);
    return n > 0 && left > 0 ? { count: n, retryAfterS: Math.max(1, Math.ceil(left / 1000)) } : { count: 0, retryAfterS: 0 };
  }

  async reset(key: string): Promise<void> {
    await this.redis.client.del(this.k(key)).catch(this.unavailable);
  }
}

export interface ThrottleRule {
  /** Part of every stored key, so rules never share counts. */
  name: string;
  limit: number;
  windowMs: number;
}

export class Throttle {
  constructor(
    private readonly store: ThrottleStore,
    readonly rule: ThrottleRule,
  ) {}

  private key(k: string): string {
    return `${this.rule.name}:${k}`;
  }

  hit(key: string): Promise<ThrottleCount> {
    return this.store.increment(this.key(key), this.rule.windowMs);
  }

  peek(key: string): Promise<ThrottleCount> {
    return this.store.get(this.key(key));
  }

  reset(key: string): Promise<void> {
    return this.store.reset(this.key(key));
  }
}

declare module '../context.ts' {
  interface AppServices {
    /** Counts of the account throttles (Redis with REDIS_URL, else memory, unless replaced before the routes are built). */
    throttleStore?: ThrottleStore;
  }
}

export function getThrottleStore(ctx: AppContext): ThrottleStore {
  if (!ctx.services.throttleStore) {
    const redis = sharedRedis(ctx);
    ctx.services.throttleStore = redis
      ? new RedisThrottleStore(redis, (err) => ctx.logger.error({ err }, 'throttle counter in Redis did not answer'))
      : new MemoryThrottleStore();
  }
  return ctx.services.throttleStore;
}

/** The client's address for throttles (IPv6 addresses by their /56, as express-rate-limit does). */
export function clientKey(req: Request): string {
  return ipKeyGenerator(req.ip ?? 'unknown');
}

/** The e-mail address a body names, normalized, or null. */
export function bodyEmail(req: Request): string | null {
  const e = (req.body as { email?: unknown } | undefined)?.email;
  return typeof e === 'string' && e.trim() ? e.trim().toLowerCase() : null;
}

export function tooManyAttempts(what: string, retryAfterS: number): HttpError {
  const minutes = Math.max(1, Math.ceil(retryAfterS / 60));
  return new HttpError('too-many-attempts', `${what} Try again in ${minutes} minute${minutes === 1 ? '' : 's'}.`, { retryAfterSeconds: retryAfterS }, { 'Retry-After': String(retryAfterS) });
}

/**
 * Counts the request against every rule whose key function gives a key; once any count passes its
 * limit the request answers 429 too-many-attempts (Retry-After: the longest wait) before any work.
 */
export function throttle(rules: Array<{ throttle: Throttle; key: (req: Request) => string | null }>, what: string): RequestHandler {
  return async (req, _res, next) => {
    let wait = 0;
    for (const r of rules) {
      const k = r.key(req);
      if (k === null) continue;
      const c = await r.throttle.hit(k);
      if (c.count > r.throttle.rule.limit) wait = Math.max(wait, c.retryAfterS);
    }
    if (wait > 0) throw tooManyAttempts(what, wait);
    next();
  };
}
