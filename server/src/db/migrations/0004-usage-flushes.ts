/**
 * usage_flushes: one row per batch of usage counters taken from Redis and written to usage_daily,
 * in the same transaction as the counts. A process that dies between writing a batch and deleting
 * it from Redis leaves the batch behind; whoever picks it up finds its id here and does not count
 * it twice. Old rows are pruned after a week.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.createTable('usage_flushes', {
    id: { type: DataTypes.STRING(160), primaryKey: true, allowNull: false },
    createdAt: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex('usage_flushes', ['createdAt']);
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.dropTable('usage_flushes');
}
