/**
 * Usage counting: per organization, key, route template and UTC day, in memory on the request
 * path, written in batches and on SIGTERM (the server as a child process).
 */
import fs from 'node:fs';
import { Sequelize, QueryTypes } from 'sequelize';
import request from 'supertest';
import { afterAll, afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { ApiKey, UsageDaily } from '@nadirline/server/models/index.ts';
import { getKeyService } from '@nadirline/server/services/keys.ts';
import { getUsageRecorder } from '@nadirline/server/services/usage.ts';
import { PAGE_ORIGIN, startKeyedApp, type KeyedTestApp } from '../support/app.ts';
import { startServer, type StartedServer } from '../support/server.ts';

describe('usage in the app', () => {
  let t: KeyedTestApp;
  beforeAll(async () => {
    t = await startKeyedApp({ USAGE_FLUSH_MS: '60000' });
  });
  afterAll(async () => {
    await t?.close();
  });

  it('counts requests per key and route template without writing on the request path', async () => {
    const usage = getUsageRecorder(t.context);
    await usage.flush();
    const before = await UsageDaily.count();
    const create = vi.spyOn(UsageDaily, 'findOrCreate');
    const leo = t.satellites.leo.id;
    for (let i = 0; i < 3; i++) await request(t.app).get(`/v1/satellites/${leo}/position`).set('Authorization', `Bearer ${t.serverKey}`).expect(200);
    await request(t.app).get(`/v1/satellites/${t.satellites.geo.id}/track`).set('Authorization', `Bearer ${t.serverKey}`).expect(200);
    await request(t.app).get(`/v1/satellites/${leo}/position`).query({ key: t.browserKey }).set('Origin', PAGE_ORIGIN).expect(200);
    expect(create).not.toHaveBeenCalled();
    expect(await UsageDaily.count()).toBe(before);

    await usage.flush();
    const day = new Date().toISOString().slice(0, 10);
    const rows = await UsageDaily.findAll({ where: { organizationId: t.orgId, day }, raw: true });
    const count = (keyId: string, endpoint: string) => rows.find((r) => r.apiKeyId === keyId && r.endpoint === endpoint)?.count;
    expect(count(t.serverKeyId, 'GET /v1/satellites/{id}/position')).toBe(3);
    expect(count(t.serverKeyId, 'GET /v1/satellites/{id}/track')).toBe(1);
    expect(count(t.browserKeyId, 'GET /v1/satellites/{id}/position')).toBe(1);

    // A second flush adds to the same rows.
    await request(t.app).get(`/v1/satellites/${leo}/position`).set('Authorization', `Bearer ${t.serverKey}`).expect(200);
    await usage.flush();
    const again = await UsageDaily.findOne({ where: { organizationId: t.orgId, apiKeyId: t.serverKeyId, endpoint: 'GET /v1/satellites/{id}/position', day } });
    expect(again?.count).toBe(4);
  });

  it('does not count refused requests', async () => {
    const usage = getUsageRecorder(t.context);
    await usage.flush();
    const day = new Date().toISOString().slice(0, 10);
    const before = (await usage.rows(t.orgId, { from: day, to: day })).reduce((n, r) => n + r.count, 0);
    await request(t.app).get(`/v1/satellites/${t.satellites.leo.id}/position`).query({ key: t.browserKey }).set('Origin', 'https://copycat.example.com').expect(403);
    await request(t.app).get('/v1/satellites').expect(401);
    const after = (await usage.rows(t.orgId, { from: day, to: day })).reduce((n, r) => n + r.count, 0);
    expect(after).toBe(before);
  });

  it('reports usage by day, key and route, unflushed counts included, and as CSV', async () => {
    const usage = getUsageRecorder(t.context);
    await request(t.app).get('/v1/satellites').set('Authorization', `Bearer ${t.serverKey}`).expect(200);
    const day = new Date().toISOString().slice(0, 10);
    const report = await usage.report(t.orgId, { from: day, to: day });
    expect(report.days).toHaveLength(1);
    expect(report.byRoute.find((r) => r.endpoint === 'GET /v1/satellites')?.count).toBe(1);
    expect(report.byKey.find((k) => k.apiKeyId === t.serverKeyId)?.name).toMatch(/^Pipeline \(…/);
    const total = report.rows.reduce((n, r) => n + r.count, 0);
    expect(report.days[0]?.count).toBe(total);
    const csv = await usage.csv(t.orgId, { from: day, to: day });
    expect(csv.split('\r\n')[0]).toBe('day,key,endpoint,count');
    expect(csv).toContain(`${day},Pipeline (…`);
  });

  it('counts answers per UTC hour and status, errors included, and the calling origin per key and day', async () => {
    // A key of its own keeps this test's counts apart from the other tests'.
    const made = await t.makeKey({ kind: 'browser', name: 'Hourly', origins: [PAGE_ORIGIN] });
    const usage = getUsageRecorder(t.context);
    const leo = t.satellites.leo.id;
    const day = new Date().toISOString().slice(0, 10);
    const before = await usage.report(t.orgId, { from: day, to: day });
    for (let i = 0; i < 2; i++) await request(t.app).get(`/v1/satellites/${leo}/position`).query({ key: made.secret }).set('Origin', PAGE_ORIGIN).expect(200);
    await request(t.app).get('/v1/satellites/sat_nothere/position').query({ key: made.secret }).set('Origin', PAGE_ORIGIN).expect(404);
    await request(t.app).get(`/v1/satellites/${leo}/passes`).query({ key: made.secret, lat: '123', lon: '0' }).set('Origin', PAGE_ORIGIN).expect(400);
    const report = await usage.report(t.orgId, { from: day, to: day });
    const status = (r: typeof report, s: number) => r.byStatus.find((x) => x.status === s)?.count ?? 0;
    expect(status(report, 200) - status(before, 200)).toBe(2);
    expect(status(report, 404) - status(before, 404)).toBe(1);
    expect(status(report, 400) - status(before, 400)).toBe(1);
    expect(report.hours).toHaveLength(24);
    const hour = new Date().toISOString().slice(0, 13);
    const inHour = (r: typeof report) => r.hours.find((h) => h.hour === hour)?.count ?? 0;
    expect(inHour(report) - inHour(before)).toBe(4);
    // Errors count against the quota: the daily count (the quota's source) has them too.
    const daily = report.rows.filter((r) => r.apiKeyId === made.id).reduce((n, r) => n + r.count, 0);
    expect(daily).toBe(4);
    const origins = await usage.origins(t.orgId, [made.id], day);
    expect(origins.get(made.id)).toEqual([{ origin: PAGE_ORIGIN, count: 4, lastDay: day }]);
    // Written by a flush, the same answers come back from the tables.
    await usage.flush();
    const stored = await usage.report(t.orgId, { from: day, to: day });
    expect(status(stored, 404)).toBe(status(report, 404));
    expect((await usage.origins(t.orgId, [made.id], day)).get(made.id)?.[0]?.count).toBe(4);
  });

  it('writes the keys\u2019 last use in a batch', async () => {
    const keys = getKeyService(t.context);
    await keys.flushLastUsed();
    const started = Date.now();
    await request(t.app).get('/v1/satellites').set('Authorization', `Bearer ${t.readKey}`).expect(200);
    const row = await ApiKey.findOne({ where: { name: 'Reader' } });
    const pending = keys.serializeKey(row!);
    expect(Date.parse(pending.lastUsedAt ?? '')).toBeGreaterThanOrEqual(started - 1000);
    await keys.flushLastUsed();
    await row!.reload();
    expect(row!.lastUsedAt!.getTime()).toBeGreaterThanOrEqual(started - 1000);
  });
});

describe('usage written on SIGTERM by the real server', () => {
  let server: StartedServer | undefined;
  afterEach(async () => {
    await server?.stop();
    server = undefined;
  });

  it('flushes the counters when the process is told to stop, long before the interval', async () => {
    server = await startServer({ env: { USAGE_FLUSH_MS: '60000' } });
    const { serverKey, satellites } = server.credentials;
    const id = satellites[0]!.id;
    for (let i = 0; i < 7; i++) {
      const res = await fetch(`${server.url}/v1/satellites/${id}/position`, { headers: { Authorization: `Bearer ${serverKey}` } });
      expect(res.status).toBe(200);
    }
    const code = await server.stop();
    expect(code).toBe(0);
    const db = new Sequelize({ dialect: 'sqlite', storage: server.sqliteFile, logging: false });
    try {
      const rows = await db.query<{ endpoint: string; count: number }>('SELECT endpoint, count FROM usage_daily', { type: QueryTypes.SELECT });
      expect(rows).toEqual([{ endpoint: 'GET /v1/satellites/{id}/position', count: 7 }]);
      const used = await db.query<{ lastUsedAt: string | null }>('SELECT lastUsedAt FROM api_keys WHERE lastUsedAt IS NOT NULL', { type: QueryTypes.SELECT });
      expect(used).toHaveLength(1);
    } finally {
      await db.close();
    }
  });

  it('keeps the demo data on a second start and lets the demo keys read tracks', async () => {
    server = await startServer();
    const first = server.credentials;
    const dataDir = server.dataDir;
    const track = await fetch(`${server.url}/v1/satellites/${first.satellites[0]!.id}/track`, { headers: { Authorization: `Bearer ${first.serverKey}` } });
    expect(track.status).toBe(200);
    const page = await fetch(`${server.url}/v1/satellites`, { headers: { Origin: `http://127.0.0.1:${server.port}` } });
    expect(page.status).toBe(401);
    const viaBrowser = await fetch(`${server.url}/v1/satellites?key=${first.browserKey}`, { headers: { Origin: `http://127.0.0.1:${server.port}` } });
    expect(viaBrowser.status).toBe(200);
    expect(((await viaBrowser.json()) as { satellites: unknown[] }).satellites).toHaveLength(4);
    await server.stop();

    server = await startServer({ dataDir });
    expect(server.credentials.users).toEqual(first.users);
    expect(server.credentials.serverKey).toBe(first.serverKey);
    expect(server.credentials.browserKey).toBe(first.browserKey);
    expect(server.credentials.embedId).toBe(first.embedId);
    expect(server.output()).toContain('kept from an earlier start');
    // The new port was added to the browser key's origins.
    const again = await fetch(`${server.url}/v1/satellites?key=${first.browserKey}`, { headers: { Origin: `http://localhost:${server.port}` } });
    expect(again.status).toBe(200);
    expect(fs.statSync(`${dataDir}/demo-credentials.json`).mode & 0o077).toBe(0);
  });
});
