/**
 * Webhooks out: an organization's endpoints (URL, event kinds, paused or not, the signing secret
 * sealed with a key derived from SESSION_SECRET), the events written in the same transaction as
 * what they report (the outbox), one delivery per event and endpoint (claimed by one process at a
 * time through `holder` and `leaseUntil`), and every attempt of a delivery with its answer.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.createTable('webhook_endpoints', {
    id: { type: DataTypes.STRING(40), primaryKey: true, allowNull: false },
    organizationId: { type: DataTypes.STRING(40), allowNull: false, references: { model: 'organizations', key: 'id' }, onDelete: 'CASCADE' },
    url: { type: DataTypes.STRING(2000), allowNull: false },
    description: { type: DataTypes.STRING(200), allowNull: false, defaultValue: '' },
    /** The event kinds sent to this endpoint (a JSON list). */
    events: { type: DataTypes.JSON, allowNull: false },
    /** active | paused */
    status: { type: DataTypes.STRING(20), allowNull: false },
    /** The signing secret, sealed (AES-256-GCM); never answered after creation or rotation. */
    secretSealed: { type: DataTypes.STRING(400), allowNull: false },
    secretLastFour: { type: DataTypes.STRING(8), allowNull: false },
    secretRotatedAt: { type: DataTypes.DATE, allowNull: true },
    createdByUserId: { type: DataTypes.STRING(40), allowNull: true },
    createdAt: { type: DataTypes.DATE, allowNull: false },
    updatedAt: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex('webhook_endpoints', ['organizationId']);
  await qi.createTable('webhook_events', {
    id: { type: DataTypes.STRING(40), primaryKey: true, allowNull: false },
    organizationId: { type: DataTypes.STRING(40), allowNull: false, references: { model: 'organizations', key: 'id' }, onDelete: 'CASCADE' },
    type: { type: DataTypes.STRING(60), allowNull: false },
    /** Unique when set: a threshold or a day's stale list is one event however many processes see it. */
    dedupeKey: { type: DataTypes.STRING(200), allowNull: true, unique: true },
    /** The exact JSON body every delivery of the event sends. */
    payload: { type: DataTypes.TEXT, allowNull: false },
    createdAt: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex('webhook_events', ['organizationId', 'createdAt']);
  await qi.createTable('webhook_deliveries', {
    id: { type: DataTypes.STRING(40), primaryKey: true, allowNull: false },
    eventId: { type: DataTypes.STRING(40), allowNull: false, references: { model: 'webhook_events', key: 'id' }, onDelete: 'CASCADE' },
    endpointId: { type: DataTypes.STRING(40), allowNull: false, references: { model: 'webhook_endpoints', key: 'id' }, onDelete: 'CASCADE' },
    organizationId: { type: DataTypes.STRING(40), allowNull: false, references: { model: 'organizations', key: 'id' }, onDelete: 'CASCADE' },
    /** pending | paused | delivered | failed */
    status: { type: DataTypes.STRING(20), allowNull: false },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    nextAttemptAt: { type: DataTypes.DATE, allowNull: true },
    holder: { type: DataTypes.STRING(80), allowNull: true },
    leaseUntil: { type: DataTypes.DATE, allowNull: true },
    lastStatusCode: { type: DataTypes.INTEGER, allowNull: true },
    lastError: { type: DataTypes.STRING(500), allowNull: true },
    deliveredAt: { type: DataTypes.DATE, allowNull: true },
    /** The delivery this one sends again (the console's "send again"). */
    redeliveryOf: { type: DataTypes.STRING(40), allowNull: true },
    createdAt: { type: DataTypes.DATE, allowNull: false },
    updatedAt: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex('webhook_deliveries', ['status', 'nextAttemptAt']);
  await qi.addIndex('webhook_deliveries', ['organizationId', 'createdAt']);
  await qi.addIndex('webhook_deliveries', ['endpointId', 'createdAt']);
  await qi.createTable('webhook_attempts', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    deliveryId: { type: DataTypes.STRING(40), allowNull: false, references: { model: 'webhook_deliveries', key: 'id' }, onDelete: 'CASCADE' },
    number: { type: DataTypes.INTEGER, allowNull: false },
    startedAt: { type: DataTypes.DATE, allowNull: false },
    statusCode: { type: DataTypes.INTEGER, allowNull: true },
    error: { type: DataTypes.STRING(500), allowNull: true },
    durationMs: { type: DataTypes.INTEGER, allowNull: false },
  });
  await qi.addIndex('webhook_attempts', ['deliveryId', 'number'], { unique: true });
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.dropTable('webhook_attempts');
  await qi.dropTable('webhook_deliveries');
  await qi.dropTable('webhook_events');
  await qi.dropTable('webhook_endpoints');
}
