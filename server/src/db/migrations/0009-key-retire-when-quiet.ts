/**
 * A replaced key retires when quiet: it keeps answering until no request has used it for
 * `retireQuietMinutes`, and at the latest at `graceUntil` (the owner's "retire by" date).
 * `replacedAt` is when it was replaced (the quiet spell counts from there or from its last use).
 * Keys replaced before this migration keep their date and get no quiet rule (null).
 */
import { DataTypes, type QueryInterface } from 'sequelize';

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.addColumn('api_keys', 'replacedAt', { type: DataTypes.DATE, allowNull: true });
  await qi.addColumn('api_keys', 'retireQuietMinutes', { type: DataTypes.INTEGER, allowNull: true });
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.removeColumn('api_keys', 'retireQuietMinutes');
  await qi.removeColumn('api_keys', 'replacedAt');
}
