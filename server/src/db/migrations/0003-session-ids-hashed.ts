/**
 * Sessions are stored under a hash of their id from now on (http/session.ts storedSid). Rows
 * written before were keyed by the id itself, as the cookie carries it: they are removed, so no
 * readable session id stays in the database (everyone signed in signs in once more).
 */
import type { QueryInterface } from 'sequelize';

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.bulkDelete('Sessions', {});
}

export async function down(): Promise<void> {
  // Nothing to restore: the removed ids are not kept anywhere.
}
