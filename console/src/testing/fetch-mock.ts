/** Replaces globalThis.fetch with a table of canned answers, and records every call. */
import { vi } from 'vitest';

export interface FakeRoute {
  method?: string;
  /** Path with query, e.g. "/api/session" or a RegExp over it. */
  path: string | RegExp;
  status?: number;
  body?: unknown;
  headers?: Record<string, string>;
  /** Answer once, then fall through to later routes. */
  once?: boolean;
}

export interface RecordedCall {
  method: string;
  url: string;
  headers: Record<string, string>;
  body: unknown;
}

function problem(status: number, code: string, detail: string, extra: Record<string, unknown> = {}) {
  return { status, headers: { 'content-type': 'application/problem+json' }, body: { type: `/docs/problems#${code}`, title: code, status, detail, code, ...extra } };
}
export { problem };

export function mockFetch(routes: FakeRoute[]) {
  const calls: RecordedCall[] = [];
  const used = new Set<FakeRoute>();
  const fn = vi.fn(async (input: RequestInfo | URL, init?: RequestInit) => {
    const url = typeof input === 'string' ? input : input instanceof URL ? input.toString() : input.url;
    const method = (init?.method ?? 'GET').toUpperCase();
    const headers = Object.fromEntries(Object.entries((init?.headers ?? {}) as Record<string, string>).map(([k, v]) => [k.toLowerCase(), v]));
    let body: unknown = init?.body;
    if (typeof body === 'string') {
      try {
        body = JSON.parse(body);
      } catch {
        // keep the text
      }
    }
    calls.push({ method, url, headers, body });
    const route = routes.find(
      (r) => !(r.once && used.has(r)) && (r.method ?? 'GET') === method && (typeof r.path === 'string' ? r.path === url || r.path === url.split('?')[0] : r.path.test(url)),
    );
    if (!route) {
      return new Response(JSON.stringify({ code: 'not-found', title: 'Not found', status: 404, detail: `no fake for ${method} ${url}` }), {
        status: 404,
        headers: { 'content-type': 'application/problem+json' },
      });
    }
    used.add(route);
    const status = route.status ?? 200;
    const text = route.body === undefined ? null : typeof route.body === 'string' ? route.body : JSON.stringify(route.body);
    return new Response(status === 204 ? null : text, {
      status,
      headers: { 'content-type': route.body === undefined ? 'text/plain' : 'application/json', ...(route.headers ?? {}) },
    });
  });
  vi.stubGlobal('fetch', fn);
  return { fn, calls };
}
