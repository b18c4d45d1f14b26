/** Models for webhooks out (migration 0013). */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

export class WebhookEndpoint extends Model<InferAttributes<WebhookEndpoint>, InferCreationAttributes<WebhookEndpoint>> {
  declare id: string;
  declare organizationId: string;
  declare url: string;
  declare description: CreationOptional<string>;
  declare events: string[];
  /** active | paused */
  declare status: string;
  declare secretSealed: string;
  declare secretLastFour: string;
  declare secretRotatedAt: Date | null;
  declare createdByUserId: string | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class WebhookEvent extends Model<InferAttributes<WebhookEvent>, InferCreationAttributes<WebhookEvent>> {
  declare id: string;
  declare organizationId: string;
  declare type: string;
  declare dedupeKey: string | null;
  declare payload: string;
  declare createdAt: Date;
}

export class WebhookDelivery extends Model<InferAttributes<WebhookDelivery>, InferCreationAttributes<WebhookDelivery>> {
  declare id: string;
  declare eventId: string;
  declare endpointId: string;
  declare organizationId: string;
  /** pending | paused | delivered | failed */
  declare status: string;
  declare attempts: CreationOptional<number>;
  declare nextAttemptAt: Date | null;
  declare holder: CreationOptional<string | null>;
  declare leaseUntil: CreationOptional<Date | null>;
  declare lastStatusCode: CreationOptional<number | null>;
  declare lastError: CreationOptional<string | null>;
  declare deliveredAt: CreationOptional<Date | null>;
  declare redeliveryOf: CreationOptional<string | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class WebhookAttempt extends Model<InferAttributes<WebhookAttempt>, InferCreationAttributes<WebhookAttempt>> {
  declare id: CreationOptional<number>;
  declare deliveryId: string;
  declare number: number;
  declare startedAt: Date;
  declare statusCode: number | null;
  declare error: string | null;
  declare durationMs: number;
}

export function initWebhookModels(sequelize: Sequelize): void {
  WebhookEndpoint.init(
    {
      id: { type: DataTypes.STRING(40), primaryKey: true },
      organizationId: { type: DataTypes.STRING(40), allowNull: false },
      url: { type: DataTypes.STRING(2000), allowNull: false },
      description: { type: DataTypes.STRING(200), allowNull: false, defaultValue: '' },
      events: { type: DataTypes.JSON, allowNull: false },
      status: { type: DataTypes.STRING(20), allowNull: false },
      secretSealed: { type: DataTypes.STRING(400), allowNull: false },
      secretLastFour: { type: DataTypes.STRING(8), allowNull: false },
      secretRotatedAt: { type: DataTypes.DATE, allowNull: true },
      createdByUserId: { type: DataTypes.STRING(40), allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'webhook_endpoints' },
  );
  WebhookEvent.init(
    {
      id: { type: DataTypes.STRING(40), primaryKey: true },
      organizationId: { type: DataTypes.STRING(40), allowNull: false },
      type: { type: DataTypes.STRING(60), allowNull: false },
      dedupeKey: { type: DataTypes.STRING(200), allowNull: true, unique: true },
      payload: { type: DataTypes.TEXT, allowNull: false },
      createdAt: { type: DataTypes.DATE, allowNull: false },
    },
    { sequelize, tableName: 'webhook_events', timestamps: false },
  );
  WebhookDelivery.init(
    {
      id: { type: DataTypes.STRING(40), primaryKey: true },
      eventId: { type: DataTypes.STRING(40), allowNull: false },
      endpointId: { type: DataTypes.STRING(40), allowNull: false },
      organizationId: { type: DataTypes.STRING(40), allowNull: false },
      status: { type: DataTypes.STRING(20), allowNull: false },
      attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      nextAttemptAt: { type: DataTypes.DATE, allowNull: true },
      holder: { type: DataTypes.STRING(80), allowNull: true },
      leaseUntil: { type: DataTypes.DATE, allowNull: true },
      lastStatusCode: { type: DataTypes.INTEGER, allowNull: true },
      lastError: { type: DataTypes.STRING(500), allowNull: true },
      deliveredAt: { type: DataTypes.DATE, allowNull: true },
      redeliveryOf: { type: DataTypes.STRING(40), allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'webhook_deliveries' },
  );
  WebhookAttempt.init(
    {
      id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
      deliveryId: { type: DataTypes.STRING(40), allowNull: false },
      number: { type: DataTypes.INTEGER, allowNull: false },
      startedAt: { type: DataTypes.DATE, allowNull: false },
      statusCode: { type: DataTypes.INTEGER, allowNull: true },
      error: { type: DataTypes.STRING(500), allowNull: true },
      durationMs: { type: DataTypes.INTEGER, allowNull: false },
    },
    { sequelize, tableName: 'webhook_attempts', timestamps: false },
  );
  WebhookDelivery.belongsTo(WebhookEvent, { foreignKey: 'eventId', as: 'event' });
  WebhookDelivery.belongsTo(WebhookEndpoint, { foreignKey: 'endpointId', as: 'endpoint' });
}
