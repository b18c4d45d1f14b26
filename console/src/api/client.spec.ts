import { afterEach, describe, expect, it, vi } from 'vitest';
import { mockFetch, problem } from '../testing/fetch-mock.ts';
import { ApiClient, ApiError, fieldName } from './client.ts';

afterEach(() => vi.unstubAllGlobals());

describe('the console API client', () => {
  it('turns a problem+json answer into an ApiError with its code, detail and field errors', async () => {
    mockFetch([
      {
        method: 'POST',
        path: '/api/auth/signup',
        ...problem(400, 'validation-failed', 'The request body is not valid: password: Use at least 10 characters.', {
          errors: [
            { where: '/password', field: 'password', message: 'Use at least 10 characters.' },
            { where: '/email', message: 'Enter an e-mail address like name@example.org.' },
            { where: 'line 3, column 12', message: 'not a number', line: 3, column: 12 },
          ],
        }),
      },
    ]);
    const api = new ApiClient();
    const err = await api.signUp({ email: 'x', name: 'A', password: 'short', organizationName: 'O' }).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(ApiError);
    const e = err as ApiError;
    expect(e.status).toBe(400);
    expect(e.code).toBe('validation-failed');
    expect(e.detail).toMatch(/password/);
    expect(e.fieldErrors()).toEqual({ password: 'Use at least 10 characters.', email: 'Enter an e-mail address like name@example.org.' });
    expect(e.generalErrors()).toEqual(['not a number']);
    expect(e.errors[2]).toMatchObject({ line: 3, column: 12 });
  });

  it('names the input of nested and indexed fields by their leaf', () => {
    expect(fieldName({ where: '/kepler/eccentricity', message: 'm' })).toBe('eccentricity');
    expect(fieldName({ where: '/origins/2', message: 'm' })).toBe('origins');
    expect(fieldName({ where: 'x', field: 'options.observer', message: 'm' })).toBe('observer');
    expect(fieldName({ where: 'from', message: 'm' })).toBe('from');
    expect(fieldName({ where: 'kestrel.tle, line 4, column 69', message: 'm' })).toBeUndefined();
  });

  it('reports an expired session as a 401 ApiError without deciding what the page does', async () => {
    mockFetch([{ path: '/api/orgs/org1/keys', ...problem(401, 'unauthenticated', 'Sign in to continue.') }]);
    const err = (await new ApiClient().keys('org1').catch((e: unknown) => e)) as ApiError;
    expect(err).toBeInstanceOf(ApiError);
    expect(err.status).toBe(401);
    expect(err.code).toBe('unauthenticated');
  });

  it('keeps the status when the answer is not problem+json', async () => {
    mockFetch([{ path: '/api/orgs/org1/satellites', status: 502, body: 'Bad gateway', headers: { 'content-type': 'text/html' } }]);
    const err = (await new ApiClient().satellites('org1').catch((e: unknown) => e)) as ApiError;
    expect(err.status).toBe(502);
    expect(err.code).toBe('http-502');
    expect(err.title).toBe('The server is not reachable');
  });

  it('turns a dead network into code "network" with status 0', async () => {
    vi.stubGlobal('fetch', vi.fn(async () => Promise.reject(new TypeError('Failed to fetch'))));
    const err = (await new ApiClient().session().catch((e: unknown) => e)) as ApiError;
    expect(err.code).toBe('network');
    expect(err.status).toBe(0);
  });

  it('reads Retry-After on throttled sign-ins', async () => {
    mockFetch([{ method: 'POST', path: '/api/auth/signin', ...problem(429, 'too-many-attempts', 'Too many sign-in attempts.'), headers: { 'content-type': 'application/problem+json', 'retry-after': '120' } }]);
    const err = (await new ApiClient().signIn('a@b.example', 'x').catch((e: unknown) => e)) as ApiError;
    expect(err.code).toBe('too-many-attempts');
    expect(err.retryAfterS).toBe(120);
  });

  it('sends the CSRF token on changes but not on reads', async () => {
    const { calls } = mockFetch([
      { path: '/api/session', body: { user: null, memberships: [], csrfToken: 'tok-1' } },
      { method: 'POST', path: '/api/orgs', status: 201, body: { organization: { id: 'o', name: 'N', plan: 'starter', createdAt: '' } } },
    ]);
    const api = new ApiClient();
    await api.session();
    await api.createOrg('N');
    expect(calls[0]!.headers['x-csrf-token']).toBeUndefined();
    expect(calls[1]!.headers['x-csrf-token']).toBe('tok-1');
    expect(calls[1]!.headers['content-type']).toBe('application/json');
    expect(calls[1]!.body).toEqual({ name: 'N' });
  });

  it('fetches a fresh CSRF token and retries once when the server refuses the old one', async () => {
    const { calls } = mockFetch([
      { method: 'POST', path: '/api/orgs/org1/keys/k1/revoke', once: true, ...problem(403, 'csrf-failed', 'Missing or wrong CSRF token') },
      { path: '/api/session', body: { user: null, memberships: [], csrfToken: 'tok-2' } },
      { method: 'POST', path: '/api/orgs/org1/keys/k1/revoke', body: { key: { id: 'k1' } } },
    ]);
    const api = new ApiClient();
    api.csrfToken = 'stale';
    const r = await api.revokeKey('org1', 'k1');
    expect(r.key.id).toBe('k1');
    expect(calls.map((c) => `${c.method} ${c.url} ${c.headers['x-csrf-token'] ?? ''}`)).toEqual([
      'POST /api/orgs/org1/keys/k1/revoke stale',
      'GET /api/session ',
      'POST /api/orgs/org1/keys/k1/revoke tok-2',
    ]);
  });

  it('does not retry a second CSRF refusal', async () => {
    const { calls } = mockFetch([
      { method: 'POST', path: '/api/auth/signout', ...problem(403, 'csrf-failed', 'Missing or wrong CSRF token') },
      { path: '/api/session', body: { user: null, memberships: [], csrfToken: 'tok-3' } },
    ]);
    const err = (await new ApiClient().signOut().catch((e: unknown) => e)) as ApiError;
    expect(err.code).toBe('csrf-failed');
    expect(calls).toHaveLength(3);
  });

  it('sends files as multipart files[] and lets the browser set the boundary', async () => {
    const { calls } = mockFetch([{ method: 'POST', path: '/api/orgs/org1/satellites/s1/element-sets', status: 201, body: { report: [], accepted: 0, rejected: 0 } }]);
    const file = new File(['1 99901U ...'], 'kestrel.tle', { type: 'text/plain' });
    await new ApiClient().addElementSets('org1', 's1', { files: [file] });
    const body = calls[0]!.body as FormData;
    expect(body).toBeInstanceOf(FormData);
    expect((body.getAll('files[]')[0] as File).name).toBe('kestrel.tle');
    expect(calls[0]!.headers['content-type']).toBeUndefined();
  });

  it('answers undefined for 204 No Content', async () => {
    mockFetch([{ method: 'DELETE', path: '/api/orgs/org1/embeds/e1', status: 204 }]);
    await expect(new ApiClient().deleteEmbed('org1', 'e1')).resolves.toBeUndefined();
  });

  it('builds download links with encoded path parts and the chosen range', () => {
    const api = new ApiClient();
    expect(api.usageCsvUrl('org 1', '2031-01-01', '2031-01-31')).toBe('/api/orgs/org%201/usage.csv?from=2031-01-01&to=2031-01-31');
    expect(api.exportUrl('org1', 'es/1', 'omm-xml')).toBe('/api/orgs/org1/element-sets/es%2F1/export?format=omm-xml');
  });
});
