/**
 * Concurrent writes on SQLite: 20 uploaders for 15 s (a third of their uploads repeat an epoch
 * another uploader is storing at the same moment) and 100 simultaneous uploads of one epoch,
 * while an unrelated reader asks for another satellite's position. No answer may be 5xx, no
 * epoch may be stored twice, the usage flush must keep working, and the reader must not wait
 * behind the writers (a generous bound: the figures themselves are in `npm run bench`).
 * A write that cannot get its lock in time answers 503 busy with Retry-After: on SQLite its turn in
 * the write queue, on PostgreSQL a row lock another client holds past lock_timeout.
 */
import pg from 'pg';
import { QueryTypes } from 'sequelize';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { writeLockOf } from '@nadirline/server/db/index.ts';
import { leoTle, startKeyedApp } from '../support/app.ts';
import { onPgRedis } from '../support/stores.ts';
import { runWriteLoad } from '../support/write-load.ts';

describe('20 parallel writers on one SQLite file', () => {
  it('answer no 5xx, store no duplicate epoch, keep the usage flush working and the reader quick', async () => {
    const f = await runWriteLoad({ writers: 20, seconds: 15, sameEpochBurst: 100 });
    const figures = JSON.stringify(f);
    // enough uploads that the writers did contend (183 were seen on a machine busy with other work)
    expect(f.uploads, figures).toBeGreaterThan(100);
    expect(f.status5xx, figures).toBe(0);
    expect(f.statuses['network-error'] ?? 0, figures).toBe(0);
    expect(f.statuses['timeout'] ?? 0, figures).toBe(0);
    expect(f.duplicates, figures).toBe(0);
    expect(f.burstRows, figures).toBe(1);
    expect(f.flushErrors, figures).toBe(0);
    expect(f.usageCounted, figures).toBe(f.requestsAnswered);
    expect(f.readerFailures, figures).toBe(0);
    expect(f.readerP99Ms, figures).toBeLessThan(100);
  }, 180_000);
});

// The write queue is SQLite's (server/src/db/write-lock.ts): one writer at a time, the others
// wait their turn. PostgreSQL has no such queue (writers wait on row locks), so on the
// PostgreSQL run this case is reported as skipped under this name, not left out silently.
describe.skipIf(onPgRedis)('on SQLite only (its write queue; PostgreSQL has none): a write that cannot get its turn in time', () => {
  it('answers 503 busy with Retry-After, stores nothing, and the next try works', async () => {
    const t = await startKeyedApp();
    try {
      const lock = writeLockOf(t.context.sequelize)!;
      lock.waitMs = 300;
      let release!: () => void;
      const held = new Promise<void>((r) => (release = r));
      const holder = t.context.sequelize.transaction(async () => {
        await held;
      });
      const text = leoTle({ hoursAgo: 5 });
      const res = await request(t.app).post(`/v1/satellites/${t.satellites.leo.id}/element-sets`).set('Authorization', `Bearer ${t.serverKey}`).set('Content-Type', 'text/plain').send(text);
      expect(res.status).toBe(503);
      expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
      expect(res.body.code).toBe('busy');
      expect(res.headers['retry-after']).toBe('2');
      expect(res.body.detail).not.toMatch(/\n\s+at /);
      release();
      await holder;
      const again = await request(t.app).post(`/v1/satellites/${t.satellites.leo.id}/element-sets`).set('Authorization', `Bearer ${t.serverKey}`).set('Content-Type', 'text/plain').send(text);
      expect(again.status).toBe(201);
      expect(again.body.accepted).toBe(1);
    } finally {
      await t.close();
    }
  });
});

// The PostgreSQL twin: there, writers wait on row locks, each for at most lock_timeout
// (DATABASE_LOCK_TIMEOUT_MS, set on every connection in server/src/db/index.ts). On the SQLite run
// this case is reported as skipped under this name.
describe.runIf(onPgRedis)('on PostgreSQL only: a write whose row lock cannot be had within lock_timeout', () => {
  it('answers 503 busy with Retry-After while another client holds the satellite row, never 500, and the next try works', async () => {
    const t = await startKeyedApp({ DATABASE_LOCK_TIMEOUT_MS: '300' });
    const holder = new pg.Client({ connectionString: t.context.config.DATABASE_URL ?? '' });
    await holder.connect();
    try {
      const [setting] = (await t.context.sequelize.query('SHOW lock_timeout', { type: QueryTypes.SELECT })) as Array<{ lock_timeout: string }>;
      expect(setting?.lock_timeout).toBe('300ms');
      // Another client (another process, an administrator's session) holds the satellite's row.
      await holder.query('BEGIN');
      await holder.query('SELECT "id" FROM satellites WHERE "id" = $1 FOR UPDATE', [t.satellites.leo.id]);
      const text = leoTle({ hoursAgo: 5 });
      const started = Date.now();
      const res = await request(t.app).post(`/v1/satellites/${t.satellites.leo.id}/element-sets`).set('Authorization', `Bearer ${t.serverKey}`).set('Content-Type', 'text/plain').send(text);
      const waitedMs = Date.now() - started;
      expect(res.status).toBe(503);
      expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
      expect(res.body.code).toBe('busy');
      expect(res.headers['retry-after']).toBe('2');
      expect(res.body.detail).not.toMatch(/\n\s+at /);
      // It gave up after lock_timeout, not after a client or proxy timeout.
      expect(waitedMs).toBeLessThan(10_000);
      // Nothing was stored by the refused upload.
      const [count] = (await t.context.sequelize.query('SELECT count(*) AS n FROM element_sets WHERE "satelliteId" = ?', { replacements: [t.satellites.leo.id], type: QueryTypes.SELECT })) as Array<{ n: string }>;
      expect(Number(count?.n)).toBe(1);
      await holder.query('ROLLBACK');
      const again = await request(t.app).post(`/v1/satellites/${t.satellites.leo.id}/element-sets`).set('Authorization', `Bearer ${t.serverKey}`).set('Content-Type', 'text/plain').send(text);
      expect(again.status).toBe(201);
      expect(again.body.accepted).toBe(1);
    } finally {
      await holder.end();
      await t.close();
    }
  });
});
