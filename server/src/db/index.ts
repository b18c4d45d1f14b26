/**
 * Database: one Sequelize instance over SQLite (WAL) by default, PostgreSQL when DATABASE_URL
 * is set. The schema comes from migrations (umzug), never from sync().
 *
 * SQLite writes (see write-lock.ts): every connection Sequelize opens (it opens one per
 * transaction) gets the busy timeout; transactions are IMMEDIATE, so a writer takes the write
 * lock when it begins instead of failing halfway when it first writes; and the process queues its
 * transactions so only one at a time holds the file. A lock that still cannot be had in time
 * surfaces as DatabaseBusyError (503 busy).
 */
import fs from 'node:fs';
import { Sequelize, Transaction } from 'sequelize';
import { SequelizeStorage, Umzug } from 'umzug';
import type { Config } from '../config.ts';
import { initModels } from '../models/index.ts';
import * as m0001 from './migrations/0001-initial.ts';
import * as m0002 from './migrations/0002-element-set-epoch-unique.ts';
import * as m0003 from './migrations/0003-session-ids-hashed.ts';
import * as m0006 from './migrations/0006-element-set-continuity.ts';
import * as m0007 from './migrations/0007-confirm-suspicious-sets.ts';
import * as m0009 from './migrations/0009-key-retire-when-quiet.ts';
import * as m0010 from './migrations/0010-usage-hourly-and-origins.ts';
import * as m0011 from './migrations/0011-payments.ts';
import * as m0012 from './migrations/0012-notices.ts';
import { DatabaseBusyError, isDatabaseBusy, WriteLock } from './write-lock.ts';

/** Migrations in order. Add a new file and append it here; never edit a shipped one. */
const MIGRATIONS = [
  { name: '0001-initial', ...m0001 },
  { name: '0002-element-set-epoch-unique', ...m0002 },
  { name: '0003-session-ids-hashed', ...m0003 },
  { name: '0006-element-set-continuity', ...m0006 },
  { name: '0007-confirm-suspicious-sets', ...m0007 },
  { name: '0009-key-retire-when-quiet', ...m0009 },
  { name: '0010-usage-hourly-and-origins', ...m0010 },
  { name: '0011-payments', ...m0011 },
  { name: '0012-notices', ...m0012 },
];

/** How long an SQLite connection waits for a lock held by another connection or process, ms. */
export const SQLITE_BUSY_TIMEOUT_MS = 5000;

export { DatabaseBusyError, isDatabaseBusy };

export async function openDatabase(config: Pick<Config, 'DATABASE_URL' | 'SQLITE_FILE' | 'dataDir'>): Promise<Sequelize> {
  let sequelize: Sequelize;
  if (config.DATABASE_URL) {
    sequelize = new Sequelize(config.DATABASE_URL, { logging: false });
  } else {
    fs.mkdirSync(config.dataDir, { recursive: true });
    sequelize = new Sequelize({ dialect: 'sqlite', storage: config.SQLITE_FILE, logging: false, transactionType: Transaction.TYPES.IMMEDIATE });
    busyTimeoutOnEveryConnection(sequelize);
    const lock = new WriteLock();
    writeLocks.set(sequelize, lock);
    queueTransactions(sequelize, lock);
    // WAL lets readers run while a writer writes.
    await sequelize.query('PRAGMA journal_mode = WAL;');
    await sequelize.query('PRAGMA foreign_keys = ON;');
  }
  initModels(sequelize);
  await migrate(sequelize);
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

export async function migrate(sequelize: Sequelize): Promise<void> {
  const umzug = new Umzug({
    migrations: MIGRATIONS.map((m) => ({
      name: m.name,
      up: async () => m.up({ context: sequelize.getQueryInterface() }),
      down: async () => m.down({ context: sequelize.getQueryInterface() }),
    })),
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize, tableName: 'schema_migrations' }),
    logger: undefined,
  });
  await umzug.up();
}

/** A transaction that writes (IMMEDIATE on SQLite, as every transaction here; PostgreSQL ignores the type). */
export function writeTransaction<T>(sequelize: Sequelize, fn: (t: Transaction) => Promise<T>): Promise<T> {
  return sequelize.transaction({ type: Transaction.TYPES.IMMEDIATE }, fn);
}
