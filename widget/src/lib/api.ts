/**
 * The widget's only way out: GET requests to the Nadirline /v1 API with a browser key in `?key=`
 * (a plain GET with no custom header needs no CORS preflight). Every failure becomes an
 * `ApiProblem` value; nothing is thrown at the caller.
 */
import type { V1Derived, V1Embed, V1Pass, V1Passes, V1Satellite, V1Track } from '@nadirline/shared/contract';
import type { Sample } from './track.ts';

/**
 * Problem codes: the API's own (`invalid-key`, `no-element-set`, ...; see /docs/problems) as
 * received, or one of the widget's codes for conditions no answer names (WIDGET_CODES in
 * messages.ts: `no-key`, `network`, `stale-element-set`, ...).
 */
export type ProblemCode =
  | 'unauthenticated'
  | 'invalid-key'
  | 'key-expired'
  | 'key-revoked'
  | 'key-rotated'
  | 'origin-not-allowed'
  | 'quota-exceeded'
  | 'rate-limited'
  | 'not-found'
  | 'no-element-set'
  | 'decayed'
  | 'propagation-failed'
  | 'no-key'
  | 'no-satellites'
  | 'stale-element-set'
  | 'network'
  | 'server'
  | 'bad-answer'
  | 'widget'
  | (string & {});

export interface ApiProblem {
  ok: false;
  code: ProblemCode;
  status: number;
  title: string;
  detail: string;
  /** Seconds to wait before asking again, from Retry-After, when the server sent one. */
  retryAfterS?: number;
}
export type ApiResult<T> = { ok: true; value: T } | ApiProblem;

export type FetchLike = (input: string, init?: { signal?: AbortSignal; headers?: Record<string, string> }) => Promise<Response>;

/** Map an HTTP status to a problem code when the answer carries none (one table, no precedence traps). */
const STATUS_CODES: Record<number, ProblemCode> = {
  401: 'invalid-key',
  403: 'origin-not-allowed',
  404: 'not-found',
  410: 'decayed',
  429: 'rate-limited',
};

function parseRetryAfter(value: string | null, nowMs: number): number | undefined {
  if (!value) return undefined;
  const s = Number(value);
  if (Number.isFinite(s)) return Math.max(0, s);
  const at = Date.parse(value);
  return Number.isNaN(at) ? undefined : Math.max(0, Math.round((at - nowMs) / 1000));
}

/** Turn a non-2xx answer into an ApiProblem, reading problem+json when present. */
export async function problemFrom(res: Response, nowMs = Date.now()): Promise<ApiProblem> {
  let body: Record<string, unknown> = {};
  try {
    const parsed: unknown = await res.json();
    if (parsed && typeof parsed === 'object') body = parsed as Record<string, unknown>;
  } catch {
    // not JSON: keep the status alone
  }
  const str = (k: string) => (typeof body[k] === 'string' ? (body[k] as string) : '');
  const code = str('code') || STATUS_CODES[res.status] || (res.status >= 500 ? 'server' : `http-${res.status}`);
  const retryAfterS = parseRetryAfter(res.headers.get('retry-after'), nowMs);
  return {
    ok: false,
    code,
    status: res.status,
    title: str('title') || res.statusText,
    detail: str('detail'),
    ...(retryAfterS === undefined ? {} : { retryAfterS }),
  };
}

/**
 * The /v1 answers as the widget reads them: the contract's types (type-only, nothing bundled),
 * narrowed to the fields the widget uses, so a change of an answer shape fails the widget's type check.
 */
export interface SatelliteInfo extends Pick<V1Satellite, 'id' | 'name'> {
  /** Derived elements of the current element set (null when the satellite has none yet). */
  derived?: ElementsInfo | null;
}
export type ElementsInfo = Pick<V1Derived, 'epoch' | 'periodMin' | 'semiMajorAxisKm' | 'inclinationDeg' | 'ageDays' | 'stale'>;
export type PassEvent = V1Pass['rise'];
/** inProgressAtStart: already under way at the window start (`rise` is the window start, not a true rise); inProgressAtEnd likewise for `set`. */
export type Pass = Omit<V1Pass, 'inProgressAtStart' | 'inProgressAtEnd'> & Partial<Pick<V1Pass, 'inProgressAtStart' | 'inProgressAtEnd'>>;
export type TrackAnswer = Partial<Pick<V1Track, 'points'>>;
export type PassesAnswer = Pick<V1Passes, 'passes'> & Partial<Pick<V1Passes, 'alwaysUp'>>;
export interface EmbedConfig extends Pick<V1Embed, 'id' | 'satellites'> {
  options: Partial<{
    projection: string;
    orbitsBehind: number;
    orbitsAhead: number;
    observer: string | { lat: number; lon: number; altM?: number } | null;
    layers: string | string[];
    theme: string;
    timeZone: string;
    locale: string;
    observerName: string;
  }>;
  apiKey?: string;
}

/**
 * Elevation mask of the passes the widget asks for, degrees: rise and set are the moments the
 * satellite climbs above and sinks below it (lower passes are hard to see over roofs and trees).
 */
export const PASS_MIN_ELEVATION_DEG = 10;

const iso = (ms: number) => new Date(ms).toISOString().replace('.000Z', 'Z');

export class NadirApi {
  /**
   * @param key browser key sent as `?key=`; when empty, `embedId` (if any) is sent as `?embed=`,
   *   which the server accepts as the read credential of a saved embed.
   */
  constructor(
    private readonly base: string,
    private readonly key: string,
    private readonly fetchImpl: FetchLike = (u, i) => fetch(u, i),
    private readonly embedId = '',
  ) {}

  /** Absolute URL of a /v1 path with its query, the browser key last. */
  url(path: string, query: Record<string, string | number | undefined> = {}): string {
    const u = new URL(path.replace(/^\//, ''), this.base.endsWith('/') ? this.base : `${this.base}/`);
    for (const [k, v] of Object.entries(query)) if (v !== undefined) u.searchParams.set(k, String(v));
    if (this.key) u.searchParams.set('key', this.key);
    else if (this.embedId && !path.includes('/embeds/')) u.searchParams.set('embed', this.embedId);
    return u.toString();
  }

  async get<T>(path: string, query: Record<string, string | number | undefined> = {}, signal?: AbortSignal): Promise<ApiResult<T>> {
    let res: Response;
    try {
      res = await this.fetchImpl(this.url(path, query), { signal, headers: { accept: 'application/json' } });
    } catch (e) {
      const aborted = (e as { name?: string } | null)?.name === 'AbortError';
      return { ok: false, code: aborted ? 'aborted' : 'network', status: 0, title: aborted ? 'Aborted' : 'Network error', detail: '' };
    }
    if (!res.ok) return problemFrom(res);
    try {
      return { ok: true, value: (await res.json()) as T };
    } catch (e) {
      // A request given up while its body was still arriving is not a bad answer.
      if (signal?.aborted || (e as { name?: string } | null)?.name === 'AbortError') return { ok: false, code: 'aborted', status: 0, title: 'Aborted', detail: '' };
      return { ok: false, code: 'bad-answer', status: res.status, title: 'Unreadable answer', detail: '' };
    }
  }

  satellite(id: string, signal?: AbortSignal) {
    return this.get<Partial<SatelliteInfo>>(`v1/satellites/${encodeURIComponent(id)}`, {}, signal);
  }
  elements(id: string, signal?: AbortSignal) {
    return this.get<ElementsInfo>(`v1/satellites/${encodeURIComponent(id)}/elements`, {}, signal);
  }
  async track(id: string, startMs: number, endMs: number, stepS: number, signal?: AbortSignal): Promise<ApiResult<Sample[]>> {
    const r = await this.get<TrackAnswer>(
      `v1/satellites/${encodeURIComponent(id)}/track`,
      { start: iso(startMs), end: iso(endMs), step: stepS },
      signal,
    );
    if (!r.ok) return r;
    if (!Array.isArray(r.value.points)) return { ok: false, code: 'bad-answer', status: 200, title: 'Unreadable answer', detail: '' };
    return {
      ok: true,
      value: r.value.points.map((p) => ({ t: Date.parse(p.t), lat: p.lat, lon: p.lon, altKm: p.altKm, sunlit: p.sunlit })),
    };
  }
  /** Every satellite this credential may see, with names and derived elements: one request for many. */
  satellites(signal?: AbortSignal) {
    return this.get<{ satellites?: Partial<SatelliteInfo>[] }>('v1/satellites', {}, signal);
  }
  /**
   * One window for many satellites in one request (GET /v1/tracks). Each id gets its samples or
   * its own problem (no element set, decayed ...), as the one-satellite route would have answered.
   */
  async tracks(ids: readonly string[], startMs: number, endMs: number, stepS: number, signal?: AbortSignal): Promise<ApiResult<Map<string, ApiResult<Sample[]>>>> {
    type Entry = { satelliteId?: string; points?: { t: string; lat: number; lon: number; altKm: number; sunlit: boolean }[]; error?: { code?: string; status?: number; detail?: string } };
    const r = await this.get<{ tracks?: Entry[] }>('v1/tracks', { ids: ids.join(','), start: iso(startMs), end: iso(endMs), step: stepS }, signal);
    if (!r.ok) return r;
    if (!Array.isArray(r.value.tracks)) return { ok: false, code: 'bad-answer', status: 200, title: 'Unreadable answer', detail: '' };
    const out = new Map<string, ApiResult<Sample[]>>();
    for (const e of r.value.tracks) {
      if (typeof e.satelliteId !== 'string') continue;
      if (Array.isArray(e.points)) out.set(e.satelliteId, { ok: true, value: e.points.map((p) => ({ t: Date.parse(p.t), lat: p.lat, lon: p.lon, altKm: p.altKm, sunlit: p.sunlit })) });
      else out.set(e.satelliteId, { ok: false, code: e.error?.code ?? 'bad-answer', status: e.error?.status ?? 422, title: e.error?.code ?? '', detail: e.error?.detail ?? '' });
    }
    for (const id of ids) if (!out.has(id)) out.set(id, { ok: false, code: 'bad-answer', status: 200, title: 'Unreadable answer', detail: '' });
    return { ok: true, value: out };
  }
  passes(id: string, obs: { lat: number; lon: number; altM: number }, startMs: number, days: number, signal?: AbortSignal) {
    return this.get<PassesAnswer>(
      `v1/satellites/${encodeURIComponent(id)}/passes`,
      { lat: round2(obs.lat), lon: round2(obs.lon), altM: Math.round(obs.altM), start: iso(startMs), days, minElevation: PASS_MIN_ELEVATION_DEG },
      signal,
    );
  }
  embed(id: string, signal?: AbortSignal) {
    return this.get<EmbedConfig>(`v1/embeds/${encodeURIComponent(id)}`, {}, signal);
  }
}

/**
 * Observer coordinates rounded to 0.01 degree (about a kilometre): pass times move by well under a
 * second, readers nearby share cached answers, and the exact place of the reader never leaves the page.
 */
function round2(x: number): number {
  return Math.round(x * 100) / 100;
}
