/**
 * One element set per satellite and epoch: a unique index on element_sets (satelliteId, epoch).
 * Concurrent uploads of one epoch used to store it several times; those copies are resolved
 * first: per (satellite, epoch) the row a satellite points at as its current set is kept, else
 * the earliest stored; the others are deleted and any satellite pointing at one of them points at
 * the kept row instead. Portable SQL only (SQLite and PostgreSQL).
 */
import { QueryTypes, type QueryInterface } from 'sequelize';

const UNIQUE_INDEX = 'element_sets_satellite_epoch_unique';

interface Row {
  id: string;
  satelliteId: string;
  epoch: string | Date;
  createdAt: string | Date;
}

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  const sequelize = qi.sequelize;
  await sequelize.transaction(async (transaction) => {
    const groups = await sequelize.query<{ satelliteId: string; epoch: string | Date }>(
      'SELECT "satelliteId", "epoch" FROM element_sets GROUP BY "satelliteId", "epoch" HAVING COUNT(*) > 1',
      { type: QueryTypes.SELECT, transaction },
    );
    for (const g of groups) {
      const rows = await sequelize.query<Row>(
        'SELECT "id", "satelliteId", "epoch", "createdAt" FROM element_sets WHERE "satelliteId" = :satelliteId AND "epoch" = :epoch ORDER BY "createdAt" ASC, "id" ASC',
        { type: QueryTypes.SELECT, replacements: { satelliteId: g.satelliteId, epoch: g.epoch }, transaction },
      );
      if (rows.length < 2) continue;
      const ids = rows.map((r) => r.id);
      const current = await sequelize.query<{ currentElementSetId: string | null }>(
        'SELECT "currentElementSetId" FROM satellites WHERE "id" = :satelliteId',
        { type: QueryTypes.SELECT, replacements: { satelliteId: g.satelliteId }, transaction },
      );
      const pointed = current[0]?.currentElementSetId;
      const keep = pointed && ids.includes(pointed) ? pointed : (ids[0] as string);
      const drop = ids.filter((id) => id !== keep);
      await sequelize.query('UPDATE satellites SET "currentElementSetId" = :keep WHERE "currentElementSetId" IN (:drop)', { replacements: { keep, drop }, transaction });
      await sequelize.query('DELETE FROM element_sets WHERE "id" IN (:drop)', { replacements: { drop }, transaction });
    }
    await qi.removeIndex('element_sets', ['satelliteId', 'epoch'], { transaction });
    await qi.addIndex('element_sets', ['satelliteId', 'epoch'], { unique: true, name: UNIQUE_INDEX, transaction });
  });
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.removeIndex('element_sets', UNIQUE_INDEX);
  await qi.addIndex('element_sets', ['satelliteId', 'epoch']);
}
