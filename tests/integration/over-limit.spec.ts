/**
 * A key over its rate limit is refused at the front of the server: the rest of its minute
 * answers 429 problem+json with Retry-After and RateLimit headers, without a request log line
 * each (one summary line a minute), and other keys keep working. The throughput figure (a flood
 * of refused requests against a working key) is in tests/bench/flood.bench.ts.
 */
import path from 'node:path';
import { QueryTypes, Sequelize } from 'sequelize';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { startServer, type StartedServer } from '../support/server.ts';

const LIMIT = 5;
const ORIGIN = 'http://limited.test';
let server: StartedServer;

beforeAll(async () => {
  // The demo data is made by a first start; the second start reads the changed keys from the same
  // database (the SQLite file, or the PostgreSQL database and Redis prefix on the pg-redis run).
  const seeding = await startServer({ keepStores: true });
  await seeding.stop();
  const db = seeding.stores.databaseUrl
    ? new Sequelize(seeding.stores.databaseUrl, { logging: false })
    : new Sequelize({ dialect: 'sqlite', storage: path.join(seeding.dataDir, 'nadirline.sqlite'), logging: false });
  try {
    // camelCase columns quoted, as PostgreSQL needs.
    await db.query(`UPDATE api_keys SET "rateLimitPerMin" = ${LIMIT}, "origins" = '["${ORIGIN}"]' WHERE "kind" = 'browser'`, { type: QueryTypes.UPDATE });
  } finally {
    await db.close();
  }
  server = await startServer({ dataDir: seeding.dataDir, stores: seeding.stores, env: { LOG_LEVEL: 'info' } });
}, 120_000);
afterAll(async () => {
  await server?.stop();
});

it('refuses the rest of the minute at the front, with the same problem and headers, and no log line per request', async () => {
  const { browserKey, serverKey, satellites } = server.credentials;
  const url = `${server.url}/v1/satellites/${satellites[0]!.id}/position?key=${browserKey}`;
  const get = () => fetch(url, { headers: { Origin: ORIGIN } });
  for (let i = 0; i < LIMIT; i++) expect((await get()).status).toBe(200);
  const first = await get();
  expect(first.status).toBe(429);
  const firstBody = (await first.json()) as Record<string, unknown>;
  // The limiter's own refusal is logged (asynchronously); count after it is written.
  await new Promise((r) => setTimeout(r, 300));
  const linesBefore = server.output().split('\n').filter((l) => l.includes('"statusCode":429')).length;

  const answers = await Promise.all(Array.from({ length: 200 }, () => get()));
  for (const res of answers) {
    expect(res.status).toBe(429);
    expect(res.headers.get('content-type')).toMatch(/^application\/problem\+json/);
    expect(Number(res.headers.get('retry-after'))).toBeGreaterThan(0);
    expect(res.headers.get('ratelimit')).toMatch(new RegExp(`^limit=${LIMIT}, remaining=0, reset=\\d+$`));
    expect(res.headers.get('access-control-allow-origin')).toBe(ORIGIN);
  }
  const body = (await answers[0]!.json()) as Record<string, unknown>;
  expect(Object.keys(body).sort()).toEqual(Object.keys(firstBody).sort());
  expect(body).toMatchObject({ code: 'rate-limited', status: 429, limitPerMin: LIMIT, instance: firstBody.instance });
  expect(String(body.detail)).toMatch(new RegExp(`^This key allows ${LIMIT} requests per minute; wait \\d+ s before the next one\\.$`));

  // Give the logger a moment, then count: no request line for any of the 200.
  await new Promise((r) => setTimeout(r, 300));
  const linesAfter = server.output().split('\n').filter((l) => l.includes('"statusCode":429')).length;
  expect(linesAfter - linesBefore).toBe(0);
  expect(server.output()).not.toContain(browserKey);

  // Another key is not affected.
  const other = await fetch(`${server.url}/v1/satellites/${satellites[0]!.id}/position`, { headers: { Authorization: `Bearer ${serverKey}` } });
  expect(other.status).toBe(200);
}, 60_000);
