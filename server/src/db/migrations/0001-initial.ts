/** Initial schema. Portable column types only, so PostgreSQL can run the same migration. */
import { DataTypes, type QueryInterface } from 'sequelize';

const id = { type: DataTypes.STRING(40), primaryKey: true, allowNull: false };
const ts = {
  createdAt: { type: DataTypes.DATE, allowNull: false },
  updatedAt: { type: DataTypes.DATE, allowNull: false },
};
const fk = (table: string, onDelete: 'CASCADE' | 'SET NULL' = 'CASCADE', allowNull = false) => ({
  type: DataTypes.STRING(40),
  allowNull,
  references: { model: table, key: 'id' },
  onDelete,
});

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.createTable('users', {
    id,
    email: { type: DataTypes.STRING(320), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(200), allowNull: false },
    passwordHash: { type: DataTypes.STRING(100), allowNull: false },
    emailVerifiedAt: { type: DataTypes.DATE, allowNull: true },
    ...ts,
  });
  await qi.createTable('organizations', {
    id,
    name: { type: DataTypes.STRING(200), allowNull: false },
    plan: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'starter' },
    ...ts,
  });
  await qi.createTable('memberships', {
    id,
    userId: fk('users'),
    organizationId: fk('organizations'),
    role: { type: DataTypes.STRING(20), allowNull: false },
    ...ts,
  });
  await qi.addIndex('memberships', ['userId', 'organizationId'], { unique: true });
  await qi.addIndex('memberships', ['organizationId']);
  await qi.createTable('invitations', {
    id,
    organizationId: fk('organizations'),
    email: { type: DataTypes.STRING(320), allowNull: false },
    role: { type: DataTypes.STRING(20), allowNull: false },
    tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    invitedById: fk('users', 'SET NULL', true),
    expiresAt: { type: DataTypes.DATE, allowNull: false },
    acceptedAt: { type: DataTypes.DATE, allowNull: true },
    ...ts,
  });
  await qi.addIndex('invitations', ['organizationId']);
  await qi.createTable('email_tokens', {
    id,
    userId: fk('users'),
    purpose: { type: DataTypes.STRING(30), allowNull: false },
    tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    expiresAt: { type: DataTypes.DATE, allowNull: false },
    usedAt: { type: DataTypes.DATE, allowNull: true },
    ...ts,
  });
  await qi.createTable('satellites', {
    id,
    organizationId: fk('organizations'),
    name: { type: DataTypes.STRING(200), allowNull: false },
    catalogNumber: { type: DataTypes.STRING(12), allowNull: true },
    description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    currentElementSetId: { type: DataTypes.STRING(40), allowNull: true },
    ...ts,
  });
  await qi.addIndex('satellites', ['organizationId']);
  await qi.createTable('element_sets', {
    id,
    satelliteId: fk('satellites'),
    source: { type: DataTypes.STRING(20), allowNull: false },
    rawText: { type: DataTypes.TEXT, allowNull: false },
    parsed: { type: DataTypes.JSON, allowNull: false },
    epoch: { type: DataTypes.DATE, allowNull: false },
    uploadedByUserId: fk('users', 'SET NULL', true),
    uploadedByKeyId: { type: DataTypes.STRING(40), allowNull: true },
    ...ts,
  });
  await qi.addIndex('element_sets', ['satelliteId', 'epoch']);
  await qi.createTable('api_keys', {
    id,
    organizationId: fk('organizations'),
    kind: { type: DataTypes.STRING(10), allowNull: false },
    name: { type: DataTypes.STRING(200), allowNull: false },
    hash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    lastFour: { type: DataTypes.STRING(4), allowNull: false },
    origins: { type: DataTypes.JSON, allowNull: false },
    scopes: { type: DataTypes.JSON, allowNull: false },
    rateLimitPerMin: { type: DataTypes.INTEGER, allowNull: false },
    expiresAt: { type: DataTypes.DATE, allowNull: true },
    revokedAt: { type: DataTypes.DATE, allowNull: true },
    replacedById: { type: DataTypes.STRING(40), allowNull: true },
    graceUntil: { type: DataTypes.DATE, allowNull: true },
    lastUsedAt: { type: DataTypes.DATE, allowNull: true },
    createdByUserId: fk('users', 'SET NULL', true),
    ...ts,
  });
  await qi.addIndex('api_keys', ['organizationId']);
  await qi.createTable('usage_daily', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    organizationId: fk('organizations'),
    apiKeyId: { type: DataTypes.STRING(40), allowNull: false },
    endpoint: { type: DataTypes.STRING(120), allowNull: false },
    day: { type: DataTypes.STRING(10), allowNull: false },
    count: { type: DataTypes.INTEGER, allowNull: false },
  });
  await qi.addIndex('usage_daily', ['organizationId', 'apiKeyId', 'endpoint', 'day'], { unique: true });
  await qi.addIndex('usage_daily', ['organizationId', 'day']);
  await qi.createTable('embeds', {
    id,
    organizationId: fk('organizations'),
    name: { type: DataTypes.STRING(200), allowNull: false },
    satelliteIds: { type: DataTypes.JSON, allowNull: false },
    options: { type: DataTypes.JSON, allowNull: false },
    apiKeyId: { type: DataTypes.STRING(40), allowNull: true },
    ...ts,
  });
  await qi.createTable('subscriptions', {
    id,
    organizationId: { ...fk('organizations'), unique: true },
    plan: { type: DataTypes.STRING(20), allowNull: false },
    status: { type: DataTypes.STRING(30), allowNull: false },
    providerCustomerId: { type: DataTypes.STRING(100), allowNull: true },
    providerSubscriptionId: { type: DataTypes.STRING(100), allowNull: true },
    currentPeriodEnd: { type: DataTypes.DATE, allowNull: true },
    ...ts,
  });
  await qi.createTable('audit_events', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    organizationId: fk('organizations'),
    actorUserId: { type: DataTypes.STRING(40), allowNull: true },
    actorKeyId: { type: DataTypes.STRING(40), allowNull: true },
    action: { type: DataTypes.STRING(60), allowNull: false },
    targetType: { type: DataTypes.STRING(40), allowNull: false },
    targetId: { type: DataTypes.STRING(40), allowNull: true },
    detail: { type: DataTypes.JSON, allowNull: false },
    createdAt: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex('audit_events', ['organizationId', 'createdAt']);
  // Server-side sessions (connect-session-sequelize's model, table "Sessions").
  await qi.createTable('Sessions', {
    sid: { type: DataTypes.STRING(36), primaryKey: true },
    expires: { type: DataTypes.DATE, allowNull: true },
    data: { type: DataTypes.TEXT, allowNull: true },
    ...ts,
  });
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  for (const t of [
    'Sessions', 'audit_events', 'subscriptions', 'embeds', 'usage_daily', 'api_keys', 'element_sets',
    'satellites', 'email_tokens', 'invitations', 'memberships', 'organizations', 'users',
  ]) {
    await qi.dropTable(t);
  }
}
