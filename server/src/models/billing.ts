/** Models for payments: provider events already handled and the invoices the provider reported (migration 0011). */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** One row per provider event handled; the primary key makes "handled once" hold across processes. */
export class PaymentEvent extends Model<InferAttributes<PaymentEvent>, InferCreationAttributes<PaymentEvent>> {
  declare id: string;
  declare type: string;
  declare organizationId: string | null;
  declare createdAt: CreationOptional<Date>;
}

export class Invoice extends Model<InferAttributes<Invoice>, InferCreationAttributes<Invoice>> {
  /** The provider's invoice id. */
  declare id: string;
  declare organizationId: string;
  declare number: string | null;
  /** paid | open | void | uncollectible | draft */
  declare status: string;
  /** Minor units (cents). */
  declare amountDue: number;
  declare amountPaid: number;
  declare currency: string;
  declare periodStart: Date | null;
  declare periodEnd: Date | null;
  declare hostedUrl: string | null;
  declare pdfUrl: string | null;
  declare issuedAt: Date;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export function initBillingModels(sequelize: Sequelize): void {
  PaymentEvent.init(
    {
      id: { type: DataTypes.STRING(100), primaryKey: true },
      type: { type: DataTypes.STRING(80), allowNull: false },
      organizationId: { type: DataTypes.STRING(40), allowNull: true },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'payment_events', updatedAt: false },
  );
  Invoice.init(
    {
      id: { type: DataTypes.STRING(100), primaryKey: true },
      organizationId: { type: DataTypes.STRING(40), allowNull: false },
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
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'invoices' },
  );
}
