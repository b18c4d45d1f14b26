/**
 * Throttles for the account routes (sign-up, sign-in failures, e-mail requests, invitations):
 * fixed windows counted per key, behind a small store interface so the counts can move to a
 * shared store (Redis) when several processes serve one site. One MemoryThrottleStore per app
 * (ctx.services.throttleStore) unless something else is put there before the routes are built.
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
    /** Counts of the account throttles (in memory unless replaced before the routes are built). */
    throttleStore?: ThrottleStore;
  }
}

export function getThrottleStore(ctx: AppContext): ThrottleStore {
  ctx.services.throttleStore ??= new MemoryThrottleStore();
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
