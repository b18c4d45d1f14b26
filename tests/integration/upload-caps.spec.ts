/**
 * Uploads cannot stall the server: at most 500 element sets per upload, counted while the text is
 * read (the first entry over the cap stops reading), on every way in: POST /v1/satellites/{id}/
 * element-sets (text, XML, JSON, multipart files together), POST /v1/satellites and the console's
 * POST /api/orgs/{org}/satellites. Hostile texts of the shapes that once froze the server for
 * seconds to minutes answer 413 at once. The parse figures are in tests/bench/parse.bench.ts.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { leoTle, startKeyedApp, type KeyedTestApp } from '../support/app.ts';
import { signUpAndVerify, startTestApp, type Person, type TestApp } from './console-api.harness.ts';

let t: KeyedTestApp;
const auth = () => ({ Authorization: `Bearer ${t.serverKey}` });
const HOUR = 3_600_000;

beforeAll(async () => {
  t = await startKeyedApp();
});
afterAll(async () => {
  await t?.close();
});

/** `n` distinct, valid TLE sets (one an hour), as one text. */
function tleSets(n: number, catalogNumber = '99801'): string {
  const base = Math.floor(Date.now() / HOUR) * HOUR - 30 * 24 * HOUR;
  return Array.from({ length: n }, (_, i) => leoTle({ epochMs: base + i * HOUR, catalogNumber })).join('\n');
}

function tooMany(res: request.Response): { detail: string; limitSets: number; line: number; file?: string } {
  expect(res.status, JSON.stringify(res.body).slice(0, 300)).toBe(413);
  expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
  expect(res.body.code).toBe('payload-too-large');
  expect(res.body.limitSets).toBe(500);
  return res.body;
}

const upload = (body: string, type: string, id = t.satellites.leo.id) =>
  request(t.app).post(`/v1/satellites/${id}/element-sets`).set(auth()).set('Content-Type', type).send(body);

describe('element sets per upload', () => {
  it('takes 500 sets and refuses 501 before storing any, naming where set 501 starts', async () => {
    const text = tleSets(501);
    const p = tooMany(await upload(text, 'text/plain', t.satellites.empty.id));
    // Four lines a set (name, line 1, line 2, a blank line): set 501 starts on line 2001.
    expect(p.line).toBe(2001);
    expect(p.detail).toBe('At most 500 element sets per upload; this one holds more (set 501 starts at line 2001). Send the rest in another upload.');
    const none = await request(t.app).get(`/v1/satellites/${t.satellites.empty.id}`).set(auth());
    expect(none.body.current).toBeNull();

    const ok = await upload(tleSets(500), 'text/plain', t.satellites.empty.id);
    expect(ok.status, JSON.stringify(ok.body).slice(0, 300)).toBe(201);
    expect(ok.body.accepted).toBe(500);
  });

  it.each([
    ["'<omm>' x 60,000 as application/xml", () => '<omm>'.repeat(60_000), 'application/xml'],
    ["'x\\n' x 120,000 as text/plain", () => 'x\n'.repeat(120_000), 'text/plain'],
    ['a 1.8 MB JSON array of empty objects', () => `[${'{},'.repeat(600_000)}{}]`, 'application/json'],
    ['KVN version lines x 90,000', () => 'CCSDS_OMM_VERS = 3.0\n'.repeat(90_000), 'text/plain'],
  ])('refuses %s with 413 at once', async (_name, make, type) => {
    const p = tooMany(await upload(make(), type));
    expect(p.line).toBeGreaterThan(0);
    const health = await request(t.app).get('/healthz');
    expect(health.status).toBe(200);
  });

  it('refuses three 1 MB hostile bodies sent together, each with 413', async () => {
    const body = '<omm>'.repeat(200_000);
    const answers = await Promise.all([0, 1, 2].map(() => upload(body, 'application/xml')));
    for (const res of answers) tooMany(res);
  });

  it('counts the sets of every file of one multipart upload together and names the file where the cap is crossed', async () => {
    const res = await request(t.app)
      .post(`/v1/satellites/${t.satellites.leo.id}/element-sets`)
      .set(auth())
      .attach('files[]', Buffer.from(tleSets(300)), 'first.tle')
      .attach('files[]', Buffer.from(tleSets(300)), 'second.tle');
    const p = tooMany(res);
    expect(p.file).toBe('second.tle');
    // 300 sets in first.tle: set 501 is the 201st of second.tle, on its line 801.
    expect(p.line).toBe(801);
    expect(p.detail).toContain('line 801 of second.tle');
  });

  it('caps POST /v1/satellites the same way, and creates nothing', async () => {
    const before = (await request(t.app).get('/v1/satellites').set(auth())).body.satellites.length;
    const p = tooMany(await request(t.app).post('/v1/satellites').set(auth()).send({ name: 'Too many sets', elements: tleSets(501, '99803') }));
    expect(p.line).toBe(2001);
    const hostile = tooMany(await request(t.app).post('/v1/satellites').set(auth()).send({ name: 'Hostile', elements: '<omm>'.repeat(60_000) }));
    expect(hostile.line).toBe(1);
    const after = (await request(t.app).get('/v1/satellites').set(auth())).body.satellites.length;
    expect(after).toBe(before);
  });
});

describe('console satellite creation', () => {
  let c: TestApp;
  let owner: Person;
  beforeAll(async () => {
    c = await startTestApp();
    owner = await signUpAndVerify(c, { organizationName: 'Capped Upload Lab' });
  });
  afterAll(async () => {
    await c?.close();
  });

  it('refuses more than 500 sets with 413 and creates nothing', async () => {
    const api = (p: string) => `/api/orgs/${owner.orgId}${p}`;
    const res = await owner.browser.post(api('/satellites'), { name: 'Too many sets', elements: tleSets(501, '99804') });
    tooMany(res);
    const hostile = await owner.browser.post(api('/satellites'), { name: 'Hostile', elements: 'x\n'.repeat(120_000) });
    tooMany(hostile);
    const list = await owner.browser.get(api('/satellites')).expect(200);
    expect(list.body.satellites).toEqual([]);
  });
});
