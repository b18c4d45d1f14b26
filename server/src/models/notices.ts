/** Models for notices and scheduled work (migration 0012). */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

export class Notice extends Model<InferAttributes<Notice>, InferCreationAttributes<Notice>> {
  declare id: CreationOptional<number>;
  declare organizationId: string;
  /** quota | stale-digest | payment-failed | plan-changed */
  declare kind: string;
  /** Unique: the same threshold, digest or event is told once. */
  declare dedupeKey: string;
  declare subject: string;
  declare body: string;
  declare detail: Record<string, unknown>;
  declare createdAt: CreationOptional<Date>;
}

export class NoticePreference extends Model<InferAttributes<NoticePreference>, InferCreationAttributes<NoticePreference>> {
  declare id: CreationOptional<number>;
  declare userId: string;
  declare kind: string;
  /** false: this member gets no e-mail of this kind. */
  declare email: boolean;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class JobLease extends Model<InferAttributes<JobLease>, InferCreationAttributes<JobLease>> {
  declare name: string;
  declare doneFor: string | null;
  declare holder: string | null;
  declare leaseUntil: Date | null;
  declare lastRunAt: Date | null;
  declare lastError: string | null;
}

export function initNoticeModels(sequelize: Sequelize): void {
  Notice.init(
    {
      id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
      organizationId: { type: DataTypes.STRING(40), allowNull: false },
      kind: { type: DataTypes.STRING(40), allowNull: false },
      dedupeKey: { type: DataTypes.STRING(200), allowNull: false, unique: true },
      subject: { type: DataTypes.STRING(300), allowNull: false },
      body: { type: DataTypes.TEXT, allowNull: false },
      detail: { type: DataTypes.JSON, allowNull: false },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'notices', updatedAt: false },
  );
  NoticePreference.init(
    {
      id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
      userId: { type: DataTypes.STRING(40), allowNull: false },
      kind: { type: DataTypes.STRING(40), allowNull: false },
      email: { type: DataTypes.BOOLEAN, allowNull: false },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'notice_preferences' },
  );
  JobLease.init(
    {
      name: { type: DataTypes.STRING(60), primaryKey: true },
      doneFor: { type: DataTypes.STRING(40), allowNull: true },
      holder: { type: DataTypes.STRING(80), allowNull: true },
      leaseUntil: { type: DataTypes.DATE, allowNull: true },
      lastRunAt: { type: DataTypes.DATE, allowNull: true },
      lastError: { type: DataTypes.STRING(500), allowNull: true },
    },
    { sequelize, tableName: 'job_leases', timestamps: false },
  );
}
