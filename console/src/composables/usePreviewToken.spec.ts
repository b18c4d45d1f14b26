import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { effectScope, nextTick, ref } from 'vue';
import { mockFetch, problem } from '../testing/fetch-mock.ts';
import { forgetPreviewTokens, REFRESH_MARGIN_MS, RETRY_MS, usePreviewToken } from './usePreviewToken.ts';

const MIN = 60_000;
const LIFETIME_S = 15 * 60;

/** Answers POST /api/orgs/<org>/preview-token with nlp_<org>-1, nlp_<org>-2, ... */
function tokenServer() {
  let n = 0;
  const fn = vi.fn(async (input: RequestInfo | URL, init?: RequestInit) => {
    const url = String(input);
    const m = /^\/api\/orgs\/([^/]+)\/preview-token$/.exec(url);
    if (!m || init?.method !== 'POST') return new Response('{}', { status: 404, headers: { 'content-type': 'application/json' } });
    n += 1;
    const body = { token: `nlp_${m[1]}-${n}`, expiresAt: new Date(Date.now() + LIFETIME_S * 1000).toISOString(), expiresIn: LIFETIME_S };
    return new Response(JSON.stringify(body), { status: 200, headers: { 'content-type': 'application/json' } });
  });
  vi.stubGlobal('fetch', fn);
  return fn;
}

/** Let the fetch promise chain settle under fake timers. */
async function settle() {
  for (let i = 0; i < 5; i++) await Promise.resolve();
  await vi.advanceTimersByTimeAsync(0);
  await nextTick();
}

beforeEach(() => {
  vi.useFakeTimers();
  forgetPreviewTokens();
});
afterEach(() => {
  forgetPreviewTokens();
  vi.useRealTimers();
  vi.unstubAllGlobals();
});

describe('usePreviewToken, the credential of the live previews', () => {
  it('fetches one token for the organization and shares it between previews on the page', async () => {
    const fetchFn = tokenServer();
    const scope = effectScope();
    const [a, b] = scope.run(() => [usePreviewToken('org1'), usePreviewToken('org1')])!;
    expect(a.token.value).toBe('');
    await settle();
    expect(a.token.value).toBe('nlp_org1-1');
    expect(b.token.value).toBe('nlp_org1-1');
    expect(fetchFn).toHaveBeenCalledTimes(1);
    expect(String(fetchFn.mock.calls[0]?.[0])).toBe('/api/orgs/org1/preview-token');
    scope.stop();
  });

  it('fetches a new token a few minutes before the old one expires, and again after that', async () => {
    tokenServer();
    const scope = effectScope();
    const p = scope.run(() => usePreviewToken('org1'))!;
    await settle();
    await vi.advanceTimersByTimeAsync(LIFETIME_S * 1000 - REFRESH_MARGIN_MS - 1_000);
    expect(p.token.value).toBe('nlp_org1-1');
    await vi.advanceTimersByTimeAsync(2_000);
    await settle();
    expect(p.token.value).toBe('nlp_org1-2');
    await vi.advanceTimersByTimeAsync(LIFETIME_S * 1000 - REFRESH_MARGIN_MS);
    await settle();
    expect(p.token.value).toBe('nlp_org1-3');
    scope.stop();
  });

  it('runs no timer once no preview is shown, and refreshes on the next use when the time has passed', async () => {
    const fetchFn = tokenServer();
    const first = effectScope();
    first.run(() => usePreviewToken('org1'));
    await settle();
    first.stop();
    await vi.advanceTimersByTimeAsync(60 * MIN);
    expect(fetchFn).toHaveBeenCalledTimes(1);
    const second = effectScope();
    const p = second.run(() => usePreviewToken('org1'))!;
    await settle();
    expect(fetchFn).toHaveBeenCalledTimes(2);
    expect(p.token.value).toBe('nlp_org1-2');
    second.stop();
  });

  it('follows the organization it is given', async () => {
    tokenServer();
    const org = ref('org1');
    const scope = effectScope();
    const p = scope.run(() => usePreviewToken(org))!;
    await settle();
    expect(p.token.value).toBe('nlp_org1-1');
    org.value = 'org2';
    await settle();
    expect(p.token.value).toBe('nlp_org2-2');
    scope.stop();
  });

  it('tries again after a network failure, and keeps a refusal without retrying', async () => {
    const { fn } = mockFetch([
      { method: 'POST', path: '/api/orgs/org1/preview-token', status: 503, body: { code: 'unavailable', title: 'Service unavailable', status: 503, detail: 'Down for a moment.' }, once: true },
      { method: 'POST', path: '/api/orgs/org1/preview-token', body: { token: 'nlp_ok', expiresAt: new Date(Date.now() + 900_000).toISOString(), expiresIn: 900 } },
      { method: 'POST', path: '/api/orgs/org2/preview-token', ...problem(404, 'not-found', 'No such organization among yours.') },
    ]);
    const scope = effectScope();
    const [p, q] = scope.run(() => [usePreviewToken('org1'), usePreviewToken('org2')])!;
    await settle();
    expect(p.error.value?.code).toBe('unavailable');
    expect(p.token.value).toBe('');
    expect(q.error.value?.code).toBe('not-found');
    await vi.advanceTimersByTimeAsync(RETRY_MS);
    await settle();
    expect(p.token.value).toBe('nlp_ok');
    expect(p.error.value).toBeNull();
    await vi.advanceTimersByTimeAsync(5 * MIN);
    expect(fn.mock.calls.filter((c) => String(c[0]).includes('org2'))).toHaveLength(1);
    scope.stop();
  });

  it('sends the CSRF header, since the token is a POST', async () => {
    const { calls } = mockFetch([{ method: 'POST', path: '/api/orgs/org1/preview-token', body: { token: 'nlp_x', expiresAt: new Date().toISOString(), expiresIn: 900 } }]);
    const { api } = await import('../api/client.ts');
    api.csrfToken = 'csrf-123';
    const scope = effectScope();
    scope.run(() => usePreviewToken('org1'));
    await settle();
    expect(calls[0]?.headers['x-csrf-token']).toBe('csrf-123');
    scope.stop();
  });
});
