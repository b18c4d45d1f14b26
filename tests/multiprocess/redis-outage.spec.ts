/**
 * When Redis stops answering, keyed requests answer 503 `unavailable` at once (nothing is served
 * that could not be limited and counted) instead of hanging or going unlimited.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startKeyedApp, type KeyedTestApp } from '../support/app.ts';
import { testStores, type TestStores } from '../support/stores.ts';

let t: KeyedTestApp;
let stores: TestStores;
beforeAll(async () => {
  stores = await testStores({ force: true });
  t = await startKeyedApp(stores.env);
});
afterAll(async () => {
  await t?.close().catch(() => undefined);
  await stores?.drop();
});

describe('Redis outage', () => {
  it('answers 503 unavailable with Retry-After while Redis is gone', async () => {
    const pos = () => request(t.app).get(`/v1/satellites/${t.satellites.leo.id}/position`).set('Authorization', `Bearer ${t.serverKey}`);
    expect((await pos()).status).toBe(200);
    t.context.services.redis!.client.destroy();
    const started = Date.now();
    const res = await pos();
    expect(res.status).toBe(503);
    expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(res.body.code).toBe('unavailable');
    expect(res.headers['retry-after']).toBe('5');
    expect(Date.now() - started).toBeLessThan(2_000);
  });
});
