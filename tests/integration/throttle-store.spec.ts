/**
 * The Redis store of the account throttles (server/src/http/throttle.ts): two stores on one Redis
 * (two processes) count the same tries in one window, the window ends by Redis's expiry, and a
 * reset clears it for both. Runs on the PostgreSQL + Redis run, where REDIS_URL is set.
 */
import crypto from 'node:crypto';
import { createClient } from 'redis';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RedisThrottleStore, Throttle } from '@nadirline/server/http/throttle.ts';
import type { RedisClient, SharedRedis } from '@nadirline/server/services/shared.ts';
import { onPgRedis, REDIS_URL } from '../support/stores.ts';

describe.runIf(onPgRedis)('account throttles counted in Redis (PostgreSQL + Redis run)', () => {
  const prefix = `nl:it:th:${crypto.randomBytes(6).toString('hex')}:`;
  const clients: RedisClient[] = [];
  const shared = async (): Promise<SharedRedis> => {
    const client: RedisClient = createClient({ url: REDIS_URL });
    await client.connect();
    clients.push(client);
    return { client, prefix, key: (name) => `${prefix}${name}` };
  };
  let a: RedisThrottleStore;
  let b: RedisThrottleStore;

  beforeAll(async () => {
    a = new RedisThrottleStore(await shared());
    b = new RedisThrottleStore(await shared());
  });
  afterAll(async () => {
    const c = clients[0];
    if (c) for await (const keys of c.scanIterator({ MATCH: `${prefix}*`, COUNT: 500 })) if (keys.length) await c.del(keys);
    for (const c of clients) await c.close();
  });

  it('adds the tries of two processes in one window, under the prefix, and resets for both', async () => {
    const rule = { name: 'signin-account', limit: 3, windowMs: 60_000 };
    const onA = new Throttle(a, rule);
    const onB = new Throttle(b, rule);
    expect((await onA.peek('x@example.test')).count).toBe(0);
    expect((await onA.hit('x@example.test')).count).toBe(1);
    expect((await onB.hit('x@example.test')).count).toBe(2);
    const third = await onA.hit('x@example.test');
    expect(third.count).toBe(3);
    expect(third.retryAfterS).toBeGreaterThan(55);
    expect(third.retryAfterS).toBeLessThanOrEqual(60);
    expect(await onB.peek('x@example.test')).toEqual({ count: 3, retryAfterS: third.retryAfterS });
    expect(await clients[0]!.get(`${prefix}th:signin-account:x@example.test`)).toBe('3');
    // Another address and another rule count apart.
    expect((await onB.hit('y@example.test')).count).toBe(1);
    expect((await new Throttle(b, { ...rule, name: 'mail-address' }).hit('x@example.test')).count).toBe(1);
    await onB.reset('x@example.test');
    expect((await onA.peek('x@example.test')).count).toBe(0);
  });

  it('ends the window by expiry', async () => {
    const t = new Throttle(a, { name: 'short', limit: 1, windowMs: 300 });
    expect((await t.hit('k')).count).toBe(1);
    expect((await t.hit('k')).count).toBe(2);
    await new Promise((r) => setTimeout(r, 450));
    expect(await t.peek('k')).toEqual({ count: 0, retryAfterS: 0 });
    expect((await t.hit('k')).count).toBe(1);
  });
});
