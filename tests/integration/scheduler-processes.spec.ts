/**
 * Scheduled work with three real server processes on one database: one SQLite file on the
 * integration run, one PostgreSQL database (and Redis) on integration-pg. The processes share a
 * clock the test moves (TEST_CLOCK_FILE, tests only, refused in production), tick every 100 ms,
 * and mail through one fake SMTP server the test runs, so every e-mail any of them sends lands
 * in one mailbox.
 *
 * When the quota notice and the daily stale digest come due, each job runs once for its period
 * (one "scheduled job ran" log line over all three processes, one holder in job_leases) and each
 * notice is mailed exactly once. On PostgreSQL the holder of a run is then killed with SIGKILL
 * while its run waits for a lock the test holds, and another process takes the run over once the
 * lease has expired on the shared clock, mailing the notice exactly once.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import { QueryTypes, Sequelize } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { NadirlineApp } from '@nadirline/server/app';
import { FakeMailbox } from '@nadirline/server/services/fake-mailbox.ts';
import { LEASE_MS } from '@nadirline/server/services/scheduler.ts';
import { Browser, PASSWORD, uniqueEmail } from './console-api.harness.ts';
import { leoTle } from '../support/app.ts';
import { startServer, type StartedServer } from '../support/server.ts';
import { onPgRedis, testStores, type TestStores } from '../support/stores.ts';

const DAY = 86_400_000;
// The shared clock: set-up on 2030-04-10 (another month, no set turning class), then the due moment
// 2030-05-20 00:05 UTC, then the next day.
const T_SETUP = Date.UTC(2030, 3, 10, 12, 0, 0);
const T0 = Date.UTC(2030, 4, 20, 0, 5, 0);

let dir: string;
let clockFile: string;
let stores: TestStores;
let mailbox: FakeMailbox;
let servers: StartedServer[] = [];
let db: Sequelize;
const orgs: Record<'a' | 'b', { id: string; owner: string }> = { a: { id: '', owner: '' }, b: { id: '', owner: '' } };

function setClock(ms: number): void {
  // Written whole and renamed, so no process reads half a number.
  fs.writeFileSync(`${clockFile}.tmp`, String(ms));
  fs.renameSync(`${clockFile}.tmp`, clockFile);
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function until<T>(what: string | (() => string), fn: () => Promise<T | null | undefined | false>, timeoutMs = 20_000): Promise<T> {
  const end = Date.now() + timeoutMs;
  for (;;) {
    const v = await fn();
    if (v) return v;
    if (Date.now() > end) throw new Error(`timed out waiting for ${typeof what === 'string' ? what : what()}\n${servers.map((s) => s.output().slice(-2000)).join('\n---\n')}`);
    await sleep(50);
  }
}

interface LeaseRow {
  name: string;
  doneFor: string | null;
  holder: string | null;
  leaseUntil: string | Date | null;
}

async function lease(name: string): Promise<LeaseRow | undefined> {
  const rows = await db.query<LeaseRow>('SELECT "name", "doneFor", "holder", "leaseUntil" FROM job_leases WHERE "name" = ?', { replacements: [name], type: QueryTypes.SELECT });
  return rows[0];
}

/** The pid in a holder id (`proc-<pid>-<random>`). */
const pidOf = (holder: string | null) => Number(/^proc-(\d+)-/.exec(holder ?? '')?.[1] ?? NaN);

/** "scheduled job ran" lines over every process's output, as `job period`. */
function runsLogged(): string[] {
  const runs: string[] = [];
  for (const s of servers) {
    for (const line of s.output().split('\n')) {
      if (!line.includes('"msg":"scheduled job ran"')) continue;
      const j = JSON.parse(line) as { job: string; period: string };
      runs.push(`${j.job} ${j.period}`);
    }
  }
  return runs.sort();
}

const mailsTo = (email: string, subject: RegExp) => mailbox.messages.filter((m) => m.to === email && subject.test(m.subject));

async function signUp(server: StartedServer, organizationName: string): Promise<{ id: string; owner: string; browser: Browser }> {
  const email = uniqueEmail('sched');
  const b = new Browser(server.url as unknown as NadirlineApp['app']);
  await b.post('/api/auth/signup', { email, name: 'Sched Owner', password: PASSWORD, organizationName }).expect(201);
  const message = await until('the verification mail', async () => mailbox.messages.find((m) => m.to === email));
  const link = message.links[0] ?? '';
  const token = new URL(link).searchParams.get('token') ?? link.split('/').at(-1) ?? '';
  await b.post('/api/auth/verify-email', { token }).expect(200);
  const signin = await b.signIn(email);
  expect(signin.status).toBe(200);
  return { id: signin.body.memberships[0].organization.id as string, owner: email, browser: b };
}

async function satellite(server: StartedServer, b: Browser, orgId: string, name: string, ageDaysAtT0: number, catalogNumber: string): Promise<void> {
  const key = await b.post(`/api/orgs/${orgId}/keys`, { kind: 'server', name: `Pipeline ${name}`, scopes: ['read', 'element-sets:write'] }).expect(201);
  const epochMs = Math.floor((T0 - ageDaysAtT0 * DAY) / 60_000) * 60_000;
  const res = await fetch(`${server.url}/v1/satellites`, {
    method: 'POST',
    headers: { Authorization: `Bearer ${key.body.secret}`, 'Content-Type': 'application/json' },
    body: JSON.stringify({ name, elements: leoTle({ epochMs, catalogNumber }) }),
  });
  expect(res.status).toBe(201);
}

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-sched-'));
  clockFile = path.join(dir, 'clock');
  setClock(T_SETUP);
  mailbox = new FakeMailbox();
  const smtpPort = await mailbox.start(0);
  stores = await testStores();
  const env = {
    DEMO: 'false',
    LOG_LEVEL: 'info',
    SCHEDULER_TICK_MS: '100',
    TEST_CLOCK_FILE: clockFile,
    SMTP_URL: `smtp://127.0.0.1:${smtpPort}`,
    // The killed holder's statement must not give up by itself (see the SIGKILL case).
    DATABASE_LOCK_TIMEOUT_MS: '60000',
    SESSION_SECRET: 'scheduler-test-session-secret-0123456789',
  };
  // Together, on one data directory (the SQLite file) or one database.
  servers = await Promise.all([0, 1, 2].map(() => startServer({ stores, keepStores: true, dataDir: dir, env })));
  db = stores.databaseUrl
    ? new Sequelize(stores.databaseUrl, { logging: false, dialect: 'postgres' })
    : new Sequelize({ dialect: 'sqlite', storage: path.join(dir, 'nadirline.sqlite'), logging: false });
  if (!stores.databaseUrl) await db.query('PRAGMA busy_timeout = 5000');

  // Organization A: 85 % of Starter's quota used this month, one set turning Aging and one Stale on T0.
  const a = await signUp(servers[0]!, 'Lease Centre A');
  await satellite(servers[0]!, a.browser, a.id, 'Harrier-1', 3.2, '91001');
  await satellite(servers[0]!, a.browser, a.id, 'Harrier-2', 14.5, '91002');
  // Organization B: a set that is still Fresh on T0 and turns Aging the next day.
  const b = await signUp(servers[1]!, 'Lease Centre B');
  await satellite(servers[1]!, b.browser, b.id, 'Plover-1', 2.5, '91003');
  orgs.a = { id: a.id, owner: a.owner };
  orgs.b = { id: b.id, owner: b.owner };
  const keyId = (await a.browser.get(`/api/orgs/${a.id}/keys`).expect(200)).body.keys[0].id as string;
  await db.query('INSERT INTO usage_daily ("organizationId", "apiKeyId", "endpoint", "day", "count") VALUES (?, ?, ?, ?, ?)', {
    replacements: [a.id, keyId, 'GET /v1/satellites/{id}/track', '2030-05-19', 85_000],
  });
  // The set-up day's runs are done before the clock moves on.
  await until('the set-up runs', async () => (await lease('stale-digest'))?.doneFor === '2030-04-10');
}, 180_000);

afterAll(async () => {
  await db?.close();
  await Promise.all(servers.map((s) => s.stop()));
  await stores?.drop();
  await mailbox?.stop();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe(`three server processes on one ${onPgRedis ? 'PostgreSQL database' : 'SQLite file'}, one shared test clock`, () => {
  it('run each due job once for its period and mail each notice exactly once', async () => {
    expect(mailsTo(orgs.a.owner, /used|newer element set/)).toHaveLength(0);
    setClock(T0);
    await until('quota-notices and stale-digest done for T0', async () => (await lease('quota-notices'))?.doneFor === '2030-05-20T00:00' && (await lease('stale-digest'))?.doneFor === '2030-05-20');
    // A few more ticks of every process: nothing runs twice.
    await sleep(1_000);

    const quota = mailsTo(orgs.a.owner, /has used 80 % of its Nadirline requests for 2030-05/);
    expect(quota).toHaveLength(1);
    expect(quota[0]!.text).toContain('85,000 of the 100,000 requests');
    const digest = mailsTo(orgs.a.owner, /satellites need a newer element set/);
    expect(digest).toHaveLength(1);
    expect(digest[0]!.text).toMatch(/Harrier-1 \(91001\): element set 3\.2 days old, now Aging/);
    expect(digest[0]!.text).toMatch(/Harrier-2 \(91002\): element set 14\.5 days old, now Stale/);
    expect(mailsTo(orgs.b.owner, /used|newer element set/)).toHaveLength(0);

    const runs = runsLogged();
    for (const run of ['quota-notices 2030-05-20T00:00', 'stale-digest 2030-05-20', 'payments-grace 2030-05-20T00:00']) {
      expect(runs.filter((r) => r === run), runs.join('\n')).toHaveLength(1);
    }
    const pids = servers.map((s) => s.pid);
    for (const name of ['quota-notices', 'stale-digest']) {
      const row = await lease(name);
      expect(row?.leaseUntil ?? null).toBeNull();
      expect(pids).toContain(pidOf(row?.holder ?? null));
    }
    const ranBy = new Set(runs.map((r) => r));
    console.log(`scheduler over 3 processes (${onPgRedis ? 'PostgreSQL' : 'SQLite'}): ${runs.length} runs logged for ${ranBy.size} job periods; quota mails ${quota.length}, digest mails ${digest.length}; stale-digest ran in pid ${pidOf((await lease('stale-digest'))?.holder ?? null)}`);
  }, 60_000);

  it.runIf(onPgRedis)('a holder killed with SIGKILL mid-run is taken over by another process once its lease expires, and the notice is mailed once', async () => {
    const pool = new pg.Client({ connectionString: stores.databaseUrl ?? '' });
    await pool.connect();
    try {
      // The test takes organization B's digest of 2030-05-21 first, in a transaction it keeps open:
      // the holder's INSERT of the same notice waits for it, mid-run.
      const dedupeKey = `stale-digest:${orgs.b.id}:2030-05-21`;
      await pool.query('BEGIN');
      await pool.query(`INSERT INTO notices ("organizationId", "kind", "dedupeKey", "subject", "body", "detail", "createdAt") VALUES ($1, 'stale-digest', $2, 'held by the test', '', '{}', now())`, [orgs.b.id, dedupeKey]);
      setClock(T0 + DAY);
      // The holder has claimed 2030-05-21 and is mid-run; mostly its INSERT is seen waiting on the held row.
      const waiting = await until('a holder of the 2030-05-21 run', async () => {
        const row = await lease('stale-digest');
        return row?.holder && row.leaseUntil && row.doneFor === '2030-05-20' ? row : null;
      });
      const lockWaiters = async () =>
        Number((await pool.query<{ n: string }>(`SELECT count(*) AS n FROM pg_stat_activity WHERE datname = current_database() AND wait_event_type = 'Lock' AND query LIKE 'INSERT INTO "notices"%'`)).rows[0]?.n);
      const seenWaiting = await until('the holder\u2019s INSERT waiting on the held notice', async () => (await lockWaiters()) >= 1, 5_000).catch(() => false);
      const victimPid = pidOf(waiting.holder);
      const victim = servers.find((s) => s.pid === victimPid);
      expect(victim, `holder ${waiting.holder} is one of the three`).toBeDefined();
      const killedAt = Date.now();
      process.kill(victimPid, 'SIGKILL');

      // Its backend notices the dead client (client_connection_check_interval) and drops the
      // waiting INSERT, instead of committing it once the test lets go (the digest would then be
      // recorded as told and never mailed).
      await until('the dead holder\u2019s statement to end', async () => (await lockWaiters()) === 0, 10_000);
      const orphanGoneMs = Date.now() - killedAt;
      await pool.query('ROLLBACK');

      // The lease still runs on the shared clock: nobody takes the run over yet.
      await sleep(800);
      expect((await lease('stale-digest'))?.holder).toBe(waiting.holder);
      expect((await lease('stale-digest'))?.doneFor).toBe('2030-05-20');
      expect(mailsTo(orgs.b.owner, /needs a newer element set/)).toHaveLength(0);

      // Past the lease: one of the two survivors runs it.
      setClock(T0 + DAY + LEASE_MS + 60_000);
      const done = await until('the run taken over', async () => {
        const row = await lease('stale-digest');
        return row?.doneFor === '2030-05-21' ? row : null;
      });
      await sleep(1_000);
      const survivors = servers.filter((s) => s !== victim).map((s) => s.pid);
      expect(survivors).toContain(pidOf(done.holder));
      const mails = mailsTo(orgs.b.owner, /needs a newer element set/);
      expect(mails).toHaveLength(1);
      expect(mails[0]!.text).toMatch(/Plover-1 \(91003\): element set 3\.5 days old, now Aging/);
      // Organization A's sets changed no class on 2030-05-21: no second digest.
      expect(mailsTo(orgs.a.owner, /newer element set/)).toHaveLength(1);
      expect(runsLogged().filter((r) => r === 'stale-digest 2030-05-21')).toHaveLength(1);
      console.log(`SIGKILL of the stale-digest holder (pid ${victimPid}) mid-run: ${seenWaiting ? `its INSERT waiting on the held notice ended ${orphanGoneMs} ms later` : 'it was killed before its INSERT was seen waiting'}; pid ${pidOf(done.holder)} took the run over after the lease expired; 1 digest mailed`);
    } finally {
      await pool.end();
    }
  }, 60_000);
});
