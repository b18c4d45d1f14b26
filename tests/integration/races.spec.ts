/**
 * Races that several processes (or two tabs) make likely, closed by constraints, conditional
 * updates and row locks; and migrations run once however many start together. Runs on SQLite and,
 * in the integration-pg project, on PostgreSQL with Redis.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadConfig } from '@nadirline/server/config';
import { migrate } from '@nadirline/server/db/index.ts';
import { ApiKey, Invitation, Membership, Satellite, User } from '@nadirline/server/models/index.ts';
import { hashToken } from '@nadirline/server/services/accounts.ts';
import { getKeyService } from '@nadirline/server/services/keys.ts';
import { acceptInvitation } from '@nadirline/server/services/orgs.ts';
import { getSatelliteService } from '@nadirline/server/services/satellites.ts';
import { leoTle, startKeyedApp, type KeyedTestApp } from '../support/app.ts';
import { testStores } from '../support/stores.ts';

let t: KeyedTestApp;
beforeAll(async () => {
  t = await startKeyedApp();
});
afterAll(async () => {
  await t?.close();
});

describe('races', () => {
  it('rotates a key at most once when two rotations arrive together', async () => {
    const keys = getKeyService(t.context);
    const made = await t.makeKey({ kind: 'server', name: 'Rotated twice' });
    const before = await ApiKey.count();
    const results = await Promise.allSettled([keys.rotateKey(made.id, { quietMinutes: 60 }), keys.rotateKey(made.id, { quietMinutes: 60 })]);
    const ok = results.filter((r) => r.status === 'fulfilled');
    const refused = results.filter((r): r is PromiseRejectedResult => r.status === 'rejected');
    expect(ok).toHaveLength(1);
    expect(refused).toHaveLength(1);
    expect(refused[0]!.reason).toMatchObject({ code: 'conflict' });
    expect(await ApiKey.count()).toBe(before + 1);
    const old = await ApiKey.findByPk(made.id);
    expect(old?.replacedById).toBe((ok[0] as PromiseFulfilledResult<{ key: ApiKey }>).value.key.id);
  });

  it('accepts an invitation once when it is accepted twice at the same moment', async () => {
    const user = await User.create({ id: 'usr_race', email: 'race@example.test', name: 'Race Tester', passwordHash: 'x', emailVerifiedAt: new Date() });
    const token = 'invitation-token-for-the-race-test-0123456789';
    await Invitation.create({ id: 'inv_race', organizationId: t.orgId, email: user.email, role: 'editor', tokenHash: hashToken(token), invitedById: null, expiresAt: new Date(Date.now() + 86_400_000), acceptedAt: null });
    const results = await Promise.allSettled([acceptInvitation(t.context, user, token), acceptInvitation(t.context, user, token)]);
    expect(results.filter((r) => r.status === 'fulfilled')).toHaveLength(1);
    const refused = results.find((r): r is PromiseRejectedResult => r.status === 'rejected');
    expect(refused?.reason).toMatchObject({ code: 'invalid-token', extras: { reason: 'used' } });
    expect(await Membership.count({ where: { organizationId: t.orgId, userId: user.id } })).toBe(1);
  });

  it('keeps the newest epoch current when uploads of several epochs arrive together', async () => {
    const sats = getSatelliteService(t.context);
    const { satellite } = await sats.createSatellite(t.orgId, { name: 'Raced uploads' }, {});
    const hour = 3_600_000;
    const base = Math.floor(Date.now() / 60_000) * 60_000 - 10 * hour;
    const epochs = [3, 1, 5, 2, 4].map((h) => base + h * hour);
    await Promise.all(epochs.map((epochMs) => sats.addElementSets(satellite, { text: leoTle({ epochMs, catalogNumber: '99811' }) }, {})));
    const row = await Satellite.findByPk(satellite.id);
    const current = await sats.current(satellite.id);
    expect(current?.current?.record.id).toBe(row?.currentElementSetId);
    // TLE epochs keep about a millisecond: the newest of the five, within that.
    expect(Math.abs((current?.current?.record.epoch.getTime() ?? 0) - (base + 5 * hour))).toBeLessThan(10);
    const stored = await sats.listElementSets(satellite.id);
    expect(stored).toHaveLength(5);
    expect(stored[0]?.id).toBe(row?.currentElementSetId);
  });

  it('moves lastUsedAt only forward, whatever order the writes come in', async () => {
    const keys = getKeyService(t.context);
    const made = await t.makeKey({ kind: 'server', name: 'Used' });
    const newer = Date.now();
    keys.touch(made.id, newer);
    await keys.flushLastUsed();
    // Another process's older use, written later.
    keys.touch(made.id, newer - 60_000);
    await keys.flushLastUsed();
    expect((await ApiKey.findByPk(made.id))?.lastUsedAt?.getTime()).toBe(newer);
  });
});

describe('migrations', () => {
  it('run once when three runners start together on an empty database', async () => {
    const stores = await testStores();
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-migrate-'));
    try {
      const config = loadConfig({ NODE_ENV: 'test', SQLITE_FILE: path.join(dir, 'm.sqlite'), LOG_LEVEL: 'silent', ...stores.env });
      const runs = await Promise.all([migrate(config), migrate(config), migrate(config)]);
      const applied = runs.flatMap((r) => r.applied);
      expect(applied.length).toBeGreaterThan(0);
      expect(new Set(applied).size).toBe(applied.length);
      expect(runs.filter((r) => r.applied.length > 0)).toHaveLength(1);
      expect((await migrate(config)).applied).toEqual([]);
    } finally {
      await stores.drop();
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
