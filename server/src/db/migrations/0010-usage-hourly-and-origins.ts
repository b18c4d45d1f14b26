/**
 * Usage detail beside usage_daily (which stays the monthly quota's and the CSV's source):
 *   usage_hourly         per organization, key, route template, UTC hour and HTTP status
 *   usage_origins_daily  per organization, key, calling origin ('' when none was named) and UTC day
 */
import { DataTypes, type QueryInterface } from 'sequelize';

const org = { type: DataTypes.STRING(40), allowNull: false, references: { model: 'organizations', key: 'id' }, onDelete: 'CASCADE' };

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.createTable('usage_hourly', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    organizationId: org,
    apiKeyId: { type: DataTypes.STRING(40), allowNull: false },
    endpoint: { type: DataTypes.STRING(120), allowNull: false },
    /** UTC hour, YYYY-MM-DDTHH. */
    hour: { type: DataTypes.STRING(13), allowNull: false },
    status: { type: DataTypes.INTEGER, allowNull: false },
    count: { type: DataTypes.INTEGER, allowNull: false },
  });
  await qi.addIndex('usage_hourly', ['organizationId', 'apiKeyId', 'endpoint', 'hour', 'status'], { unique: true, name: 'usage_hourly_unique' });
  await qi.addIndex('usage_hourly', ['organizationId', 'hour'], { name: 'usage_hourly_org_hour' });
  await qi.createTable('usage_origins_daily', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    organizationId: org,
    apiKeyId: { type: DataTypes.STRING(40), allowNull: false },
    origin: { type: DataTypes.STRING(300), allowNull: false },
    day: { type: DataTypes.STRING(10), allowNull: false },
    count: { type: DataTypes.INTEGER, allowNull: false },
  });
  await qi.addIndex('usage_origins_daily', ['organizationId', 'apiKeyId', 'origin', 'day'], { unique: true, name: 'usage_origins_daily_unique' });
  await qi.addIndex('usage_origins_daily', ['organizationId', 'day'], { name: 'usage_origins_daily_org_day' });
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.dropTable('usage_origins_daily');
  await qi.dropTable('usage_hourly');
}
