/**
 * Malformed requests answer 4xx application/problem+json, never 500 and never a stack trace:
 * multipart bodies busboy cannot read, NUL and other control characters in URLs and JSON bodies
 * (SQLite cuts a statement at a NUL), and a Content-Length longer than the body sent (the
 * connection is answered 408 and closed after BODY_TIMEOUT_MS instead of being held for minutes).
 */
import http from 'node:http';
import net from 'node:net';
import type { AddressInfo } from 'node:net';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startKeyedApp, type KeyedTestApp } from '../support/app.ts';
import { signUpAndVerify, startTestApp, type Person, type TestApp } from './console-api.harness.ts';

const BODY_TIMEOUT_MS = 600;
// Models bind to the app opened last: the /v1 app first, then the console app (last describe).
let t: KeyedTestApp;
let c: TestApp;
let owner: Person;
const auth = () => ({ Authorization: `Bearer ${t.serverKey}` });

beforeAll(async () => {
  t = await startKeyedApp({ BODY_TIMEOUT_MS: String(BODY_TIMEOUT_MS) });
});
afterAll(async () => {
  await t?.close();
  await c?.close();
});

function problem(res: request.Response, status: number, code: string): { detail: string } {
  expect(res.status, JSON.stringify(res.body).slice(0, 400)).toBe(status);
  expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
  expect(res.body.code).toBe(code);
  expect(res.text).not.toMatch(/\n\s+at /);
  return res.body as { detail: string };
}

const BOUNDARY = 'nadirline-boundary';
const part = (name: string, filename: string, body: string) =>
  `--${BOUNDARY}\r\nContent-Disposition: form-data; name="${name}"; filename="${filename}"\r\nContent-Type: text/plain\r\n\r\n${body}\r\n`;

const MULTIPART_CASES: Array<{ name: string; type: string; body: string; words: RegExp }> = [
  { name: 'no boundary in the Content-Type', type: 'multipart/form-data', body: part('files[]', 'a.tle', 'x'), words: /names no boundary/ },
  { name: 'the body ends before the closing boundary', type: `multipart/form-data; boundary=${BOUNDARY}`, body: part('files[]', 'a.tle', 'x').slice(0, -10), words: /ends (before the closing boundary|inside a file)/ },
  { name: 'a malformed part header', type: `multipart/form-data; boundary=${BOUNDARY}`, body: `--${BOUNDARY}\r\nContent-Disposition form-data\u0001\r\n\r\nx\r\n--${BOUNDARY}--\r\n`, words: /part header is malformed/ },
];

describe('/v1: multipart bodies busboy cannot read', () => {
  it.each(MULTIPART_CASES)('/v1 upload, $name: 400 in plain words', async ({ type, body, words }) => {
    const res = await request(t.app).post(`/v1/satellites/${t.satellites.leo.id}/element-sets`).set(auth()).set('Content-Type', type).send(body);
    expect(problem(res, 400, 'bad-request').detail).toMatch(words);
  });
});

describe('/v1: NUL in a path, query or JSON body', () => {
  it('NUL in a /v1 path or query: 404 and 400', async () => {
    problem(await request(t.app).get(`/v1/satellites/sat_%00`).set(auth()), 404, 'not-found');
    problem(await request(t.app).get(`/v1/positions?ids=${t.satellites.leo.id}%00`).set(auth()), 400, 'bad-request');
  });

  it('NUL in a JSON string: 400 naming the field', async () => {
    const v1 = await request(t.app).post('/v1/satellites').set(auth()).send({ name: 'x\u0000' });
    expect(problem(v1, 400, 'validation-failed').detail).toMatch(/^body\.name holds a NUL/);
  });
});

describe('a Content-Length longer than the body', () => {
  let server: http.Server;
  let port: number;
  beforeAll(async () => {
    server = http.createServer(t.app);
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
    port = (server.address() as AddressInfo).port;
  });
  afterAll(async () => {
    server.closeAllConnections();
    await new Promise((resolve) => server.close(resolve));
  });

  /** Send the head and `sent` of the `claimed` body bytes; resolve with what came back and when the server closed. */
  function shortBody(path: string, claimed: number, sent: string, headers: Record<string, string>): Promise<{ text: string; closedAfterMs: number }> {
    return new Promise((resolve, reject) => {
      const started = Date.now();
      const socket = net.connect(port, '127.0.0.1');
      let text = '';
      socket.setEncoding('utf8');
      socket.on('data', (d: string) => (text += d));
      socket.on('error', reject);
      socket.on('close', () => resolve({ text, closedAfterMs: Date.now() - started }));
      const head = Object.entries({ Host: `127.0.0.1:${port}`, 'Content-Length': String(claimed), ...headers })
        .map(([k, v]) => `${k}: ${v}`)
        .join('\r\n');
      socket.write(`POST ${path} HTTP/1.1\r\n${head}\r\n\r\n${sent}`);
      // A client that never closes: the server must end it.
      setTimeout(() => socket.destroy(new Error('the server held the connection for 10 s')), 10_000).unref();
    });
  }

  it('is answered 408 problem+json and closed after the body timeout (element-set upload)', async () => {
    const { text, closedAfterMs } = await shortBody(`/v1/satellites/${t.satellites.leo.id}/element-sets`, 100_000, '1 25544U', {
      Authorization: `Bearer ${t.serverKey}`,
      'Content-Type': 'text/plain',
    });
    expect(text).toMatch(/^HTTP\/1\.1 408 /);
    expect(text).toMatch(/content-type: application\/problem\+json/i);
    expect(text).toContain('"code":"request-timeout"');
    expect(closedAfterMs).toBeGreaterThanOrEqual(BODY_TIMEOUT_MS - 50);
    expect(closedAfterMs).toBeLessThan(BODY_TIMEOUT_MS + 3000);
  });

  it('closes the connection after the body timeout even when the route answered without reading the body', async () => {
    const { text, closedAfterMs } = await shortBody('/v1/satellites', 100_000, '{"na', { 'Content-Type': 'application/json' });
    expect(text).toMatch(/^HTTP\/1\.1 401 /);
    expect(closedAfterMs).toBeLessThan(BODY_TIMEOUT_MS + 3000);
  });
});

describe('console API', () => {
  beforeAll(async () => {
    c = await startTestApp();
    owner = await signUpAndVerify(c, { organizationName: 'Malformed Input Lab' });
  });

  it.each(MULTIPART_CASES)('console upload, $name: 400 in plain words', async ({ type, body, words }) => {
    const sat = await owner.browser.post(`/api/orgs/${owner.orgId}/satellites`, { name: `Multipart ${type.length}-${body.length}` }).expect(201);
    await owner.browser.session();
    const res = await owner.browser.agent
      .post(`/api/orgs/${owner.orgId}/satellites/${sat.body.satellite.id}/element-sets`)
      .set('X-CSRF-Token', owner.browser.csrf)
      .set('Content-Type', type)
      .send(body);
    expect(problem(res, 400, 'bad-request').detail).toMatch(words);
  });

  it.each([
    ['a satellite id', (org: string) => `/api/orgs/${org}/satellites/a%00b`],
    ['an organization id', () => '/api/orgs/a%00b/satellites'],
    ['an element-set id', (org: string) => `/api/orgs/${org}/element-sets/x%00/export`],
    ['an id with a line feed', (org: string) => `/api/orgs/${org}/satellites/a%0Ab`],
  ])('a control character in %s: 404, not a database error', async (_name, url) => {
    const res = await owner.browser.get(url(owner.orgId ?? ''));
    expect(problem(res, 404, 'not-found').detail).toMatch(/control character/);
  });

  it('NUL in a JSON string: 400 naming the field', async () => {
    const res = await owner.browser.post(`/api/orgs/${owner.orgId}/satellites`, { name: 'ok', description: 'a\u0000b' });
    expect(problem(res, 400, 'validation-failed').detail).toBe('body.description holds a NUL character (\\u0000); no field takes one.');
    const signIn = await c.browser().post('/api/auth/signin', { email: 'a\u0000@example.test', password: 'x' });
    expect(signIn.status).toBe(400);
  });
});
