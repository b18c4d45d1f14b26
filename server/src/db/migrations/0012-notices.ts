/**
 * Notices and scheduled work: what was told to whom (one row per notice, its dedupe key unique so
 * a threshold or a digest goes out once however many processes run), each member's switches per
 * kind of notice, and one lease row per scheduled job (the process holding the lease runs it).
 */
import { DataTypes, type QueryInterface } from 'sequelize';

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.createTable('notices', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    organizationId: { type: DataTypes.STRING(40), allowNull: false, references: { model: 'organizations', key: 'id' }, onDelete: 'CASCADE' },
    kind: { type: DataTypes.STRING(40), allowNull: false },
    dedupeKey: { type: DataTypes.STRING(200), allowNull: false, unique: true },
    subject: { type: DataTypes.STRING(300), allowNull: false },
    body: { type: DataTypes.TEXT, allowNull: false },
    detail: { type: DataTypes.JSON, allowNull: false },
    createdAt: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex('notices', ['organizationId', 'createdAt']);
  await qi.createTable('notice_preferences', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    userId: { type: DataTypes.STRING(40), allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
    kind: { type: DataTypes.STRING(40), allowNull: false },
    email: { type: DataTypes.BOOLEAN, allowNull: false },
    createdAt: { type: DataTypes.DATE, allowNull: false },
    updatedAt: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex('notice_preferences', ['userId', 'kind'], { unique: true });
  await qi.createTable('job_leases', {
    name: { type: DataTypes.STRING(60), primaryKey: true, allowNull: false },
    /** The period (e.g. UTC day) the job last completed for. */
    doneFor: { type: DataTypes.STRING(40), allowNull: true },
    holder: { type: DataTypes.STRING(80), allowNull: true },
    leaseUntil: { type: DataTypes.DATE, allowNull: true },
    lastRunAt: { type: DataTypes.DATE, allowNull: true },
    lastError: { type: DataTypes.STRING(500), allowNull: true },
  });
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.dropTable('job_leases');
  await qi.dropTable('notice_preferences');
  await qi.dropTable('notices');
}
