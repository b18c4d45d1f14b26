/**
 * GET /v1/tracks: one window for many satellites in one request, with the caps, credentials,
 * usage and answers of the one-satellite track route.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CAPS } from '@nadirline/shared/contract';
import { UsageDaily } from '@nadirline/server/models/index.ts';
import { getUsageRecorder } from '@nadirline/server/services/usage.ts';
import { leoTle, PAGE_ORIGIN, startKeyedApp, type KeyedTestApp } from '../support/app.ts';

let t: KeyedTestApp;
const auth = () => ({ Authorization: `Bearer ${t.serverKey}` });
const HOUR = 3_600_000;
const aligned = () => new Date(Math.floor(Date.now() / HOUR) * HOUR).toISOString();
const plus = (iso: string, ms: number) => new Date(Date.parse(iso) + ms).toISOString();

beforeAll(async () => {
  t = await startKeyedApp({ USAGE_FLUSH_MS: '60000' });
});
afterAll(async () => {
  await t?.close();
});

describe('GET /v1/tracks', () => {
  it('answers each satellite’s track for one window, in the order asked, the same as the one-satellite route', async () => {
    const start = aligned();
    const end = plus(start, 2 * HOUR);
    const res = await request(t.app).get('/v1/tracks').query({ ids: `${t.satellites.geo.id},${t.satellites.leo.id}`, start, end, step: 30 }).set(auth()).expect(200);
    expect(res.headers['content-type']).toMatch(/application\/json/);
    expect(Date.parse(res.body.start)).toBe(Date.parse(start));
    expect(res.body.stepS).toBe(30);
    expect(res.body.tracks.map((x: { satelliteId: string }) => x.satelliteId)).toEqual([t.satellites.geo.id, t.satellites.leo.id]);
    expect(res.body.tracks.map((x: { name: string }) => x.name)).toEqual(['Test GEO', 'Test LEO']);
    const single = await request(t.app).get(`/v1/satellites/${t.satellites.leo.id}/track`).query({ start, end, step: 30 }).set(auth()).expect(200);
    const { name, ...leo } = res.body.tracks[1];
    expect(name).toBe('Test LEO');
    expect(leo).toEqual(single.body);
    expect(leo.count).toBe(241);
    expect(res.headers['cache-control']).toBe('public, max-age=600, stale-while-revalidate=60');
    // the same window again: not modified
    await request(t.app).get('/v1/tracks').query({ ids: `${t.satellites.geo.id},${t.satellites.leo.id}`, start, end, step: 30 }).set(auth()).set('If-None-Match', String(res.headers.etag)).expect(304);
  });

  it('gives an id it cannot answer an error with the one-satellite route’s code and status, and still answers the others', async () => {
    const res = await request(t.app)
      .get('/v1/tracks')
      .query({ ids: `${t.satellites.leo.id},${t.satellites.empty.id},${t.satellites.other.id},sat_nobody`, step: 60 })
      .set(auth())
      .expect(200);
    const [leo, empty, other, nobody] = res.body.tracks;
    expect(leo.points.length).toBeGreaterThan(50);
    expect(empty).toMatchObject({ satelliteId: t.satellites.empty.id, name: 'Not yet launched', error: { code: 'no-element-set', status: 422 } });
    // another organization's satellite is as unknown as one that does not exist
    expect(other).toMatchObject({ satelliteId: t.satellites.other.id, name: null, error: { code: 'not-found', status: 404 } });
    expect(nobody).toMatchObject({ satelliteId: 'sat_nobody', name: null, error: { code: 'not-found', status: 404 } });
    expect(JSON.stringify(other)).not.toContain('Their LEO');
  });

  it('keeps the caps of the one-satellite route, and a cap on all points together', async () => {
    const start = aligned();
    const many = Array.from({ length: CAPS.tracksMaxIds + 1 }, (_, i) => `sat_${i}`).join(',');
    const tooMany = await request(t.app).get('/v1/tracks').query({ ids: many }).set(auth()).expect(400);
    expect(tooMany.body.code).toBe('validation-failed');
    expect(tooMany.body.errors[0].where).toBe('query.ids');
    const long = await request(t.app).get('/v1/tracks').query({ ids: t.satellites.leo.id, start, end: plus(start, 3 * 86_400_000) }).set(auth()).expect(400);
    expect(long.body.errors[0]).toMatchObject({ where: 'query.end' });
    const dense = await request(t.app).get('/v1/tracks').query({ ids: t.satellites.leo.id, start, end: plus(start, 86_400_000), step: 1 }).set(auth()).expect(400);
    expect(dense.body.errors[0]).toMatchObject({ where: 'query.step' });
    // duplicates are asked once
    const twice = await request(t.app).get('/v1/tracks').query({ ids: `${t.satellites.leo.id},${t.satellites.leo.id}`, step: 60 }).set(auth()).expect(200);
    expect(twice.body.tracks).toHaveLength(1);
    // 13 windows of 5000 points are allowed one by one but not together (65000 > 60000)
    const ids = [t.satellites.leo.id];
    for (let i = 0; i < 12; i++) {
      const made = await request(t.app)
        .post('/v1/satellites')
        .set(auth())
        .send({ name: `Cap test ${i}`, elements: leoTle({ catalogNumber: String(99700 + i), name: `CAP ${i}` }) })
        .expect(201);
      ids.push(made.body.id);
    }
    const window = { start, end: plus(start, 4999_000), step: 1 };
    await request(t.app).get('/v1/tracks').query({ ids: ids.slice(0, 12).join(','), ...window }).set(auth()).expect(200);
    const all = await request(t.app).get('/v1/tracks').query({ ids: ids.join(','), ...window }).set(auth()).expect(400);
    expect(all.body.code).toBe('validation-failed');
    expect(all.body.detail).toMatch(/65000 points; at most 60000/);
    expect(all.body.errors[0].where).toBe('query.ids');
  });

  it('takes a browser key from its origins only and an embed for its own satellites only, and counts one request', async () => {
    const usage = getUsageRecorder(t.context);
    await usage.flush();
    const day = new Date().toISOString().slice(0, 10);
    const count = async () => (await UsageDaily.findOne({ where: { organizationId: t.orgId, apiKeyId: t.browserKeyId, endpoint: 'GET /v1/tracks', day } }))?.count ?? 0;
    const before = await count();
    const ok = await request(t.app).get('/v1/tracks').query({ ids: `${t.satellites.leo.id},${t.satellites.geo.id}`, key: t.browserKey }).set('Origin', PAGE_ORIGIN).expect(200);
    expect(ok.body.tracks).toHaveLength(2);
    await request(t.app).get('/v1/tracks').query({ ids: t.satellites.leo.id, key: t.browserKey }).set('Origin', 'https://copycat.example.com').expect(403);
    await usage.flush();
    expect(await count()).toBe(before + 1);
    const embed = await request(t.app).get('/v1/tracks').query({ ids: `${t.satellites.leo.id},${t.satellites.geo.id}`, embed: t.embedId }).set('Origin', PAGE_ORIGIN).expect(200);
    expect(embed.body.tracks[0].points.length).toBeGreaterThan(0);
    expect(embed.body.tracks[1].error.code).toBe('not-found');
  });

  it('is in the OpenAPI document with its parameters', async () => {
    const doc = (await request(t.app).get('/v1/openapi.json').expect(200)).body;
    const op = doc.paths['/v1/tracks'].get;
    expect(op.parameters.map((p: { name: string }) => p.name)).toEqual(expect.arrayContaining(['ids', 'start', 'end', 'step']));
    expect(op.description).toContain(String(CAPS.tracksMaxPoints));
  });
});
