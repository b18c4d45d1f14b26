import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import type { FetchLike } from './api.ts';
import { Tracker, type TrackerEvent } from './tracker.ts';

const NOW = Date.parse('2026-03-04T13:17:41Z');

interface Call {
  path: string;
  q: URLSearchParams;
}

/** A fake /v1 that answers from a table; `down` makes every request fail like a lost network. */
function fakeApi(
  opts: {
    key?: string;
    down?: () => boolean;
    missing?: string[];
    stale?: string[];
    periodMin?: number;
    /** Every answer is this problem while it returns one. */
    refuse?: () => { status: number; code?: string } | null;
    /** Satellites whose answer says they have no element set (derived: null, 422 elsewhere). */
    noSet?: string[];
  } = {},
) {
  const calls: Call[] = [];
  const json = (body: unknown, status = 200, headers: Record<string, string> = {}) =>
    new Response(JSON.stringify(body), { status, headers: { 'content-type': status < 400 ? 'application/json' : 'application/problem+json', ...headers } });
  const fetch: FetchLike = async (input) => {
    const u = new URL(input);
    calls.push({ path: u.pathname, q: u.searchParams });
    if (opts.down?.()) throw new TypeError('Failed to fetch');
    const refused = opts.refuse?.();
    if (refused) return json({ title: 'Refused', status: refused.status, ...(refused.code ? { code: refused.code } : {}) }, refused.status);
    const key = u.searchParams.get('key');
    if (opts.key && key !== opts.key) return json({ type: 'about:blank', title: 'Invalid key', status: 401, code: 'invalid-key' }, 401);
    const m = u.pathname.match(/^\/v1\/satellites\/([^/]+)(?:\/(\w+))?$/);
    const e = u.pathname.match(/^\/v1\/embeds\/([^/]+)$/);
    if (e) return json({ id: e[1], satellites: ['emb-sat'], options: { orbitsAhead: 0.5 }, apiKey: 'nlb_fromembed' });
    if (!m) return json({ title: 'no', status: 404, code: 'not-found' }, 404);
    const id = m[1]!;
    if (opts.missing?.includes(id)) return json({ title: 'Not found', status: 404, code: 'not-found' }, 404);
    if (opts.noSet?.includes(id)) return m[2] ? json({ title: 'No set', status: 422, code: 'no-element-set' }, 422) : json({ id, name: `Sat ${id}`, derived: null });
    if (!m[2]) return json({ id, name: `Sat ${id}` });
    if (m[2] === 'elements')
      return json({ epoch: '2026-03-04T00:00:00Z', periodMin: opts.periodMin ?? 90, semiMajorAxisKm: 6780, inclinationDeg: 51.6, ageDays: opts.stale?.includes(id) ? 21 : 0.5, stale: !!opts.stale?.includes(id) });
    if (m[2] === 'track') {
      const start = Date.parse(u.searchParams.get('start')!);
      const end = Date.parse(u.searchParams.get('end')!);
      const step = Number(u.searchParams.get('step')) * 1000;
      const points = [];
      for (let t = start; t <= end; t += step) points.push({ t: new Date(t).toISOString(), lat: 0, lon: ((t / 1000) % 360) - 180, altKm: 420, sunlit: true });
      return json({ points });
    }
    if (m[2] === 'passes')
      return json({ passes: [{ rise: { t: '2026-03-04T18:00:00Z', azimuth: 200 }, culmination: { t: '2026-03-04T18:05:00Z', azimuth: 150, elevation: 40, rangeKm: 600 }, set: { t: '2026-03-04T18:10:00Z', azimuth: 80 }, visible: true }] });
    return json({ title: 'no', status: 404, code: 'not-found' }, 404);
  };
  return { fetch, calls };
}

function make(fake: ReturnType<typeof fakeApi>, extra: Partial<ConstructorParameters<typeof Tracker>[0]> = {}) {
  const events: TrackerEvent[] = [];
  const t = new Tracker({
    apiBase: 'https://api.nadirline.test',
    apiKey: 'nlb_good',
    attrs: { satellites: 'a,b', observer: '52.2,0.12' },
    fetch: fake.fetch,
    now: () => Date.now(),
    origin: 'https://hall.example',
    onEvent: (e) => events.push(e),
    ...extra,
  });
  return { t, events };
}

/** Let pending promises and timers up to `ms` run. */
async function advance(ms: number) {
  await vi.advanceTimersByTimeAsync(ms);
}

beforeEach(() => {
  vi.useFakeTimers({ now: NOW });
});
afterEach(() => {
  vi.useRealTimers();
});

describe('Tracker', () => {
  it('plans track windows around the shown time, keeps passes on now, and asks nothing while paused', async () => {
    const fake = fakeApi();
    const { t } = make(fake, { attrs: { satellites: 'a', observer: '52.2,0.12', orbitsBehind: 0.5, orbitsAhead: 0.5 } });
    t.resume();
    await advance(10);
    const shown = NOW - 9 * 3600_000;
    t.setShownTime(() => shown);
    await advance(10);
    const starts = fake.calls.filter((c) => c.path.endsWith('/track')).map((c) => Date.parse(c.q.get('start')!));
    expect(starts.some((s) => s <= shown && shown < s + 2 * 3600_000)).toBe(true);
    const samples = t.state.sats[0]!.samples;
    expect(samples[0]!.t).toBeLessThanOrEqual(shown);
    const passStarts = fake.calls.filter((c) => c.path.endsWith('/passes')).map((c) => Date.parse(c.q.get('start')!));
    expect(passStarts.every((s) => s > NOW - 6 * 3600_000)).toBe(true);
    t.pause();
    const before = fake.calls.length;
    t.setShownTime(() => NOW - 11 * 3600_000);
    await advance(60_000);
    expect(fake.calls.length).toBe(before);
    t.dispose();
  });

  it('loads names, element sets, aligned track windows and passes, then says so once', async () => {
    const fake = fakeApi();
    const { t, events } = make(fake);
    t.resume();
    await advance(10);
    expect(t.state.phase).toBe('ready');
    expect(t.state.sats.map((s) => s.name)).toEqual(['Sat a', 'Sat b']);
    expect(t.state.sats[0]!.samples.length).toBeGreaterThan(100);
    expect(t.state.sats[0]!.passes).toHaveLength(1);
    const tracks = fake.calls.filter((c) => c.path.endsWith('/track'));
    for (const c of tracks) expect(Date.parse(c.q.get('start')!) % (2 * 3600_000)).toBe(0);
    expect(fake.calls.every((c) => c.q.get('key') === 'nlb_good')).toBe(true);
    expect(events.filter((e) => e.type === 'load')).toHaveLength(1);
    await advance(60_000);
    expect(events.filter((e) => e.type === 'load')).toHaveLength(1);
    t.dispose();
  });

  it('asks for no track window twice and fetches the next one before the current one ends', async () => {
    const fake = fakeApi();
    const { t } = make(fake, { attrs: { satellites: 'a', orbitsBehind: 0, orbitsAhead: 0 } });
    t.resume();
    await advance(10);
    const first = fake.calls.filter((c) => c.path.endsWith('/track')).map((c) => c.q.get('start'));
    expect(new Set(first).size).toBe(first.length);
    // 13:17 now; the window 14:00-16:00 must be held by 15:30 at the latest
    await advance(Date.parse('2026-03-04T15:31:00Z') - NOW);
    const starts = fake.calls.filter((c) => c.path.endsWith('/track')).map((c) => c.q.get('start'));
    expect(new Set(starts).size).toBe(starts.length);
    expect(starts).toContain('2026-03-04T16:00:00Z');
    t.dispose();
  });

  it('asks for the window around now at once on the guess of a low orbit, and drops the guess for a high one', async () => {
    const low = fakeApi();
    const a = make(low, { attrs: { satellites: 'a' } });
    a.t.resume();
    await advance(10);
    const lowTracks = low.calls.filter((c) => c.path.endsWith('/track'));
    expect(lowTracks[0]!.q.get('start')).toBe('2026-03-04T12:00:00Z'); // sent alongside the metadata request
    expect(low.calls.indexOf(lowTracks[0]!)).toBeLessThan(low.calls.findIndex((c) => c.path.endsWith('/elements')));
    a.t.dispose();

    const geo = fakeApi({ periodMin: 1436 });
    const b = make(geo, { attrs: { satellites: 'g' } });
    b.t.resume();
    await advance(10);
    const sat = b.t.state.sats[0]!;
    expect(sat.plan?.spanMs).toBe(24 * 3600_000);
    const steps = new Set(sat.samples.slice(1).map((x, i) => x.t - sat.samples[i]!.t));
    expect([...steps]).toEqual([360_000]); // no 30 s samples from the guess mixed in
    b.t.dispose();
  });

  it('stops for good on a bad key and shows why', async () => {
    const fake = fakeApi({ key: 'nlb_other' });
    const { t, events } = make(fake);
    t.resume();
    await advance(10);
    expect(t.state.fatal?.code).toBe('invalid-key');
    const n = fake.calls.length;
    await advance(10 * 60_000);
    expect(fake.calls.length).toBe(n);
    expect(events).toContainEqual(expect.objectContaining({ type: 'error', detail: expect.objectContaining({ code: 'invalid-key', status: 401, fatal: true }) }));
    t.dispose();
  });

  it('keeps the data it has when the network goes, retries with growing waits and recovers', async () => {
    let down = false;
    const fake = fakeApi({ down: () => down });
    const { t } = make(fake, { formatTime: () => '13:17' });
    t.resume();
    await advance(10);
    const held = t.state.sats[0]!.samples.length;
    down = true;
    t.setObserver({ lat: 10, lon: 10, altM: 0 }); // needs new passes: a request that fails
    await advance(10);
    expect(t.state.transient?.code).toBe('network');
    expect(t.state.transient?.text).toContain('Showing what was known at 13:17');
    expect(t.state.sats[0]!.samples.length).toBe(held);
    const at = (n: number) => fake.calls.length - n;
    const c0 = fake.calls.length;
    await advance(2000); // first retry after 2 s
    expect(at(c0)).toBeGreaterThan(0);
    const c1 = fake.calls.length;
    await advance(3000); // second wait is 4 s: nothing yet
    expect(at(c1)).toBe(0);
    down = false;
    await advance(1100);
    expect(t.state.transient).toBeNull();
    expect(t.state.sats[0]!.passes).not.toBeNull();
    t.dispose();
  });

  it('makes no request while paused and carries on after resume', async () => {
    const fake = fakeApi();
    const { t } = make(fake);
    t.resume();
    await advance(10);
    t.pause();
    const n = fake.calls.length;
    await advance(6 * 3600_000);
    expect(fake.calls.length).toBe(n);
    t.resume();
    await advance(10);
    expect(fake.calls.length).toBeGreaterThan(n);
    expect(t.isRunning).toBe(true);
    t.dispose();
  });

  it('marks a missing satellite and goes on with the others', async () => {
    const fake = fakeApi({ missing: ['a'] });
    const { t, events } = make(fake);
    t.resume();
    await advance(10);
    expect(t.state.sats[0]!.dead).toBe(true);
    expect(t.state.sats[0]!.notice?.heading).toBe('Satellite not found');
    expect(t.state.sats[1]!.samples.length).toBeGreaterThan(0);
    expect(events).toContainEqual(expect.objectContaining({ type: 'error', detail: expect.objectContaining({ code: 'not-found', satellite: 'a', fatal: false }) }));
    t.dispose();
  });

  it('warns about a stale element set with its age but still draws it', async () => {
    const fake = fakeApi({ stale: ['b'] });
    const { t } = make(fake);
    t.resume();
    await advance(10);
    expect(t.state.sats[1]!.notice?.text).toContain('21 days old');
    expect(t.state.sats[1]!.samples.length).toBeGreaterThan(0);
    t.dispose();
  });

  it('loads a saved embed first and then uses its satellites, options and key', async () => {
    const fake = fakeApi();
    const { t } = make(fake, { apiKey: '', embedId: 'e42', attrs: {} });
    t.resume();
    await advance(10);
    expect(fake.calls[0]!.path).toBe('/v1/embeds/e42');
    expect(t.state.sats.map((s) => s.id)).toEqual(['emb-sat']);
    expect(t.state.settings.orbitsAhead).toBe(0.5);
    expect(fake.calls.slice(1).every((c) => c.q.get('key') === 'nlb_fromembed')).toBe(true);
    t.dispose();
  });

  it('takes the derived elements from the satellite answer without asking /elements', async () => {
    const fake = fakeApi();
    const base = fake.fetch;
    const withDerived: FetchLike = async (input, init) => {
      const u = new URL(input);
      if (/^\/v1\/satellites\/[^/]+$/.test(u.pathname)) {
        fake.calls.push({ path: u.pathname, q: u.searchParams });
        return new Response(JSON.stringify({ id: 'a', name: 'Kestrel', derived: { epoch: '2026-03-04T00:00:00Z', periodMin: 92, semiMajorAxisKm: 6790, inclinationDeg: 51.6, ageDays: 1, stale: false } }));
      }
      return base(input, init);
    };
    const { t } = make({ fetch: withDerived, calls: fake.calls }, { attrs: { satellites: 'a' } });
    t.resume();
    await advance(10);
    expect(t.state.sats[0]!.name).toBe('Kestrel');
    expect(t.state.sats[0]!.elements?.periodMin).toBe(92);
    expect(fake.calls.some((c) => c.path.endsWith('/elements'))).toBe(false);
    t.dispose();
  });

  it('reads with ?embed= as the credential when the embed brings no key of its own', async () => {
    const fake = fakeApi();
    const base = fake.fetch;
    const noKey: FetchLike = async (input, init) => {
      const u = new URL(input);
      if (u.pathname.startsWith('/v1/embeds/')) {
        fake.calls.push({ path: u.pathname, q: u.searchParams });
        return new Response(JSON.stringify({ id: 'e7', name: 'Hall map', satellites: ['a'], options: {} }));
      }
      return base(input, init);
    };
    const { t } = make({ fetch: noKey, calls: fake.calls }, { apiKey: '', embedId: 'e7', attrs: {} });
    t.resume();
    await advance(10);
    expect(fake.calls[0]!.q.has('embed')).toBe(false);
    const reads = fake.calls.slice(1);
    expect(reads.length).toBeGreaterThan(2);
    expect(reads.every((c) => c.q.get('embed') === 'e7' && !c.q.has('key'))).toBe(true);
    t.dispose();
  });

  it('says the map has no key, asks nothing and reports it once when neither api-key nor embed is set', async () => {
    const fake = fakeApi();
    const { t, events } = make(fake, { apiKey: '' });
    t.resume();
    await advance(10 * 60_000);
    expect(fake.calls).toHaveLength(0);
    expect(t.state.fatal).toMatchObject({ code: 'no-key', heading: 'This map has no key', fatal: true });
    expect(t.state.fatal?.text).toContain('api-key attribute');
    expect(t.state.fatal?.retryMs).toBeUndefined();
    expect(events).toEqual([{ type: 'error', detail: expect.objectContaining({ code: 'no-key', fatal: true, retryMs: null, satellite: null }) }]);
    t.dispose();
  });

  it.each([
    ['unauthenticated', 401],
    ['key-expired', 401],
    ['key-revoked', 401],
    ['key-rotated', 401],
    ['browser-key-read-only', 403],
    [undefined, 401],
  ])('stops for good on a %s %i answer, with one nadir-error for all satellites and no retry', async (code, status) => {
    const fake = fakeApi({ refuse: () => ({ status, ...(code ? { code } : {}) }) });
    const { t, events } = make(fake);
    t.resume();
    await advance(10);
    const n = fake.calls.length;
    await advance(30 * 60_000);
    expect(fake.calls.length).toBe(n);
    expect(t.state.fatal?.fatal).toBe(true);
    expect(t.state.fatal?.heading).not.toBe('Something went wrong');
    expect(events.filter((e) => e.type === 'error')).toHaveLength(1);
    expect(events[0]).toMatchObject({ type: 'error', detail: { status, fatal: true, retryMs: null } });
    t.dispose();
  });

  it('reports a server that keeps failing once, not once per satellite or per retry, and again only after it recovered', async () => {
    let failing = true;
    const fake = fakeApi({ refuse: () => (failing ? { status: 503, code: 'unavailable' } : null) });
    const { t, events } = make(fake, { attrs: { satellites: 'a,b,c' } });
    t.resume();
    await advance(5 * 60_000); // many rounds of backoff
    const errors = () => events.filter((e) => e.type === 'error');
    expect(fake.calls.length).toBeGreaterThan(20);
    expect(errors()).toHaveLength(1);
    expect(errors()[0]!.detail).toMatchObject({ code: 'unavailable', status: 503, fatal: false, satellite: null });
    failing = false;
    await advance(3 * 60_000);
    expect(t.state.transient).toBeNull();
    failing = true;
    t.setObserver({ lat: 10, lon: 10, altM: 0 }); // new passes needed: requests that fail again
    await advance(2 * 60_000);
    expect(errors()).toHaveLength(2);
    t.dispose();
  });

  it('reports a used-up quota once while it waits for Retry-After again and again', async () => {
    const fake = fakeApi({ refuse: () => ({ status: 429, code: 'quota-exceeded' }) });
    const { t, events } = make(fake);
    t.resume();
    await advance(60 * 60_000);
    expect(fake.calls.length).toBeGreaterThan(4);
    expect(events.filter((e) => e.type === 'error')).toHaveLength(1);
    t.dispose();
  });

  it('names a satellite without an element set with the API code no-element-set and goes on with the others', async () => {
    const fake = fakeApi({ noSet: ['a'] });
    const { t, events } = make(fake);
    t.resume();
    await advance(10 * 60_000);
    expect(t.state.sats[0]).toMatchObject({ dead: true, notice: expect.objectContaining({ code: 'no-element-set', heading: 'No orbit data yet' }) });
    expect(t.state.sats[1]!.samples.length).toBeGreaterThan(0);
    expect(events.filter((e) => e.type === 'error').map((e) => e.detail)).toEqual([expect.objectContaining({ code: 'no-element-set', satellite: 'a', fatal: false })]);
    t.dispose();
  });

  it('reports a stale element set once with the widget code stale-element-set', async () => {
    const fake = fakeApi({ stale: ['b'] });
    const { t, events } = make(fake);
    t.resume();
    await advance(10 * 60_000);
    expect(events.filter((e) => e.type === 'error').map((e) => e.detail)).toEqual([expect.objectContaining({ code: 'stale-element-set', satellite: 'b', status: 200, fatal: false })]);
    t.dispose();
  });

  it('stops one satellite, not the map, on another 4xx answer for it', async () => {
    const fake = fakeApi();
    const base = fake.fetch;
    const f: FetchLike = async (input, init) =>
      new URL(input).pathname.startsWith('/v1/satellites/a')
        ? new Response(JSON.stringify({ title: 'Could not', status: 422, code: 'propagation-failed' }), { status: 422 })
        : base(input, init);
    const { t, events } = make({ fetch: f, calls: fake.calls });
    t.resume();
    await advance(10 * 60_000);
    expect(t.state.fatal).toBeNull();
    expect(t.state.sats[0]).toMatchObject({ dead: true, notice: expect.objectContaining({ code: 'propagation-failed' }) });
    expect(t.state.sats[1]!.samples.length).toBeGreaterThan(0);
    expect(events.filter((e) => e.type === 'error')).toHaveLength(1);
    t.dispose();
  });

  it('shows words, not a blank box, when no satellites are set', () => {
    const fake = fakeApi();
    const { t } = make(fake, { attrs: {} });
    expect(t.state.fatal?.heading).toBe('Nothing to show yet');
  });
});

describe('Tracker with many satellites', () => {
  /** A fake /v1 with the list and the batch track route; `gone` ids are unknown to it. */
  function batchApi(opts: { gone?: string[]; noSet?: string[] } = {}) {
    const calls: Call[] = [];
    const json = (body: unknown, status = 200) => new Response(JSON.stringify(body), { status, headers: { 'content-type': 'application/json' } });
    const known = (id: string) => !opts.gone?.includes(id);
    const derived = (id: string) => (opts.noSet?.includes(id) ? null : { epoch: '2026-03-04T00:00:00Z', periodMin: 92, semiMajorAxisKm: 6780, inclinationDeg: 51.6, ageDays: 0.5, stale: false });
    const fetch: FetchLike = async (input) => {
      const u = new URL(input);
      calls.push({ path: u.pathname, q: u.searchParams });
      if (u.pathname === '/v1/satellites') {
        const ids = Array.from({ length: 60 }, (_, i) => `s${i}`).filter(known);
        return json({ satellites: ids.map((id) => ({ id, name: `Sat ${id}`, derived: derived(id) })) });
      }
      if (u.pathname === '/v1/tracks') {
        const start = Date.parse(u.searchParams.get('start')!);
        const end = Date.parse(u.searchParams.get('end')!);
        const step = Number(u.searchParams.get('step')) * 1000;
        const tracks = u.searchParams.get('ids')!.split(',').map((id) => {
          if (!known(id)) return { satelliteId: id, error: { code: 'not-found', status: 404, detail: 'no' } };
          if (!derived(id)) return { satelliteId: id, error: { code: 'no-element-set', status: 422, detail: 'no' } };
          const points = [];
          for (let t = start; t <= end; t += step) points.push({ t: new Date(t).toISOString(), lat: 0, lon: ((t / 1000) % 360) - 180, altKm: 420, sunlit: true });
          return { satelliteId: id, points };
        });
        return json({ tracks });
      }
      return json({ title: 'no', status: 404, code: 'not-found' }, 404);
    };
    return { fetch, calls };
  }
  const ids = (n: number) => Array.from({ length: n }, (_, i) => `s${i}`).join(',');

  it('draws 50 satellites from one list request and one batch request per track window', async () => {
    const fake = batchApi();
    const { t, events } = make(fake, { attrs: { satellites: ids(50), orbitsBehind: 0.5, orbitsAhead: 1 } });
    t.resume();
    await advance(10);
    expect(t.state.phase).toBe('ready');
    expect(t.state.sats.every((s) => s.named && s.samples.length > 100)).toBe(true);
    expect(fake.calls.filter((c) => c.path === '/v1/satellites')).toHaveLength(1);
    const batches = fake.calls.filter((c) => c.path === '/v1/tracks');
    // the windows of 1.5 orbits of a 92-minute orbit around now: a few, each asked once for all 50
    expect(batches.length).toBeLessThanOrEqual(3);
    expect(new Set(batches.map((c) => c.q.get('start'))).size).toBe(batches.length);
    for (const c of batches) expect(c.q.get('ids')!.split(',')).toHaveLength(50);
    expect(fake.calls.filter((c) => /\/v1\/satellites\/[^/]+/.test(c.path))).toHaveLength(0);
    expect(events.filter((e) => e.type === 'load')).toHaveLength(1);
    // the next round asks for nothing already held
    const n = fake.calls.length;
    await advance(30_000);
    expect(fake.calls.length).toBe(n);
    t.dispose();
  });

  it('stops only the satellites the batch answer names as unknown or without an element set', async () => {
    const fake = batchApi({ gone: ['s3'], noSet: ['s5'] });
    const { t, events } = make(fake, { attrs: { satellites: ids(8) } });
    t.resume();
    await advance(10);
    expect(t.state.fatal).toBeNull();
    expect(t.state.sats.find((s) => s.id === 's3')).toMatchObject({ dead: true, notice: expect.objectContaining({ code: 'not-found' }) });
    expect(t.state.sats.find((s) => s.id === 's5')).toMatchObject({ dead: true, notice: expect.objectContaining({ code: 'no-element-set' }) });
    expect(t.state.sats.filter((s) => !s.dead).every((s) => s.samples.length > 0)).toBe(true);
    expect(events.filter((e) => e.type === 'error').map((e) => e.detail.satellite).sort()).toEqual(['s3', 's5']);
    t.dispose();
  });
});
