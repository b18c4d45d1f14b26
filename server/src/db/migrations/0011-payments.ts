/**
 * Payments through the provider: subscription state the webhooks keep (cancel at period end,
 * grace after a failed payment, the time of the newest event applied), the provider events
 * already handled (one row per event id, so each is handled once across processes) and the
 * organization's invoices as the provider reported them.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.addColumn('subscriptions', 'cancelAtPeriodEnd', { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false });
  await qi.addColumn('subscriptions', 'graceUntil', { type: DataTypes.DATE, allowNull: true });
  await qi.addColumn('subscriptions', 'lapsedAt', { type: DataTypes.DATE, allowNull: true });
  await qi.addColumn('subscriptions', 'providerEventAt', { type: DataTypes.DATE, allowNull: true });
  await qi.addIndex('subscriptions', ['providerCustomerId']);
  await qi.createTable('payment_events', {
    id: { type: DataTypes.STRING(100), primaryKey: true, allowNull: false },
    type: { type: DataTypes.STRING(80), allowNull: false },
    organizationId: { type: DataTypes.STRING(40), allowNull: true },
    createdAt: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.createTable('invoices', {
    id: { type: DataTypes.STRING(100), primaryKey: true, allowNull: false },
    organizationId: { type: DataTypes.STRING(40), allowNull: false, references: { model: 'organizations', key: 'id' }, onDelete: 'CASCADE' },
    number: { type: DataTypes.STRING(60), allowNull: true },
    status: { type: DataTypes.STRING(30), allowNull: false },
    amountDue: { type: DataTypes.INTEGER, allowNull: false },
    amountPaid: { type: DataTypes.INTEGER, allowNull: false },
    currency: { type: DataTypes.STRING(3), allowNull: false },
    periodStart: { type: DataTypes.DATE, allowNull: true },
    periodEnd: { type: DataTypes.DATE, allowNull: true },
    hostedUrl: { type: DataTypes.STRING(500), allowNull: true },
    pdfUrl: { type: DataTypes.STRING(500), allowNull: true },
    issuedAt: { type: DataTypes.DATE, allowNull: false },
    createdAt: { type: DataTypes.DATE, allowNull: false },
    updatedAt: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex('invoices', ['organizationId', 'issuedAt']);
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.dropTable('invoices');
  await qi.dropTable('payment_events');
  await qi.removeIndex('subscriptions', ['providerCustomerId']);
  for (const c of ['providerEventAt', 'lapsedAt', 'graceUntil', 'cancelAtPeriodEnd']) await qi.removeColumn('subscriptions', c);
}
