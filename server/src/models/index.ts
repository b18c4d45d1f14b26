/**
 * Sequelize models (v6, `Model.init` classes with `declare` fields). The schema itself is
 * created by the migrations in ../db/migrations; models never call sync().
 * Column types are portable: the same models run on SQLite and PostgreSQL.
 */
import {
  DataTypes,
  Model,
  type CreationOptional,
  type InferAttributes,
  type InferCreationAttributes,
  type Sequelize,
} from 'sequelize';
import { initBillingModels } from './billing.ts';
import { initNoticeModels } from './notices.ts';
import { initWebhookModels } from './webhooks.ts';

export { Invoice, PaymentEvent } from './billing.ts';
export { JobLease, Notice, NoticePreference } from './notices.ts';
export { WebhookAttempt, WebhookDelivery, WebhookEndpoint, WebhookEvent } from './webhooks.ts';

export const ROLES = ['owner', 'admin', 'editor', 'viewer'] as const;
export type Role = (typeof ROLES)[number];
export const PLANS = ['starter', 'mission', 'constellation'] as const;
export type Plan = (typeof PLANS)[number];
export const KEY_KINDS = ['browser', 'server'] as const;
export type KeyKind = (typeof KEY_KINDS)[number];
export const KEY_SCOPES = ['read', 'element-sets:write'] as const;
export type KeyScope = (typeof KEY_SCOPES)[number];

export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
  declare id: string;
  declare email: string;
  declare name: string;
  declare passwordHash: string;
  declare emailVerifiedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class Organization extends Model<InferAttributes<Organization>, InferCreationAttributes<Organization>> {
  declare id: string;
  declare name: string;
  declare plan: CreationOptional<Plan>;
  /** Hold sets whose continuity check is not "continues" until an editor confirms them. */
  declare confirmSuspiciousSets: CreationOptional<boolean>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class Membership extends Model<InferAttributes<Membership>, InferCreationAttributes<Membership>> {
  declare id: string;
  declare userId: string;
  declare organizationId: string;
  declare role: Role;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class Invitation extends Model<InferAttributes<Invitation>, InferCreationAttributes<Invitation>> {
  declare id: string;
  declare organizationId: string;
  declare email: string;
  declare role: Role;
  declare tokenHash: string;
  declare invitedById: string | null;
  declare expiresAt: Date;
  declare acceptedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

/** One-time e-mail tokens: address verification and password reset. */
export class EmailToken extends Model<InferAttributes<EmailToken>, InferCreationAttributes<EmailToken>> {
  declare id: string;
  declare userId: string;
  declare purpose: 'verify-email' | 'reset-password';
  declare tokenHash: string;
  declare expiresAt: Date;
  declare usedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class Satellite extends Model<InferAttributes<Satellite>, InferCreationAttributes<Satellite>> {
  declare id: string;
  declare organizationId: string;
  declare name: string;
  declare catalogNumber: string | null;
  declare description: CreationOptional<string>;
  /** Latest element set by epoch (denormalized for fast reads). */
  declare currentElementSetId: string | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class ElementSetRecord extends Model<InferAttributes<ElementSetRecord>, InferCreationAttributes<ElementSetRecord>> {
  declare id: string;
  declare satelliteId: string;
  /** tle | omm-kvn | omm-xml | omm-json | kepler */
  declare source: string;
  /** The text exactly as submitted. */
  declare rawText: string;
  /** The parsed ElementSet (shared/src/types.ts) as JSON. */
  declare parsed: object;
  declare epoch: Date;
  declare uploadedByUserId: string | null;
  declare uploadedByKeyId: string | null;
  /** The continuity check made on arrival (the contract's `Continuity`, written by continuityOf in services/satellites.ts), null for a first set. */
  declare continuity: CreationOptional<object | null>;
  /** continues | manoeuvre | does-not-continue | not-checked, or null for a first set. */
  declare continuityClass: CreationOptional<string | null>;
  /** Held until an editor confirms it (organization setting confirmSuspiciousSets); not used for any answer meanwhile. */
  declare awaitingConfirmation: CreationOptional<boolean>;
  declare confirmedAt: CreationOptional<Date | null>;
  declare confirmedByUserId: CreationOptional<string | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class ApiKey extends Model<InferAttributes<ApiKey>, InferCreationAttributes<ApiKey>> {
  declare id: string;
  declare organizationId: string;
  declare kind: KeyKind;
  declare name: string;
  /** SHA-256 of the full key text, hex. The text itself is never stored. */
  declare hash: string;
  declare lastFour: string;
  /** Allowed origins: exact (https://a.example) or wildcard subdomain (https://*.a.example). */
  declare origins: string[];
  declare scopes: KeyScope[];
  /** Requests per minute allowed for this key. */
  declare rateLimitPerMin: number;
  declare expiresAt: Date | null;
  declare revokedAt: Date | null;
  /** Set on the old key when it is rotated. */
  declare replacedById: string | null;
  /** A replaced key retires at this time at the latest (the owner's "retire by" date). */
  declare graceUntil: Date | null;
  /** When the key was replaced (null: never). */
  declare replacedAt: CreationOptional<Date | null>;
  /** A replaced key retires once unused this many minutes (null: only the retire-by date applies). */
  declare retireQuietMinutes: CreationOptional<number | null>;
  declare lastUsedAt: Date | null;
  declare createdByUserId: string | null;
  /** When the key was deleted: it no longer authenticates nor shows in the key list; its usage and activity keep its name. */
  declare deletedAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class UsageDaily extends Model<InferAttributes<UsageDaily>, InferCreationAttributes<UsageDaily>> {
  declare id: CreationOptional<number>;
  declare organizationId: string;
  declare apiKeyId: string;
  /** Route template, e.g. "GET /v1/satellites/{id}/track". */
  declare endpoint: string;
  /** UTC day, YYYY-MM-DD. */
  declare day: string;
  declare count: number;
}

export class UsageHourly extends Model<InferAttributes<UsageHourly>, InferCreationAttributes<UsageHourly>> {
  declare id: CreationOptional<number>;
  declare organizationId: string;
  declare apiKeyId: string;
  declare endpoint: string;
  /** UTC hour, YYYY-MM-DDTHH. */
  declare hour: string;
  /** HTTP status of the answer. */
  declare status: number;
  declare count: number;
}

export class UsageOriginDaily extends Model<InferAttributes<UsageOriginDaily>, InferCreationAttributes<UsageOriginDaily>> {
  declare id: CreationOptional<number>;
  declare organizationId: string;
  declare apiKeyId: string;
  /** Calling origin, '' when the request named none (a backend). */
  declare origin: string;
  declare day: string;
  declare count: number;
}

export class Embed extends Model<InferAttributes<Embed>, InferCreationAttributes<Embed>> {
  declare id: string;
  declare organizationId: string;
  declare name: string;
  declare satelliteIds: string[];
  /** Widget options: projection, orbitsBehind, orbitsAhead, observer, layers, theme, timeZone, locale, width, height. */
  declare options: Record<string, unknown>;
  /** Browser key the embed uses to read. */
  declare apiKeyId: string | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class Subscription extends Model<InferAttributes<Subscription>, InferCreationAttributes<Subscription>> {
  declare id: string;
  declare organizationId: string;
  declare plan: Plan;
  declare status: string;
  declare providerCustomerId: string | null;
  declare providerSubscriptionId: string | null;
  declare currentPeriodEnd: Date | null;
  /** The provider ends the subscription at currentPeriodEnd (migration 0011). */
  declare cancelAtPeriodEnd: CreationOptional<boolean>;
  /** After a failed payment: the paid plan is kept until then. */
  declare graceUntil: CreationOptional<Date | null>;
  /** When the organization fell back to Starter because the grace ran out. */
  declare lapsedAt: CreationOptional<Date | null>;
  /** Creation time of the newest provider event applied (older events do not undo it). */
  declare providerEventAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class AuditEvent extends Model<InferAttributes<AuditEvent>, InferCreationAttributes<AuditEvent>> {
  declare id: CreationOptional<number>;
  declare organizationId: string;
  declare actorUserId: string | null;
  declare actorKeyId: string | null;
  /** e.g. key.create, key.rotate, member.invite, element-set.upload */
  declare action: string;
  declare targetType: string;
  declare targetId: string | null;
  declare detail: Record<string, unknown>;
  declare createdAt: CreationOptional<Date>;
}

const id = { type: DataTypes.STRING(40), primaryKey: true };
const timestamps = { createdAt: DataTypes.DATE, updatedAt: DataTypes.DATE };

export function initModels(sequelize: Sequelize): void {
  User.init(
    {
      id,
      email: { type: DataTypes.STRING(320), allowNull: false, unique: true },
      name: { type: DataTypes.STRING(200), allowNull: false },
      passwordHash: { type: DataTypes.STRING(100), allowNull: false },
      emailVerifiedAt: { type: DataTypes.DATE, allowNull: true },
      ...timestamps,
    },
    { sequelize, tableName: 'users' },
  );
  Organization.init(
    {
      id,
      name: { type: DataTypes.STRING(200), allowNull: false },
      plan: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'starter' },
      confirmSuspiciousSets: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      ...timestamps,
    },
    { sequelize, tableName: 'organizations' },
  );
  Membership.init(
    {
      id,
      userId: { type: DataTypes.STRING(40), allowNull: false },
      organizationId: { type: DataTypes.STRING(40), allowNull: false },
      role: { type: DataTypes.STRING(20), allowNull: false },
      ...timestamps,
    },
    { sequelize, tableName: 'memberships' },
  );
  Invitation.init(
    {
      id,
      organizationId: { type: DataTypes.STRING(40), allowNull: false },
      email: { type: DataTypes.STRING(320), allowNull: false },
      role: { type: DataTypes.STRING(20), allowNull: false },
      tokenHash: { type: DataTypes.STRING(64), allowNull: false },
      invitedById: { type: DataTypes.STRING(40), allowNull: true },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
      acceptedAt: { type: DataTypes.DATE, allowNull: true },
      ...timestamps,
    },
    { sequelize, tableName: 'invitations' },
  );
  EmailToken.init(
    {
      id,
      userId: { type: DataTypes.STRING(40), allowNull: false },
      purpose: { type: DataTypes.STRING(30), allowNull: false },
      tokenHash: { type: DataTypes.STRING(64), allowNull: false },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
      usedAt: { type: DataTypes.DATE, allowNull: true },
      ...timestamps,
    },
    { sequelize, tableName: 'email_tokens' },
  );
  Satellite.init(
    {
      id,
      organizationId: { type: DataTypes.STRING(40), allowNull: false },
      name: { type: DataTypes.STRING(200), allowNull: false },
      catalogNumber: { type: DataTypes.STRING(12), allowNull: true },
      description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      currentElementSetId: { type: DataTypes.STRING(40), allowNull: true },
      ...timestamps,
    },
    { sequelize, tableName: 'satellites' },
  );
  ElementSetRecord.init(
    {
      id,
      satelliteId: { type: DataTypes.STRING(40), allowNull: false },
      source: { type: DataTypes.STRING(20), allowNull: false },
      rawText: { type: DataTypes.TEXT, allowNull: false },
      parsed: { type: DataTypes.JSON, allowNull: false },
      epoch: { type: DataTypes.DATE, allowNull: false },
      uploadedByUserId: { type: DataTypes.STRING(40), allowNull: true },
      uploadedByKeyId: { type: DataTypes.STRING(40), allowNull: true },
      continuity: { type: DataTypes.JSON, allowNull: true },
      continuityClass: { type: DataTypes.STRING(24), allowNull: true },
      awaitingConfirmation: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      confirmedAt: { type: DataTypes.DATE, allowNull: true },
      confirmedByUserId: { type: DataTypes.STRING(40), allowNull: true },
      ...timestamps,
    },
    { sequelize, tableName: 'element_sets' },
  );
  ApiKey.init(
    {
      id,
      organizationId: { type: DataTypes.STRING(40), allowNull: false },
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
      replacedAt: { type: DataTypes.DATE, allowNull: true },
      retireQuietMinutes: { type: DataTypes.INTEGER, allowNull: true },
      lastUsedAt: { type: DataTypes.DATE, allowNull: true },
      createdByUserId: { type: DataTypes.STRING(40), allowNull: true },
      deletedAt: { type: DataTypes.DATE, allowNull: true },
      ...timestamps,
    },
    { sequelize, tableName: 'api_keys' },
  );
  UsageDaily.init(
    {
      id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
      organizationId: { type: DataTypes.STRING(40), allowNull: false },
      apiKeyId: { type: DataTypes.STRING(40), allowNull: false },
      endpoint: { type: DataTypes.STRING(120), allowNull: false },
      day: { type: DataTypes.STRING(10), allowNull: false },
      count: { type: DataTypes.INTEGER, allowNull: false },
    },
    { sequelize, tableName: 'usage_daily', timestamps: false },
  );
  UsageHourly.init(
    {
      id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
      organizationId: { type: DataTypes.STRING(40), allowNull: false },
      apiKeyId: { type: DataTypes.STRING(40), allowNull: false },
      endpoint: { type: DataTypes.STRING(120), allowNull: false },
      hour: { type: DataTypes.STRING(13), allowNull: false },
      status: { type: DataTypes.INTEGER, allowNull: false },
      count: { type: DataTypes.INTEGER, allowNull: false },
    },
    { sequelize, tableName: 'usage_hourly', timestamps: false },
  );
  UsageOriginDaily.init(
    {
      id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
      organizationId: { type: DataTypes.STRING(40), allowNull: false },
      apiKeyId: { type: DataTypes.STRING(40), allowNull: false },
      origin: { type: DataTypes.STRING(300), allowNull: false },
      day: { type: DataTypes.STRING(10), allowNull: false },
      count: { type: DataTypes.INTEGER, allowNull: false },
    },
    { sequelize, tableName: 'usage_origins_daily', timestamps: false },
  );
  Embed.init(
    {
      id,
      organizationId: { type: DataTypes.STRING(40), allowNull: false },
      name: { type: DataTypes.STRING(200), allowNull: false },
      satelliteIds: { type: DataTypes.JSON, allowNull: false },
      options: { type: DataTypes.JSON, allowNull: false },
      apiKeyId: { type: DataTypes.STRING(40), allowNull: true },
      ...timestamps,
    },
    { sequelize, tableName: 'embeds' },
  );
  Subscription.init(
    {
      id,
      organizationId: { type: DataTypes.STRING(40), allowNull: false, unique: true },
      plan: { type: DataTypes.STRING(20), allowNull: false },
      status: { type: DataTypes.STRING(30), allowNull: false },
      providerCustomerId: { type: DataTypes.STRING(100), allowNull: true },
      providerSubscriptionId: { type: DataTypes.STRING(100), allowNull: true },
      currentPeriodEnd: { type: DataTypes.DATE, allowNull: true },
      cancelAtPeriodEnd: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      graceUntil: { type: DataTypes.DATE, allowNull: true },
      lapsedAt: { type: DataTypes.DATE, allowNull: true },
      providerEventAt: { type: DataTypes.DATE, allowNull: true },
      ...timestamps,
    },
    { sequelize, tableName: 'subscriptions' },
  );
  AuditEvent.init(
    {
      id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
      organizationId: { type: DataTypes.STRING(40), allowNull: false },
      actorUserId: { type: DataTypes.STRING(40), allowNull: true },
      actorKeyId: { type: DataTypes.STRING(40), allowNull: true },
      action: { type: DataTypes.STRING(60), allowNull: false },
      targetType: { type: DataTypes.STRING(40), allowNull: false },
      targetId: { type: DataTypes.STRING(40), allowNull: true },
      detail: { type: DataTypes.JSON, allowNull: false },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'audit_events', updatedAt: false },
  );

  initBillingModels(sequelize);
  initNoticeModels(sequelize);
  initWebhookModels(sequelize);

  Membership.belongsTo(User, { foreignKey: 'userId', as: 'user' });
  Membership.belongsTo(Organization, { foreignKey: 'organizationId', as: 'organization' });
  User.hasMany(Membership, { foreignKey: 'userId', as: 'memberships' });
  Organization.hasMany(Membership, { foreignKey: 'organizationId', as: 'memberships' });
  Satellite.hasMany(ElementSetRecord, { foreignKey: 'satelliteId', as: 'elementSets' });
  ElementSetRecord.belongsTo(Satellite, { foreignKey: 'satelliteId', as: 'satellite' });
  Satellite.belongsTo(ElementSetRecord, { foreignKey: 'currentElementSetId', as: 'currentElementSet', constraints: false });
}
