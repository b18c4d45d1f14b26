import { describe, expect, it } from 'vitest';
import { NadirApi, problemFrom } from './api.ts';

const problem = (status: number, body: unknown, headers: Record<string, string> = {}) =>
  new Response(JSON.stringify(body), { status, headers: { 'content-type': 'application/problem+json', ...headers } });

describe('problemFrom', () => {
  it('reads the code extension member and the problem fields', async () => {
    const p = await problemFrom(problem(403, { type: 'https://x/origin', title: 'Origin not allowed', status: 403, detail: 'no', code: 'origin-not-allowed' }));
    expect(p).toMatchObject({ ok: false, code: 'origin-not-allowed', status: 403, title: 'Origin not allowed', detail: 'no' });
  });

  it('falls back to the status when the body has no code', async () => {
    expect((await problemFrom(new Response('oops', { status: 401 }))).code).toBe('invalid-key');
    expect((await problemFrom(new Response('oops', { status: 503 }))).code).toBe('server');
  });

  it('reads Retry-After as seconds or as an HTTP date', async () => {
    expect((await problemFrom(problem(429, { code: 'rate-limited' }, { 'retry-after': '7' }))).retryAfterS).toBe(7);
    const now = Date.parse('2026-03-04T12:00:00Z');
    const p = await problemFrom(problem(429, { code: 'quota-exceeded' }, { 'retry-after': 'Wed, 04 Mar 2026 12:10:00 GMT' }), now);
    expect(p.retryAfterS).toBe(600);
  });
});

describe('NadirApi', () => {
  it('puts the browser key in the query so a plain GET needs no preflight', async () => {
    const seen: { url: string; headers: Record<string, string> | undefined }[] = [];
    const api = new NadirApi('https://api.nadirline.test/', 'nlb_abc', async (url, init) => {
      seen.push({ url, headers: init?.headers });
      return new Response(JSON.stringify({ points: [{ t: '2026-03-04T00:00:00Z', lat: 1, lon: 2, altKm: 400, sunlit: true }] }));
    });
    const r = await api.track('sat 1', Date.parse('2026-03-04T00:00:00Z'), Date.parse('2026-03-04T02:00:00Z'), 30);
    expect(r).toEqual({ ok: true, value: [{ t: Date.parse('2026-03-04T00:00:00Z'), lat: 1, lon: 2, altKm: 400, sunlit: true }] });
    expect(seen[0]!.url).toBe('https://api.nadirline.test/v1/satellites/sat%201/track?start=2026-03-04T00%3A00%3A00Z&end=2026-03-04T02%3A00%3A00Z&step=30&key=nlb_abc');
    expect(Object.keys(seen[0]!.headers ?? {})).toEqual(['accept']);
  });

  it('rounds the observer to 0.01 degree so nearby readers share answers', async () => {
    let url = '';
    const api = new NadirApi('https://api.nadirline.test', '', async (u) => {
      url = u;
      return new Response('{"passes":[]}');
    });
    await api.passes('a', { lat: 52.20551, lon: 0.11888, altM: 12.4 }, Date.parse('2026-03-04T12:00:00Z'), 2);
    const q = new URL(url).searchParams;
    expect([q.get('lat'), q.get('lon'), q.get('altM'), q.get('days'), q.has('key')]).toEqual(['52.21', '0.12', '12', '2', false]);
  });

  it('turns a failed fetch into a network problem instead of throwing', async () => {
    const api = new NadirApi('https://api.nadirline.test', 'k', async () => {
      throw new TypeError('Failed to fetch');
    });
    expect(await api.elements('a')).toMatchObject({ ok: false, code: 'network', status: 0 });
  });
});
