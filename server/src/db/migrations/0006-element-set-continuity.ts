/**
 * Continuity of element sets: each stored set keeps the continuity check made when it arrived
 * (the previous set's prediction against it at its epoch) and whether it waits for an editor's
 * confirmation before it may be used. Portable column types (SQLite and PostgreSQL).
 */
import { DataTypes, type QueryInterface } from 'sequelize';

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.addColumn('element_sets', 'continuity', { type: DataTypes.JSON, allowNull: true });
  await qi.addColumn('element_sets', 'continuityClass', { type: DataTypes.STRING(24), allowNull: true });
  await qi.addColumn('element_sets', 'awaitingConfirmation', { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false });
  await qi.addColumn('element_sets', 'confirmedAt', { type: DataTypes.DATE, allowNull: true });
  await qi.addColumn('element_sets', 'confirmedByUserId', { type: DataTypes.STRING(40), allowNull: true });
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  for (const c of ['confirmedByUserId', 'confirmedAt', 'awaitingConfirmation', 'continuityClass', 'continuity']) {
    await qi.removeColumn('element_sets', c);
  }
}
