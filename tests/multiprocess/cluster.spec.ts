/**
 * Several real server processes on one PostgreSQL database and one Redis, as a load balancer
 * would spread requests over them. Runs in the integration-pg project only (it needs both).
 *
 * Three processes start at the same moment on an empty database (migrations run once); a member
 * signs up on one; then: a 6-a-minute key answers exactly 6 of 12 requests spread over all three;
 * five failed sign-ins from one client spread over them stop the sixth, and failed sign-ins of
 * one account from many clients stop at the per-account limit; a key revoked through one process is
 * refused by another within a second; usage counted on two
 * processes adds up exactly in usage_daily; a SIGKILLed process loses none of the usage it answered.
 */
import pg from 'pg';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { NadirlineApp } from '@nadirline/server/app';
import { SIGNIN_ACCOUNT_MAX_FAILURES } from '@nadirline/server/routes/api/account.ts';
import { Browser, PASSWORD, uniqueEmail } from '../integration/console-api.harness.ts';
import { leoTle } from '../support/app.ts';
import { startServer, type StartedServer } from '../support/server.ts';
import { testStores, type TestStores } from '../support/stores.ts';

let stores: TestStores;
let servers: StartedServer[] = [];
let owner: Browser;
let orgId: string;
let satId: string;
let db: pg.Client;

// One SESSION_SECRET for all: a session made on one process works on the others.
const env = { DEMO: 'false', USAGE_FLUSH_MS: '300', LOG_LEVEL: 'warn', SESSION_SECRET: 'cluster-test-session-secret-0123456789' };

/** A member's browser on one process (the session lives in the shared database). */
function browserOn(server: StartedServer, clientAddress?: string): Browser {
  return new Browser(server.url as unknown as NadirlineApp['app'], clientAddress);
}

async function makeKey(body: object): Promise<{ id: string; secret: string }> {
  const res = await owner.post(`/api/orgs/${orgId}/keys`, body).expect(201);
  return { id: res.body.key.id, secret: res.body.secret };
}

const position = (server: StartedServer, secret: string) =>
  fetch(`${server.url}/v1/satellites/${satId}/position`, { headers: { Authorization: `Bearer ${secret}` } });

async function usageInDb(keyId: string): Promise<number> {
  const r = await db.query<{ n: string | null }>('SELECT SUM("count") AS n FROM usage_daily WHERE "apiKeyId" = $1', [keyId]);
  return Number(r.rows[0]?.n ?? 0);
}

/** Poll usage_daily until it holds `expected` for the key (the processes flush every 300 ms). */
async function settledUsage(keyId: string, expected: number, timeoutMs = 20_000): Promise<number> {
  const until = Date.now() + timeoutMs;
  let n = await usageInDb(keyId);
  while (n < expected && Date.now() < until) {
    await new Promise((r) => setTimeout(r, 200));
    n = await usageInDb(keyId);
  }
  // A little longer: nothing may arrive twice.
  await new Promise((r) => setTimeout(r, 1_000));
  return usageInDb(keyId);
}

beforeAll(async () => {
  stores = await testStores({ force: true });
  // All three at once on an empty database.
  servers = await Promise.all([0, 1, 2].map(() => startServer({ stores, keepStores: true, env })));
  db = new pg.Client({ connectionString: stores.databaseUrl ?? '' });
  await db.connect();

  // A member signs up and confirms on process 0, then works there.
  const [a] = servers as [StartedServer];
  const email = uniqueEmail('cluster');
  owner = browserOn(a);
  await owner.post('/api/auth/signup', { email, name: 'Cluster Tester', password: PASSWORD, organizationName: 'Cluster Centre' }).expect(201);
  const mail = await request(a.url).get('/dev/mailbox.json').expect(200);
  const message = (mail.body.messages as Array<{ to: string; links: string[] }>).filter((m) => m.to === email).at(-1);
  const token = new URL(message?.links[0] ?? 'http://x/').searchParams.get('token') ?? message?.links[0]?.split('/').at(-1) ?? '';
  await owner.post('/api/auth/verify-email', { token }).expect(200);
  const signin = await owner.signIn(email);
  expect(signin.status).toBe(200);
  orgId = signin.body.memberships[0].organization.id;
  const writer = await makeKey({ kind: 'server', name: 'Pipeline', scopes: ['read', 'element-sets:write'], rateLimitPerMin: 10_000 });
  const created = await request(a.url)
    .post('/v1/satellites')
    .set('Authorization', `Bearer ${writer.secret}`)
    .send({ name: 'Cluster LEO', elements: leoTle() })
    .expect(201);
  satId = created.body.id;
}, 180_000);

afterAll(async () => {
  await db?.end();
  await Promise.all(servers.map((s) => s.stop()));
  await stores?.drop();
});

describe('three processes on one PostgreSQL database and one Redis', () => {
  it('all start together on an empty database and migrate it once', async () => {
    expect(servers).toHaveLength(3);
    for (const s of servers) expect((await fetch(`${s.url}/healthz`)).status).toBe(200);
    const r = await db.query<{ name: string }>('SELECT "name" FROM schema_migrations ORDER BY "name"');
    const names = r.rows.map((row) => row.name);
    expect(new Set(names).size).toBe(names.length);
    expect(names).toContain('0001-initial');
    // The session made on process 0 works on the others.
    const res = await browserOnWithSession(servers[1]!).get(`/api/orgs/${orgId}/keys`);
    expect(res.status).toBe(200);
  });

  it('a key limited to 6 requests a minute answers exactly 6 of 12 spread over the processes', async () => {
    const key = await makeKey({ kind: 'server', name: 'Six a minute', rateLimitPerMin: 6 });
    const answers = await Promise.all(Array.from({ length: 12 }, (_, i) => position(servers[i % 3]!, key.secret)));
    const statuses = answers.map((r) => r.status);
    console.log(`rate limit 6/min over 3 processes: ${statuses.filter((s) => s === 200).length} answered, ${statuses.filter((s) => s === 429).length} refused (429)`);
    expect(statuses.filter((s) => s === 200)).toHaveLength(6);
    expect(statuses.filter((s) => s === 429)).toHaveLength(6);
  });

  it('counts failed sign-ins of one address from one client across the processes', async () => {
    const statuses: number[] = [];
    for (let i = 0; i < 6; i++) {
      // One client (its address through the trusted proxy), a new connection to another process each try.
      const b = browserOn(servers[i % 3]!, '203.0.113.44');
      await b.session();
      const res = await b.agent.post('/api/auth/signin').set('X-CSRF-Token', b.csrf).send({ email: 'guessed@example.test', password: `guess ${i}` });
      statuses.push(res.status);
    }
    expect(statuses).toEqual([401, 401, 401, 401, 401, 429]);
  });

  it('counts failed sign-ins of one account from many clients across the processes', async () => {
    // Every try from another client address, so only the per-account count (in Redis) can stop them.
    const statuses: number[] = [];
    for (let i = 0; i <= SIGNIN_ACCOUNT_MAX_FAILURES; i++) {
      const b = browserOn(servers[i % 3]!);
      await b.session();
      const res = await b.agent.post('/api/auth/signin').set('X-CSRF-Token', b.csrf).send({ email: 'targeted@example.test', password: `guess ${i}` });
      statuses.push(res.status);
    }
    expect(statuses).toEqual([...Array<number>(SIGNIN_ACCOUNT_MAX_FAILURES).fill(401), 429]);
  });

  it('a key revoked through one process is refused by the others within a second', async () => {
    const key = await makeKey({ kind: 'server', name: 'To revoke', rateLimitPerMin: 10_000 });
    // The other processes have the key cached (30 s) before it is revoked.
    for (const s of servers) expect((await position(s, key.secret)).status).toBe(200);
    const t0 = Date.now();
    await owner.post(`/api/orgs/${orgId}/keys/${key.id}/revoke`).expect(200);
    const seen = await Promise.all(
      servers.slice(1).map(async (s) => {
        for (;;) {
          const res = await position(s, key.secret);
          if (res.status === 401) {
            expect(((await res.json()) as { code: string }).code).toBe('key-revoked');
            return Date.now() - t0;
          }
          if (Date.now() - t0 > 5_000) return Number.POSITIVE_INFINITY;
          await new Promise((r) => setTimeout(r, 10));
        }
      }),
    );
    console.log(`revocation through process 0 seen by processes 1 and 2 after ${seen.join(' ms and ')} ms (from the start of the revoke request)`);
    // On process 0 itself at once.
    expect((await position(servers[0]!, key.secret)).status).toBe(401);
    for (const ms of seen) expect(ms).toBeLessThan(1_000);
  });

  it('usage counted on two processes adds up exactly', async () => {
    const key = await makeKey({ kind: 'server', name: 'Counted twice', rateLimitPerMin: 10_000 });
    const onA = 25;
    const onB = 17;
    const sent = await Promise.all([
      ...Array.from({ length: onA }, () => position(servers[0]!, key.secret)),
      ...Array.from({ length: onB }, () => position(servers[1]!, key.secret)),
    ]);
    expect(sent.every((r) => r.status === 200)).toBe(true);
    const total = await settledUsage(key.id, onA + onB);
    console.log(`usage: ${onA} requests on process 0 + ${onB} on process 1 = ${total} in usage_daily`);
    expect(total).toBe(onA + onB);
    // The console on the third process shows the same.
    const report = await browserOnWithSession(servers[2]!).get(`/api/orgs/${orgId}/usage`).expect(200);
    expect((report.body.byKey as Array<{ apiKeyId: string; count: number }>).find((k) => k.apiKeyId === key.id)?.count).toBe(onA + onB);
  });

  it('a process killed with SIGKILL loses none of the usage it answered', async () => {
    const key = await makeKey({ kind: 'server', name: 'Killed under load', rateLimitPerMin: 100_000 });
    const victim = servers[2]!;
    let answered = 0;
    let failed = 0;
    let stop = false;
    // Four clients keep asking the victim until it dies.
    const clients = Array.from({ length: 4 }, async () => {
      while (!stop) {
        try {
          const res = await position(victim, key.secret);
          await res.arrayBuffer();
          if (res.status === 200) answered++;
          else failed++;
        } catch {
          failed++;
          if (stop) return;
        }
      }
    });
    while (answered < 60) await new Promise((r) => setTimeout(r, 5));
    process.kill(victim.pid, 'SIGKILL');
    await new Promise((r) => setTimeout(r, 300));
    stop = true;
    await Promise.all(clients);
    // The survivors write what the victim left in Redis (its pending counts, and a batch it had
    // taken but not written, once that batch is stale).
    const total = await settledUsage(key.id, answered, 30_000);
    console.log(`SIGKILL: ${answered} answered by the killed process, ${failed} cut off; usage_daily holds ${total}`);
    expect(total).toBeGreaterThanOrEqual(answered);
    // At most the requests cut off after counting and before their answer arrived.
    expect(total).toBeLessThanOrEqual(answered + 4);
  });
});

/** owner's session on another process. */
function browserOnWithSession(server: StartedServer): Browser {
  const b = browserOn(server);
  const cookies = owner.agent.jar.getCookies({ domain: '127.0.0.1', path: '/', secure: false, script: false });
  b.agent.jar.setCookies(cookies.toValueString().split(';').map((c) => c.trim()));
  return b;
}
