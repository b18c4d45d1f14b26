/**
 * What several server processes share beyond the database: Redis (REDIS_URL) for limits, usage
 * counters and cache invalidation. Without REDIS_URL there is one process and all of it lives in
 * memory; every part works both ways.
 *
 *   connectShared(ctx) -> Promise<void>     (app.ts, before the services; sets ctx.services.redis and .bus)
 *   ctx.services.redis: SharedRedis | null  ({ client, key(name), prefix })
 *   ctx.services.bus: InvalidationBus       (publish(msg), on(handler))
 *
 * Cache invalidation goes over Redis pub/sub (channel `<prefix>invalidate`): a key revoked,
 * rotated or edited, an embed or satellite changed, a new element set or a plan change is
 * dropped at once in the process that made it and, through the channel, in every other process
 * a few milliseconds later. Each process tags its messages with its own id and ignores its own.
 * When the subscription drops and comes back, messages may have been missed: every cache is then
 * cleared (`{ t: 'all' }`). The TTLs of the caches stay as a backstop.
 */
import crypto from 'node:crypto';
import { createClient } from 'redis';
import type { Store } from 'express-rate-limit';
import { RedisStore } from 'rate-limit-redis';
import type { AppContext } from '../context.ts';
import { HttpError } from '../http/problem.ts';

export type RedisClient = ReturnType<typeof createClient>;

export interface SharedRedis {
  client: RedisClient;
  prefix: string;
  /** A Redis key under this deployment's prefix. */
  key(name: string): string;
}

/** What changed. Receivers drop their cached copies of it. */
export type Invalidation =
  | { t: 'key'; id: string; hash: string }
  | { t: 'embed'; id: string }
  | { t: 'satellite'; id: string }
  | { t: 'plan'; orgId: string }
  | { t: 'org'; orgId: string }
  | { t: 'all' };

type Handler = (msg: Invalidation) => void;

export class InvalidationBus {
  private readonly handlers: Handler[] = [];
  /** This process's id: its own messages come back over the channel and are skipped. */
  readonly source = crypto.randomUUID();
  /** Messages received from other processes (for tests and the health page). */
  received = 0;

  constructor(
    private readonly publisher: ((text: string) => Promise<unknown>) | null,
    private readonly onError: (err: unknown) => void,
  ) {}

  on(handler: Handler): void {
    this.handlers.push(handler);
  }

  /** Tell the other processes (the caller has already dropped its own copy). */
  publish(msg: Invalidation): void {
    if (!this.publisher) return;
    this.publisher(JSON.stringify({ ...msg, s: this.source })).catch(this.onError);
  }

  /** A message from the channel. */
  deliver(text: string): void {
    let msg: Invalidation & { s?: string };
    try {
      msg = JSON.parse(text) as Invalidation & { s?: string };
    } catch {
      return;
    }
    if (msg.s === this.source) return;
    this.received++;
    this.dispatch(msg);
  }

  /** Run the local handlers (also used for `{ t: 'all' }` after a reconnect). */
  dispatch(msg: Invalidation): void {
    for (const h of this.handlers) {
      try {
        h(msg);
      } catch (err) {
        this.onError(err);
      }
    }
  }
}

declare module '../context.ts' {
  interface AppServices {
    /** Redis when REDIS_URL is set, else null (set by connectShared before the other services). */
    redis?: SharedRedis | null;
    /** Cache invalidation across processes (a no-op publisher without Redis). */
    bus?: InvalidationBus;
  }
}

export function sharedRedis(ctx: AppContext): SharedRedis | null {
  return ctx.services.redis ?? null;
}

export function invalidationBus(ctx: AppContext): InvalidationBus {
  ctx.services.bus ??= new InvalidationBus(null, () => undefined);
  return ctx.services.bus;
}

/** Connect to Redis when REDIS_URL is set: one client for commands, one for the invalidation channel. */
export async function connectShared(ctx: AppContext): Promise<void> {
  const { config, logger } = ctx;
  if (!config.REDIS_URL) {
    ctx.services.redis = null;
    invalidationBus(ctx);
    return;
  }
  const prefix = config.REDIS_KEY_PREFIX;
  // At start, give up after a few tries (a wrong REDIS_URL should stop the server, not hang it);
  // once connected, keep trying. Commands fail at once while disconnected (no offline queue), so
  // requests answer 503 instead of waiting.
  let connected = false;
  const reconnectStrategy = (retries: number) => (!connected && retries >= 4 ? new Error(`no answer from Redis after ${retries + 1} tries`) : Math.min(100 * 2 ** retries, 2_000));
  const client: RedisClient = createClient({ url: config.REDIS_URL, disableOfflineQueue: true, socket: { connectTimeout: 5_000, reconnectStrategy } });
  let lastErrorLog = 0;
  const onError = (err: unknown) => {
    // A Redis outage repeats the same error many times a second: log it once every 10 s.
    if (Date.now() - lastErrorLog > 10_000) {
      lastErrorLog = Date.now();
      logger.error({ err }, 'Redis error');
    }
  };
  client.on('error', onError);
  await client.connect();
  connected = true;
  const subscriber = client.duplicate();
  subscriber.on('error', onError);
  const channel = `${prefix}invalidate`;
  const bus = new InvalidationBus((text) => client.publish(channel, text), onError);
  let subscribedOnce = false;
  subscriber.on('ready', () => {
    // After a reconnect, messages sent meanwhile are lost: forget every cached record.
    if (subscribedOnce) bus.dispatch({ t: 'all' });
  });
  await subscriber.connect();
  await subscriber.subscribe(channel, (text) => bus.deliver(text));
  subscribedOnce = true;
  ctx.services.redis = { client, prefix, key: (name) => `${prefix}${name}` };
  ctx.services.bus = bus;
  ctx.onClose(async () => {
    await subscriber.close().catch(() => undefined);
    await client.close().catch(() => undefined);
  });
}

/**
 * The express-rate-limit store for one limiter: Redis (one counter per client and window, shared
 * by every process) when REDIS_URL is set, else express-rate-limit's own memory store. While
 * Redis does not answer, limited routes answer 503 `unavailable` rather than go unlimited.
 */
export function rateLimitStore(ctx: AppContext, name: string): { store?: Store } {
  const redis = sharedRedis(ctx);
  if (!redis) return {};
  const { client } = redis;
  const inner = new RedisStore({ sendCommand: (...args: string[]) => client.sendCommand(args) as Promise<RedisReply>, prefix: redis.key(`rl:${name}:`) });
  const unavailable = (err: unknown): never => {
    ctx.logger.error({ err }, 'rate-limit counter in Redis did not answer');
    throw new HttpError('unavailable', 'Nadirline cannot check the rate limit right now (its shared counter store does not answer). Try again in a few seconds.', {}, { 'Retry-After': '5' });
  };
  const store: Store = {
    prefix: inner.prefix,
    localKeys: false,
    init: (options) => inner.init(options),
    get: (key) => inner.get(key).catch(unavailable),
    increment: (key) => inner.increment(key).catch(unavailable),
    decrement: (key) => inner.decrement(key).catch(unavailable),
    resetKey: (key) => inner.resetKey(key).catch(unavailable),
  };
  return { store };
}

type RedisReply = boolean | number | string | Array<boolean | number | string>;
