/**
 * Organization setting: hold element sets that do not continue the orbit (or look like a
 * manoeuvre) until an editor confirms them, instead of making them current at once.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.addColumn('organizations', 'confirmSuspiciousSets', { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false });
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.removeColumn('organizations', 'confirmSuspiciousSets');
}
