/**
 * Where an integration test keeps its data. The integration suite runs twice in `npm test`:
 * once on SQLite with everything in memory, once (project integration-pg, NL_TEST_STORES=pg-redis)
 * on PostgreSQL and Redis. Test helpers call testStores() and add its env to the app's.
 *
 *   const stores = await testStores();   // pg-redis: a new database nl_it_<random> and a Redis key prefix
 *   loadConfig({ ..., ...stores.env })   // DATABASE_URL, REDIS_URL, REDIS_KEY_PREFIX (empty on SQLite)
 *   await stores.drop()                  // drops the database and deletes the prefix's Redis keys
 *
 * NL_TEST_PG_URL (default postgres://postgres@127.0.0.1:5432/postgres) is the server the databases
 * are made on, NL_TEST_REDIS_URL (default redis://127.0.0.1:6379) the Redis, NL_TEST_DB_PREFIX
 * (default nl_it) the start of every database name.
 */
import crypto from 'node:crypto';
import net from 'node:net';
import pg from 'pg';
import { createClient } from 'redis';

export const PG_URL = process.env.NL_TEST_PG_URL ?? 'postgres://postgres@127.0.0.1:5432/postgres';
export const REDIS_URL = process.env.NL_TEST_REDIS_URL ?? 'redis://127.0.0.1:6379';
export const DB_PREFIX = process.env.NL_TEST_DB_PREFIX ?? 'nl_it';

/** Is this run the PostgreSQL + Redis one? */
export const onPgRedis = process.env.NL_TEST_STORES === 'pg-redis';

export interface TestStores {
  env: Record<string, string>;
  /** The database's URL (pg-redis only). */
  databaseUrl: string | null;
  drop(): Promise<void>;
}

/** A URL on the same server with another database name. */
export function withDatabase(url: string, name: string): string {
  const u = new URL(url);
  u.pathname = `/${name}`;
  return u.toString();
}

/** A fresh PostgreSQL database and Redis key prefix for one test app, or nothing on the SQLite run. */
export async function testStores(opts: { force?: boolean } = {}): Promise<TestStores> {
  if (!onPgRedis && !opts.force) return { env: {}, databaseUrl: null, drop: async () => undefined };
  const id = crypto.randomBytes(6).toString('hex');
  const name = `${DB_PREFIX}_${id}`;
  const admin = new pg.Client({ connectionString: PG_URL });
  await admin.connect();
  try {
    await admin.query(`CREATE DATABASE "${name}"`);
  } finally {
    await admin.end();
  }
  const prefix = `nl:it:${id}:`;
  const databaseUrl = withDatabase(PG_URL, name);
  return {
    env: { DATABASE_URL: databaseUrl, REDIS_URL, REDIS_KEY_PREFIX: prefix },
    databaseUrl,
    async drop() {
      const a = new pg.Client({ connectionString: PG_URL });
      await a.connect();
      try {
        await a.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`);
      } finally {
        await a.end();
      }
      const r = createClient({ url: REDIS_URL });
      await r.connect();
      try {
        for await (const keys of r.scanIterator({ MATCH: `${prefix}*`, COUNT: 500 })) if (keys.length) await r.del(keys);
      } finally {
        await r.close();
      }
    },
  };
}

function answers(url: string, fallbackPort: number): Promise<boolean> {
  const u = new URL(url);
  return new Promise((resolve) => {
    const socket = net.connect({ host: u.hostname || '127.0.0.1', port: Number(u.port || fallbackPort) });
    const done = (ok: boolean) => {
      socket.destroy();
      resolve(ok);
    };
    socket.setTimeout(1_000, () => done(false));
    socket.once('connect', () => done(true));
    socket.once('error', () => done(false));
  });
}

/** Do PostgreSQL and Redis answer? (what decides whether the second integration run happens) */
export async function storesReachable(): Promise<{ ok: boolean; why: string }> {
  const [p, r] = await Promise.all([answers(PG_URL, 5432), answers(REDIS_URL, 6379)]);
  const missing = [p ? '' : `PostgreSQL (${new URL(PG_URL).host})`, r ? '' : `Redis (${new URL(REDIS_URL).host})`].filter(Boolean);
  return { ok: missing.length === 0, why: missing.length ? `${missing.join(' and ')} not answering` : '' };
}
