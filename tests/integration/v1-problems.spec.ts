/**
 * How /v1 says what went wrong: readable validation messages, problem instances without the
 * query string, size limits named, parser messages with one location, statuses as documented.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { leoTle, startKeyedApp, type KeyedTestApp } from '../support/app.ts';

let t: KeyedTestApp;
const auth = () => ({ Authorization: `Bearer ${t.serverKey}` });
const MIB = 1024 * 1024;

beforeAll(async () => {
  t = await startKeyedApp();
});
afterAll(async () => {
  await t?.close();
});

interface FieldError {
  where: string;
  field?: string;
  message: string;
}

function problem(res: request.Response, status: number, code: string): { detail: string; errors: FieldError[]; instance?: string } {
  expect(res.status, JSON.stringify(res.body)).toBe(status);
  expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
  expect(res.body.code).toBe(code);
  return res.body as { detail: string; errors: FieldError[]; instance?: string };
}

const messages = (p: { errors: FieldError[] }) => p.errors.map((e) => e.message);

describe('problem instance', () => {
  it('is the path only: a key sent in ?key= is never echoed back', async () => {
    const res = await request(t.app).get('/v1/satellites').query({ key: t.serverKey, other: 'x' });
    const p = problem(res, 401, 'invalid-key');
    expect(p.instance).toBe('/v1/satellites');
    expect(res.text).not.toContain(t.serverKey);
    expect(res.text).not.toContain(t.serverKey.slice(4));
  });

  it('drops the query string on every problem, validation ones included', async () => {
    const res = await request(t.app).get(`/v1/satellites/${t.satellites.leo.id}/passes`).query({ lat: 'x', key: t.browserKey }).set('Origin', 'https://pages.example.org');
    const p = problem(res, 400, 'validation-failed');
    expect(p.instance).toBe(`/v1/satellites/${t.satellites.leo.id}/passes`);
    expect(res.text).not.toContain(t.browserKey);
  });
});

describe('validation messages', () => {
  const passes = () => `/v1/satellites/${t.satellites.leo.id}/passes`;
  const track = () => `/v1/satellites/${t.satellites.leo.id}/track`;

  it('says a missing parameter is required and what it is', async () => {
    const p = problem(await request(t.app).get(passes()).set(auth()), 400, 'validation-failed');
    expect(p.errors).toEqual([
      { where: 'query.lat', field: 'lat', message: 'lat is required: the observer\u2019s latitude, a number of degrees from -90 to 90' },
      { where: 'query.lon', field: 'lon', message: 'lon is required: the observer\u2019s longitude, a number of degrees from -180 to 180' },
    ]);
    expect(p.detail).toBe(`${messages(p).join('; ')}.`);
    expect(p.detail).not.toMatch(/Invalid input|NaN|received/);
  });

  it('treats an empty parameter as not given', async () => {
    const p = problem(await request(t.app).get(passes()).query({ lat: '', lon: '5' }).set(auth()), 400, 'validation-failed');
    expect(messages(p)).toEqual(['lat is required: the observer\u2019s latitude, a number of degrees from -90 to 90']);
  });

  it('says what a wrong value should be and quotes what came', async () => {
    const p = problem(await request(t.app).get(track()).query({ step: 'abc', format: 'kml' }).set(auth()), 400, 'validation-failed');
    expect(messages(p)).toEqual(["step must be a number of seconds from 1 to 3600; got 'abc'", "format must be json or geojson; got 'kml'"]);
    const range = problem(await request(t.app).get(passes()).query({ lat: 91, lon: 5, days: 15 }).set(auth()), 400, 'validation-failed');
    expect(messages(range)).toEqual(["lat must be the observer\u2019s latitude, a number of degrees from -90 to 90; got '91'", "days must be a number of days from 0.01 to 14; got '15'"]);
    const at = problem(await request(t.app).get(`/v1/satellites/${t.satellites.leo.id}/position`).query({ at: 'yesterday' }).set(auth()), 400, 'validation-failed');
    expect(messages(at)).toEqual(["at must be an ISO 8601 UTC time such as 2025-01-31T12:00:00Z; got 'yesterday'"]);
  });

  it('says when a parameter was given twice', async () => {
    const p = problem(await request(t.app).get(`${track()}?step=60&step=30`).set(auth()), 400, 'validation-failed');
    expect(p.errors).toEqual([{ where: 'query.step', field: 'step', message: 'step was given twice; send it once' }]);
  });

  it('explains ids on /v1/positions', async () => {
    const none = problem(await request(t.app).get('/v1/positions').set(auth()), 400, 'validation-failed');
    expect(messages(none)).toEqual(['ids is required: comma-separated satellite ids (at most 50)']);
    const many = problem(await request(t.app).get('/v1/positions').query({ ids: Array.from({ length: 51 }, (_, i) => `sat_${i}`).join(',') }).set(auth()), 400, 'validation-failed');
    expect(messages(many)).toEqual(['ids holds 51 ids; at most 50 per request']);
    const bad = problem(await request(t.app).get('/v1/positions').query({ ids: `${t.satellites.leo.id},no good` }).set(auth()), 400, 'validation-failed');
    expect(messages(bad)).toEqual(["ids holds a value that is not a satellite id: 'no good'"]);
  });

  it('says a body that is not an object must be one with name and elements', async () => {
    const p = problem(await request(t.app).post('/v1/satellites').set(auth()).send([]), 400, 'validation-failed');
    expect(p.errors).toEqual([{ where: 'body', message: 'body must be a JSON object with name and elements; got a list' }]);
    const noName = problem(await request(t.app).post('/v1/satellites').set(auth()).send({ elements: leoTle() }), 400, 'validation-failed');
    expect(noName.errors).toEqual([{ where: 'body.name', field: 'name', message: 'name is required: the satellite\u2019s display name, 1 to 200 characters' }]);
  });
});

describe('size limits', () => {
  it('names the limit for a text body that is too large', async () => {
    const res = await request(t.app)
      .post(`/v1/satellites/${t.satellites.leo.id}/element-sets`)
      .set(auth())
      .set('Content-Type', 'text/plain')
      .send('1'.repeat(3 * MIB));
    const p = problem(res, 413, 'payload-too-large');
    expect(p.detail).toBe('The request body (3 MiB) is larger than the 2 MiB limit.');
    expect(res.body.limitBytes).toBe(2 * MIB);
  });

  it('names the file and the limit per file for a multipart upload', async () => {
    const res = await request(t.app)
      .post(`/v1/satellites/${t.satellites.leo.id}/element-sets`)
      .set(auth())
      .attach('files[]', Buffer.alloc(2 * MIB + 10, 0x31), 'orbit.txt');
    const p = problem(res, 413, 'payload-too-large');
    expect(p.detail).toBe('orbit.txt is larger than the 2 MiB limit per file. Split it into several files.');
    expect(res.body.file).toBe('orbit.txt');
  });
});

describe('element-set parser messages', () => {
  const upload = () => request(t.app).post(`/v1/satellites/${t.satellites.leo.id}/element-sets`).set(auth());

  it('gives one location, then the reason', async () => {
    const res = await upload().attach('files[]', Buffer.from('garbage\n'), 'bad.txt');
    const p = problem(res, 422, 'unprocessable-element-set');
    expect(p.detail).toBe('bad.txt, line 1, column 1: this line belongs to no element set (expected a name line, TLE line 1 or TLE line 2).');
    expect(p.errors[0]).toMatchObject({ where: 'bad.txt, line 1, column 1', field: 'text', message: 'this line belongs to no element set (expected a name line, TLE line 1 or TLE line 2)' });
    expect(res.body.report[0].message).not.toMatch(/^text:|line \d+ column \d+/);
  });

  it('names the field when it tells what is wrong', async () => {
    const tle = leoTle({ hoursAgo: 30 }).split('\n');
    const line2 = tle[2] as string;
    const wrong = `${line2.slice(0, 68)}${(Number(line2[68]) + 1) % 10}`;
    const res = await upload().set('Content-Type', 'text/plain').send([tle[0], tle[1], wrong].join('\n'));
    const p = problem(res, 422, 'unprocessable-element-set');
    expect(p.detail).toMatch(/^Line 3, column 69 \(checksum\): expected \d, found \d\.$/);
    expect(p.errors[0]?.message).toMatch(/^expected \d, found \d$/);
  });

  it('puts broken XML in a readable sentence with line and column', async () => {
    const res = await upload().set('Content-Type', 'application/xml').send('<ndm><omm version="3.0"><broken>');
    const p = problem(res, 422, 'unprocessable-element-set');
    expect(p.detail).toBe('Line 1, column 6: the XML is not well-formed: <omm> and <broken> are opened but never closed.');
    const crossed = await upload().set('Content-Type', 'application/xml').send('<omm version="3.0">\n<header>\n</omm>');
    expect(problem(crossed, 422, 'unprocessable-element-set').detail).toBe(
      'Line 3, column 1: the XML is not well-formed: </omm> comes where </header> was expected (<header> was opened at line 2, column 1).',
    );
  });
});

describe('statuses as documented', () => {
  it('answers 404 for an unknown embed', async () => {
    problem(await request(t.app).get('/v1/embeds/nope'), 404, 'not-found');
  });

  it('answers an upload of nothing but stored epochs with 200, accepted 0 and the duplicates counted', async () => {
    const text = [leoTle({ hoursAgo: 40 }), leoTle({ hoursAgo: 41 })].join('\n');
    const url = `/v1/satellites/${t.satellites.leo.id}/element-sets`;
    const first = await request(t.app).post(url).set(auth()).attach('files[]', Buffer.from(text), 'daily.tle').expect(201);
    expect(first.body).toMatchObject({ accepted: 2, duplicates: 0, rejected: 0, detail: 'Stored 2 element sets.' });
    expect(first.body.elementSets).toHaveLength(2);
    const again = await request(t.app).post(url).set(auth()).attach('files[]', Buffer.from(text), 'daily.tle').expect(200);
    expect(again.body).toMatchObject({ accepted: 0, duplicates: 2, rejected: 0, elementSet: null, elementSets: [] });
    expect(again.body.detail).toBe('Nothing new was stored: 2 element sets were stored already (same epoch).');
    expect(again.body.report.every((r: { duplicate?: boolean }) => r.duplicate === true)).toBe(true);
  });

  it('lists in OpenAPI every 4xx the upload routes answer', async () => {
    const doc = (await request(t.app).get('/v1/openapi.json').expect(200)).body;
    const upload = doc.paths['/v1/satellites/{id}/element-sets'].post.responses;
    expect(upload['400'].description).toContain('validation-failed');
    expect(upload['200'].content['application/json'].schema.properties).toHaveProperty('duplicates');
    const empty = await request(t.app).post(`/v1/satellites/${t.satellites.leo.id}/element-sets`).set(auth()).set('Content-Type', 'text/plain').send('  ');
    problem(empty, 400, 'validation-failed');
    expect(doc.paths['/v1/satellites'].post.responses['400'].description).toContain('bad-request');
    expect(doc.paths['/v1/embeds/{id}'].get.responses['404'].description).toContain('not-found');
    // Problems carry extension members (RFC 9457 section 3.2): the schema must not forbid them.
    expect(doc.components.schemas.Problem.additionalProperties).not.toBe(false);
  });

  it('answers a broken percent-encoding with a readable 400', async () => {
    const p = problem(await request(t.app).get('/v1/satellites/%E0%A4%A').set(auth()), 400, 'bad-request');
    expect(p.detail).toMatch(/^The URL holds a broken percent-encoding \(%E0%A4%A\): /);
    expect(p.detail).not.toContain('Failed to decode');
  });
});

describe('GeoJSON tracks', () => {
  it('rounds coordinates to 5 decimals and keeps the antimeridian split points exact', async () => {
    const start = new Date(Math.floor(Date.now() / 600_000) * 600_000);
    const res = await request(t.app)
      .get(`/v1/satellites/${t.satellites.leo.id}/track`)
      .query({ start: start.toISOString(), end: new Date(start.getTime() + 6 * 3_600_000).toISOString(), step: 30, format: 'geojson' })
      .set(auth())
      .expect(200);
    const parts = JSON.parse(res.text).features[0].geometry.coordinates as number[][][];
    expect(parts.length).toBeGreaterThan(2);
    for (const part of parts) {
      for (const c of part) for (const v of c) expect(Math.abs(v * 1e5 - Math.round(v * 1e5))).toBeLessThan(1e-6);
    }
    for (let i = 1; i < parts.length; i++) {
      const end = parts[i - 1]!.at(-1)!;
      const next = parts[i]![0]!;
      expect(Math.abs(end[0]!)).toBe(180);
      expect(next[0]).toBe(-end[0]!);
      expect(next[1]).toBe(end[1]);
    }
  });
});
