/**
 * `npm run migrate`: apply pending migrations to the configured database (DATABASE_URL, else the
 * SQLite file) and exit. For deployments that migrate once before starting or replacing the API
 * processes (then start those with MIGRATE_ON_START=false). Safe to run while servers start: the
 * same lock as at start-up keeps migrations to one runner at a time.
 */
import { loadConfig } from './config.ts';
import { migrate } from './db/index.ts';

const config = loadConfig();
const where = config.DATABASE_URL ? 'PostgreSQL' : `SQLite ${config.SQLITE_FILE}`;
try {
  const { applied } = await migrate(config);
  process.stdout.write(applied.length ? `Applied ${applied.length} migration(s) to ${where}: ${applied.join(', ')}\n` : `Nothing to migrate: ${where} is up to date.\n`);
} catch (err) {
  process.stderr.write(`Migration failed on ${where}: ${(err as Error).stack ?? String(err)}\n`);
  process.exit(1);
}
