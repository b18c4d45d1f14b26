/**
 * Database: one Sequelize instance over SQLite (WAL) by default, PostgreSQL when DATABASE_URL
 * is set. The schema comes from migrations (umzug), never from sync().
 *
 *   openDatabase(config) -> Sequelize          (migrates first when MIGRATE_ON_START, the default)
 *   migrate(config) -> { applied: string[] }   (what `npm run migrate` runs)
 *   pendingMigrations(config) -> string[]
 *   isPostgres(sequelize) -> boolean
 *
 * SQLite writes (see write-lock.ts): every connection Sequelize opens (it opens one per
 * transaction) gets the busy timeout; transactions are IMMEDIATE, so a writer takes the write
 * lock when it begins instead of failing halfway when it first writes; and the process queues its
 * transactions so only one at a time holds the file. A lock that still cannot be had in time
 * surfaces as DatabaseBusyError (503 busy).
 *
 * Migrations run once however many processes start together, on a connection of their own:
 *   - PostgreSQL: a session advisory lock (MIGRATION_LOCK_ID) is held around umzug.up() on a
 *     one-connection Sequelize instance, and each migration runs in BEGIN ... COMMIT together
 *     with the row that records it (PostgreSQL's DDL is transactional). A migration that opens its
 *     own transaction (0002) commits there.
 *   - SQLite: a lock file beside the database (`<file>.migrating`, holding the pid; left by a dead
 *     process, it is taken over) keeps other processes out of umzug.up(); a migration that
 *     rewrites data does so in its own IMMEDIATE transaction.
 */
import fs from 'node:fs';
import { Sequelize, Transaction, type Options } from 'sequelize';
import { SequelizeStorage, Umzug } from 'umzug';
import type { Config } from '../config.ts';
import { initModels } from '../models/index.ts';
import * as m0001 from './migrations/0001-initial.ts';
import * as m0002 from './migrations/0002-element-set-epoch-unique.ts';
import * as m0003 from './migrations/0003-session-ids-hashed.ts';
import * as m0004 from './migrations/0004-usage-flushes.ts';
import * as m0006 from './migrations/0006-element-set-continuity.ts';
import * as m0007 from './migrations/0007-confirm-suspicious-sets.ts';
import * as m0009 from './migrations/0009-key-retire-when-quiet.ts';
import * as m0010 from './migrations/0010-usage-hourly-and-origins.ts';
import * as m0011 from './migrations/0011-payments.ts';
import * as m0012 from './migrations/0012-notices.ts';
import * as m0013 from './migrations/0013-webhooks.ts';
import * as m0014 from './migrations/0014-key-deleted.ts';
import { DatabaseBusyError, isDatabaseBusy, WriteLock } from './write-lock.ts';

/** Migrations in order. Add a new file and append it here; never edit a shipped one. */
const MIGRATIONS = [
  { name: '0001-initial', ...m0001 },
  { name: '0002-element-set-epoch-unique', ...m0002 },
  { name: '0003-session-ids-hashed', ...m0003 },
  { name: '0004-usage-flushes', ...m0004 },
  { name: '0006-element-set-continuity', ...m0006 },
  { name: '0007-confirm-suspicious-sets', ...m0007 },
  { name: '0009-key-retire-when-quiet', ...m0009 },
  { name: '0010-usage-hourly-and-origins', ...m0010 },
  { name: '0011-payments', ...m0011 },
  { name: '0012-notices', ...m0012 },
  { name: '0013-webhooks', ...m0013 },
  { name: '0014-key-deleted', ...m0014 },
];

/** How long an SQLite connection waits for a lock held by another connection or process, ms. */
export const SQLITE_BUSY_TIMEOUT_MS = 5000;

/** Key of the PostgreSQL advisory lock taken around migrations ("nadirline" in letters, as a number). */
export const MIGRATION_LOCK_ID = 0x6e6164_69726c;

/** How long a process waits for another one's migrations (SQLite lock file), ms. */
const MIGRATION_WAIT_MS = 120_000;

export { DatabaseBusyError, isDatabaseBusy };

export type DatabaseConfig = Pick<
  Config,
  'DATABASE_URL' | 'SQLITE_FILE' | 'dataDir' | 'DATABASE_POOL_MAX' | 'DATABASE_SSL' | 'DATABASE_CA_FILE' | 'MIGRATE_ON_START'
> &
  Partial<Pick<Config, 'DATABASE_LOCK_TIMEOUT_MS' | 'DATABASE_STATEMENT_TIMEOUT_MS'>>;

/**
 * How often a PostgreSQL backend checks that its client is still connected while a statement runs
 * (PostgreSQL 14+ on Linux), ms. A process killed while its statement waits for a lock would
 * otherwise leave that statement waiting, and it would commit once the lock came, after the
 * process that meant to act on its result was gone (a notice recorded and never mailed).
 */
export const PG_CLIENT_CHECK_MS = 1000;

export function isPostgres(sequelize: Sequelize): boolean {
  return sequelize.getDialect() === 'postgres';
}

/**
 * Sequelize options for PostgreSQL: pool size, TLS, and each connection's lock_timeout and
 * statement_timeout (a lock or statement over them fails with 55P03 / 57014, which the error
 * handler answers 503 `busy`) from the configuration.
 */
function postgresOptions(config: DatabaseConfig, poolMax: number): Options {
  let ssl: false | { rejectUnauthorized: boolean; ca?: string } = false;
  if (config.DATABASE_SSL === 'require') ssl = { rejectUnauthorized: false };
  if (config.DATABASE_SSL === 'verify') {
    ssl = { rejectUnauthorized: true, ...(config.DATABASE_CA_FILE ? { ca: fs.readFileSync(config.DATABASE_CA_FILE, 'utf8') } : {}) };
  }
  return {
    dialect: 'postgres',
    logging: false,
    pool: { max: poolMax, min: 0, idle: 10_000, acquire: 30_000 },
    dialectOptions: {
      ...(ssl ? { ssl } : {}),
      lock_timeout: config.DATABASE_LOCK_TIMEOUT_MS ?? 5_000,
      statement_timeout: config.DATABASE_STATEMENT_TIMEOUT_MS ?? 30_000,
      options: `-c client_connection_check_interval=${PG_CLIENT_CHECK_MS}`,
    },
  };
}

async function connect(config: DatabaseConfig, poolMax = config.DATABASE_POOL_MAX): Promise<Sequelize> {
  if (config.DATABASE_URL) return new Sequelize(config.DATABASE_URL, postgresOptions(config, poolMax));
  fs.mkdirSync(config.dataDir, { recursive: true });
  const sequelize = new Sequelize({ dialect: 'sqlite', storage: config.SQLITE_FILE, logging: false, transactionType: Transaction.TYPES.IMMEDIATE });
  busyTimeoutOnEveryConnection(sequelize);
  const lock = new WriteLock();
  writeLocks.set(sequelize, lock);
  queueTransactions(sequelize, lock);
  // WAL lets readers run while a writer writes.
  await sequelize.query('PRAGMA journal_mode = WAL;');
  await sequelize.query('PRAGMA foreign_keys = ON;');
  return sequelize;
}

export async function openDatabase(config: DatabaseConfig): Promise<Sequelize> {
  if (config.MIGRATE_ON_START) await migrate(config);
  else {
    const pending = await pendingMigrations(config);
    if (pending.length > 0) {
      throw new Error(`The database needs migrations ${pending.join(', ')}; run \`npm run migrate\` (or start with MIGRATE_ON_START=true).`);
    }
  }
  const sequelize = await connect(config);
  initModels(sequelize);
  return sequelize;
}

const writeLocks = new WeakMap<Sequelize, WriteLock>();

/** The queue of an SQLite database's transactions (undefined on PostgreSQL). */
export function writeLockOf(sequelize: Sequelize): WriteLock | undefined {
  return writeLocks.get(sequelize);
}

interface SqliteConnection {
  configure(option: 'busyTimeout', ms: number): void;
}

/** Sequelize opens a new SQLite connection per transaction; each gets the busy timeout before its first statement. */
function busyTimeoutOnEveryConnection(sequelize: Sequelize): void {
  const manager = (sequelize as unknown as { connectionManager: { getConnection(options?: unknown): Promise<SqliteConnection> } }).connectionManager;
  const configured = new WeakSet<object>();
  const getConnection = manager.getConnection.bind(manager);
  manager.getConnection = async (options?: unknown) => {
    const connection = await getConnection(options);
    if (!configured.has(connection)) {
      connection.configure('busyTimeout', SQLITE_BUSY_TIMEOUT_MS);
      configured.add(connection);
    }
    return connection;
  };
}

type TransactionFn = (t: Transaction) => Promise<unknown>;

/**
 * Every transaction of this process waits for its turn on `lock` (managed ones until their
 * callback settles, unmanaged ones until commit or rollback). A savepoint inside a transaction
 * that already holds the turn (options.transaction given) does not queue.
 */
function queueTransactions(sequelize: Sequelize, lock: WriteLock): void {
  const original = sequelize.transaction.bind(sequelize) as (options?: unknown, fn?: TransactionFn) => Promise<unknown>;
  const queued = async (a?: unknown, b?: unknown): Promise<unknown> => {
    const fn = (typeof a === 'function' ? a : b) as TransactionFn | undefined;
    const options = (typeof a === 'function' ? undefined : a) as { transaction?: unknown } | undefined;
    if (options?.transaction) return original(options, fn);
    const release = await lock.acquire();
    if (fn) {
      try {
        return await original(options ?? {}, fn);
      } finally {
        release();
      }
    }
    let t: Transaction;
    try {
      t = (await original(options ?? {})) as Transaction;
    } catch (err) {
      release();
      throw err;
    }
    const commit = t.commit.bind(t);
    const rollback = t.rollback.bind(t);
    t.commit = () => commit().finally(release);
    t.rollback = () => rollback().finally(release);
    return t;
  };
  (sequelize as unknown as { transaction: typeof queued }).transaction = queued;
}

function umzugFor(sequelize: Sequelize): Umzug<ReturnType<Sequelize['getQueryInterface']>> {
  return new Umzug({
    migrations: MIGRATIONS.map((m) => ({
      name: m.name,
      up: async () => m.up({ context: sequelize.getQueryInterface() }),
      down: async () => m.down({ context: sequelize.getQueryInterface() }),
    })),
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize, tableName: 'schema_migrations' }),
    logger: undefined,
  });
}

/** Names of the migrations not yet applied. */
export async function pendingMigrations(config: DatabaseConfig): Promise<string[]> {
  const sequelize = await connect(config, 2);
  try {
    return (await umzugFor(sequelize).pending()).map((m) => m.name);
  } finally {
    await sequelize.close();
  }
}

function processAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/** Run fn while holding `<file>.migrating` (created exclusively; taken over from a dead process). */
async function withLockFile<T>(file: string, fn: () => Promise<T>): Promise<T> {
  const lock = `${file}.migrating`;
  const until = Date.now() + MIGRATION_WAIT_MS;
  for (;;) {
    try {
      fs.writeFileSync(lock, String(process.pid), { flag: 'wx' });
      break;
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code !== 'EEXIST') throw err;
      const pid = Number.parseInt(fs.readFileSync(lock, 'utf8'), 10);
      if (pid > 0 && !processAlive(pid)) {
        fs.rmSync(lock, { force: true });
        continue;
      }
      if (Date.now() > until) throw new Error(`Another process (pid ${pid || 'unknown'}) has been migrating ${file} for over ${MIGRATION_WAIT_MS / 1000} s (lock file ${lock}).`);
      await new Promise((r) => setTimeout(r, 50));
    }
  }
  try {
    return await fn();
  } finally {
    fs.rmSync(lock, { force: true });
  }
}

/** Apply pending migrations, once across processes (see the file comment). */
export async function migrate(config: DatabaseConfig): Promise<{ applied: string[] }> {
  const applied: string[] = [];
  if (!config.DATABASE_URL) {
    fs.mkdirSync(config.dataDir, { recursive: true });
    await withLockFile(config.SQLITE_FILE, async () => {
      const sequelize = await connect(config);
      try {
        const umzug = umzugFor(sequelize);
        umzug.on('migrated', ({ name }) => {
          applied.push(name);
        });
        await umzug.up();
      } finally {
        await sequelize.close();
      }
    });
    return { applied };
  }
  // One connection: every query of a migration, and the row that records it, go over it.
  const sequelize = await connect(config, 1);
  try {
    const umzug = umzugFor(sequelize);
    let open = false;
    umzug.on('migrating', async () => {
      await sequelize.query('BEGIN');
      open = true;
    });
    umzug.on('migrated', async ({ name }) => {
      await sequelize.query('COMMIT');
      open = false;
      applied.push(name);
    });
    // Migrations wait for each other and may run long: no lock or statement limit on this connection.
    await sequelize.query('SET lock_timeout = 0');
    await sequelize.query('SET statement_timeout = 0');
    await sequelize.query('SELECT pg_advisory_lock(:id)', { replacements: { id: MIGRATION_LOCK_ID } });
    try {
      await umzug.up();
    } catch (err) {
      if (open) await sequelize.query('ROLLBACK');
      throw err;
    } finally {
      await sequelize.query('SELECT pg_advisory_unlock(:id)', { replacements: { id: MIGRATION_LOCK_ID } });
    }
  } finally {
    await sequelize.close();
  }
  return { applied };
}

/** A transaction that writes (IMMEDIATE on SQLite, as every transaction here; PostgreSQL ignores the type). */
export function writeTransaction<T>(sequelize: Sequelize, fn: (t: Transaction) => Promise<T>): Promise<T> {
  return sequelize.transaction({ type: Transaction.TYPES.IMMEDIATE }, fn);
}
