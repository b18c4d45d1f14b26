/**
 * Database: one Sequelize instance over SQLite (WAL) by default, PostgreSQL when DATABASE_URL
 * is set. The schema comes from migrations (umzug), never from sync().
 *
 *   openDatabase(config) -> Sequelize          (migrates first when MIGRATE_ON_START, the default)
 *   migrate(config) -> { applied: string[] }   (what `npm run migrate` runs)
 *   pendingMigrations(config) -> string[]
 *   isPostgres(sequelize) -> boolean
 *
 * Migrations run once however many processes start together. They run on a connection of their
 * own (a one-connection Sequelize instance), so each migration and the row that records it share
 * one transaction on that connection:
 *   - PostgreSQL: a session advisory lock (MIGRATION_LOCK_ID) is held around umzug.up(); each
 *     migration runs in BEGIN ... COMMIT (PostgreSQL's DDL is transactional).
 *   - SQLite: BEGIN IMMEDIATE takes the file's write lock for the whole run; a second process waits
 *     for it and then finds nothing pending. All pending migrations share that one transaction.
 */
import fs from 'node:fs';
import { Sequelize, type Options } from 'sequelize';
import { SequelizeStorage, Umzug } from 'umzug';
import type { Config } from '../config.ts';
import { initModels } from '../models/index.ts';
import * as m0001 from './migrations/0001-initial.ts';
import * as m0004 from './migrations/0004-usage-flushes.ts';

/** Migrations in order. Add a new file and append it here; never edit a shipped one. */
const MIGRATIONS = [
  { name: '0001-initial', ...m0001 },
  { name: '0004-usage-flushes', ...m0004 },
];

/** Key of the PostgreSQL advisory lock taken around migrations ("nadirline" in letters, as a number). */
export const MIGRATION_LOCK_ID = 0x6e6164_69726c;

export type DatabaseConfig = Pick<
  Config,
  'DATABASE_URL' | 'SQLITE_FILE' | 'dataDir' | 'DATABASE_POOL_MAX' | 'DATABASE_SSL' | 'DATABASE_CA_FILE' | 'MIGRATE_ON_START'
>;

export function isPostgres(sequelize: Sequelize): boolean {
  return sequelize.getDialect() === 'postgres';
}

/** Sequelize options for PostgreSQL: pool size and TLS from the configuration. */
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
    dialectOptions: ssl ? { ssl } : {},
  };
}

async function connect(config: DatabaseConfig, poolMax = config.DATABASE_POOL_MAX): Promise<Sequelize> {
  if (config.DATABASE_URL) return new Sequelize(config.DATABASE_URL, postgresOptions(config, poolMax));
  fs.mkdirSync(config.dataDir, { recursive: true });
  const sequelize = new Sequelize({ dialect: 'sqlite', storage: config.SQLITE_FILE, logging: false });
  // WAL lets readers run while a writer writes; busy_timeout waits instead of failing at once.
  await sequelize.query('PRAGMA journal_mode = WAL;');
  await sequelize.query('PRAGMA busy_timeout = 5000;');
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

/** Apply pending migrations, once across processes (see the file comment). */
export async function migrate(config: DatabaseConfig): Promise<{ applied: string[] }> {
  // One connection: every query of a migration, and the row that records it, go over it.
  const sequelize = await connect(config, 1);
  const applied: string[] = [];
  try {
    const umzug = umzugFor(sequelize);
    umzug.on('migrated', ({ name }) => {
      applied.push(name);
    });
    if (isPostgres(sequelize)) {
      await sequelize.query('SELECT pg_advisory_lock(:id)', { replacements: { id: MIGRATION_LOCK_ID } });
      try {
        let open = false;
        umzug.on('migrating', async () => {
          await sequelize.query('BEGIN');
          open = true;
        });
        umzug.on('migrated', async () => {
          await sequelize.query('COMMIT');
          open = false;
        });
        try {
          await umzug.up();
        } catch (err) {
          if (open) await sequelize.query('ROLLBACK');
          throw err;
        }
      } finally {
        await sequelize.query('SELECT pg_advisory_unlock(:id)', { replacements: { id: MIGRATION_LOCK_ID } });
      }
    } else {
      // A process that finds the file locked waits for the one migrating (up to a minute).
      await sequelize.query('PRAGMA busy_timeout = 60000;');
      await sequelize.query('PRAGMA journal_mode = WAL;');
      // The migrations table first, outside the transaction (umzug creates it on first use).
      await umzug.executed();
      await sequelize.query('BEGIN IMMEDIATE');
      try {
        await umzug.up();
        await sequelize.query('COMMIT');
      } catch (err) {
        await sequelize.query('ROLLBACK');
        applied.length = 0;
        throw err;
      }
    }
  } finally {
    await sequelize.close();
  }
  return { applied };
}
