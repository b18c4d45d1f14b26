/**
 * Database: one Sequelize instance over SQLite (WAL) by default, PostgreSQL when DATABASE_URL
 * is set. The schema comes from migrations (umzug), never from sync().
 */
import fs from 'node:fs';
import { Sequelize, Transaction } from 'sequelize';
import { SequelizeStorage, Umzug } from 'umzug';
import type { Config } from '../config.ts';
import { initModels } from '../models/index.ts';
import * as m0001 from './migrations/0001-initial.ts';
import * as m0011 from './migrations/0011-payments.ts';
import * as m0012 from './migrations/0012-notices.ts';

/** Migrations in order. Add a new file and append it here; never edit a shipped one. */
const MIGRATIONS = [
  { name: '0001-initial', ...m0001 },
  { name: '0011-payments', ...m0011 },
  { name: '0012-notices', ...m0012 },
];

export async function openDatabase(config: Pick<Config, 'DATABASE_URL' | 'SQLITE_FILE' | 'dataDir'>): Promise<Sequelize> {
  let sequelize: Sequelize;
  if (config.DATABASE_URL) {
    sequelize = new Sequelize(config.DATABASE_URL, { logging: false });
  } else {
    fs.mkdirSync(config.dataDir, { recursive: true });
    sequelize = new Sequelize({ dialect: 'sqlite', storage: config.SQLITE_FILE, logging: false });
    // WAL lets readers run while a writer writes; busy_timeout waits instead of failing at once.
    await sequelize.query('PRAGMA journal_mode = WAL;');
    await sequelize.query('PRAGMA busy_timeout = 5000;');
    await sequelize.query('PRAGMA foreign_keys = ON;');
    // Sequelize opens one more SQLite connection per transaction; each waits for a writer too.
    const manager = sequelize.connectionManager as unknown as { getConnection(o?: unknown): Promise<{ configure(k: 'busyTimeout', ms: number): void }> };
    const getConnection = manager.getConnection.bind(manager);
    manager.getConnection = async (o) => {
      const connection = await getConnection(o);
      connection.configure('busyTimeout', 5000);
      return connection;
    };
  }
  initModels(sequelize);
  await migrate(sequelize);
  return sequelize;
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

/**
 * A transaction that writes: on SQLite it takes the write lock at BEGIN (IMMEDIATE), so two
 * transactions that read then write wait for each other instead of failing with SQLITE_BUSY.
 * PostgreSQL ignores the type.
 */
export function writeTransaction<T>(sequelize: Sequelize, fn: (t: Transaction) => Promise<T>): Promise<T> {
  return sequelize.transaction({ type: Transaction.TYPES.IMMEDIATE }, fn);
}
