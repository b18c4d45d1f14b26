/**
 * Database: one Sequelize instance over SQLite (WAL) by default, PostgreSQL when DATABASE_URL
 * is set. The schema comes from migrations (umzug), never from sync().
 */
import fs from 'node:fs';
import { Sequelize } from 'sequelize';
import { SequelizeStorage, Umzug } from 'umzug';
import type { Config } from '../config.ts';
import { initModels } from '../models/index.ts';
import * as m0001 from './migrations/0001-initial.ts';
import * as m0006 from './migrations/0006-element-set-continuity.ts';
import * as m0007 from './migrations/0007-confirm-suspicious-sets.ts';

/** Migrations in order. Add a new file and append it here; never edit a shipped one. */
const MIGRATIONS = [
  { name: '0001-initial', ...m0001 },
  { name: '0006-element-set-continuity', ...m0006 },
  { name: '0007-confirm-suspicious-sets', ...m0007 },
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
