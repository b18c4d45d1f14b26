/**
 * Deleting a key hides it rather than removing its row: `deletedAt` set. The key no longer
 * authenticates and leaves the console's key list, while the usage counted for it, the activity
 * log and the element sets it uploaded keep its name. Null for every key that was not deleted.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.addColumn('api_keys', 'deletedAt', { type: DataTypes.DATE, allowNull: true });
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.removeColumn('api_keys', 'deletedAt');
}
