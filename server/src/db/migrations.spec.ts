/**
 * Migration 0002 on a real SQLite file: element sets stored twice for one epoch (as concurrent
 * uploads used to store them) are resolved before the unique (satelliteId, epoch) index is made.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { QueryTypes, Sequelize, UniqueConstraintError } from 'sequelize';
import { afterEach, describe, expect, it } from 'vitest';
import * as m0001 from './migrations/0001-initial.ts';
import * as m0002 from './migrations/0002-element-set-epoch-unique.ts';

const dirs: string[] = [];
afterEach(() => {
  for (const d of dirs.splice(0)) fs.rmSync(d, { recursive: true, force: true });
});

async function freshDb(): Promise<Sequelize> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-mig-'));
  dirs.push(dir);
  const sequelize = new Sequelize({ dialect: 'sqlite', storage: path.join(dir, 'db.sqlite'), logging: false });
  await m0001.up({ context: sequelize.getQueryInterface() });
  const now = new Date().toISOString();
  await sequelize.query(`INSERT INTO organizations (id, name, plan, "createdAt", "updatedAt") VALUES ('o1', 'Org', 'starter', '${now}', '${now}')`);
  for (const s of ['s1', 's2']) {
    await sequelize.query(`INSERT INTO satellites (id, "organizationId", name, description, "currentElementSetId", "createdAt", "updatedAt") VALUES ('${s}', 'o1', '${s}', '', NULL, '${now}', '${now}')`);
  }
  return sequelize;
}

async function addSet(sequelize: Sequelize, id: string, satelliteId: string, epoch: string, createdAt: string): Promise<void> {
  await sequelize.query(
    `INSERT INTO element_sets (id, "satelliteId", source, "rawText", parsed, epoch, "uploadedByUserId", "uploadedByKeyId", "createdAt", "updatedAt") VALUES (:id, :satelliteId, 'tle', 'x', '{}', :epoch, NULL, NULL, :createdAt, :createdAt)`,
    { replacements: { id, satelliteId, epoch, createdAt } },
  );
}

describe('migration 0002: one element set per satellite and epoch', () => {
  it('keeps the current set (else the earliest) of each duplicated epoch, repoints satellites, then refuses duplicates', async () => {
    const db = await freshDb();
    const e1 = '2026-01-01 00:00:00.000 +00:00';
    const e2 = '2026-01-02 00:00:00.000 +00:00';
    await addSet(db, 'a1', 's1', e1, '2026-01-05 00:00:01.000 +00:00');
    await addSet(db, 'a2', 's1', e1, '2026-01-05 00:00:00.000 +00:00');
    await addSet(db, 'a3', 's1', e1, '2026-01-05 00:00:02.000 +00:00');
    await addSet(db, 'b1', 's1', e2, '2026-01-05 00:00:00.000 +00:00');
    await addSet(db, 'b2', 's1', e2, '2026-01-05 00:00:01.000 +00:00');
    await addSet(db, 'c1', 's2', e1, '2026-01-05 00:00:00.000 +00:00');
    // s1 points at a copy that is not the earliest: that one stays. s2 is unaffected.
    await db.query(`UPDATE satellites SET "currentElementSetId" = 'b2' WHERE id = 's1'`);
    await db.query(`UPDATE satellites SET "currentElementSetId" = 'c1' WHERE id = 's2'`);

    await m0002.up({ context: db.getQueryInterface() });

    const rows = await db.query<{ id: string }>('SELECT id FROM element_sets ORDER BY id', { type: QueryTypes.SELECT });
    expect(rows.map((r) => r.id)).toEqual(['a2', 'b2', 'c1']);
    const sats = await db.query<{ id: string; currentElementSetId: string }>('SELECT id, "currentElementSetId" FROM satellites ORDER BY id', { type: QueryTypes.SELECT });
    expect(sats).toEqual([{ id: 's1', currentElementSetId: 'b2' }, { id: 's2', currentElementSetId: 'c1' }]);
    await expect(addSet(db, 'a4', 's1', e1, '2026-01-06 00:00:00.000 +00:00')).rejects.toBeInstanceOf(UniqueConstraintError);
    await addSet(db, 'd1', 's2', e2, '2026-01-06 00:00:00.000 +00:00');
    await db.close();
  });

  it('runs on a database without duplicates and can be undone', async () => {
    const db = await freshDb();
    await addSet(db, 'a1', 's1', '2026-01-01 00:00:00.000 +00:00', '2026-01-05 00:00:00.000 +00:00');
    await m0002.up({ context: db.getQueryInterface() });
    await m0002.down({ context: db.getQueryInterface() });
    await addSet(db, 'a2', 's1', '2026-01-01 00:00:00.000 +00:00', '2026-01-05 00:00:01.000 +00:00');
    await db.close();
  });
});
