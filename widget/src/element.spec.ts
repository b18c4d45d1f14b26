import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { register } from './index.ts';

register();

/** A fake /v1 on globalThis.fetch: two satellites on a simple orbit, world map missing. */
function installFetch(opts: { status?: number; code?: string } = {}) {
  const calls: string[] = [];
  vi.stubGlobal('fetch', async (input: string) => {
    const u = new URL(input);
    calls.push(u.pathname);
    const json = (b: unknown, status = 200) => new Response(JSON.stringify(b), { status, headers: { 'content-type': 'application/json' } });
    if (!u.pathname.startsWith('/v1/')) return new Response('no', { status: 404 });
    if (opts.status) return json({ title: 'x', status: opts.status, code: opts.code }, opts.status);
    const m = u.pathname.match(/^\/v1\/satellites\/([^/]+)(?:\/(\w+))?$/)!;
    if (!m[2]) return json({ id: m[1], name: `Sat ${m[1]}` });
    if (m[2] === 'elements') return json({ epoch: '2026-03-04T00:00:00Z', periodMin: 92, semiMajorAxisKm: 6790, inclinationDeg: 51.6, ageDays: 0.3, stale: false });
    const start = Date.parse(u.searchParams.get('start')!);
    const end = Date.parse(u.searchParams.get('end')!);
    const step = Number(u.searchParams.get('step')) * 1000;
    const points = [];
    for (let t = start; t <= end; t += step) {
      const f = ((t / 1000) % 5520) / 5520;
      points.push({ t: new Date(t).toISOString(), lat: 51.6 * Math.sin(2 * Math.PI * f), lon: ((f * 360 * 1.1 + 540) % 360) - 180, altKm: 420, sunlit: true });
    }
    return json({ points });
  });
  return calls;
}

async function settle(ms = 50) {
  for (let i = 0; i < 10; i++) await new Promise((r) => setTimeout(r, ms / 10));
}

function mount(attrs: Record<string, string>) {
  const el = document.createElement('nadir-track');
  for (const [k, v] of Object.entries(attrs)) el.setAttribute(k, v);
  const events: CustomEvent[] = [];
  for (const t of ['nadir-load', 'nadir-select', 'nadir-error']) document.addEventListener(t, (e) => events.push(e as CustomEvent));
  document.body.append(el);
  return { el, events, root: () => el.shadowRoot! };
}

beforeEach(() => {
  document.body.innerHTML = '';
});
afterEach(async () => {
  document.body.innerHTML = '';
  await settle(20); // let the elements unmount and abort their requests before fetch is restored
  vi.unstubAllGlobals();
});

describe('<nadir-track>', () => {
  it('registers its font once in the document head, outside its shadow root', () => {
    installFetch();
    mount({ satellites: 'a', 'api-base': 'https://api.test', 'api-key': 'k' });
    mount({ satellites: 'b', 'api-base': 'https://api.test', 'api-key': 'k' });
    const faces = document.head.querySelectorAll('#nadir-track-font');
    expect(faces).toHaveLength(1);
    expect(faces[0]!.textContent).toContain('@font-face');
    expect(faces[0]!.textContent).toContain('assets/work-sans-400.test.woff2');
  });

  it('draws a past and a future track in its shadow root and announces load with a bubbling, composed event', async () => {
    installFetch();
    const { root, events } = mount({ satellites: 'a,b', 'api-base': 'https://api.test', 'api-key': 'k' });
    await settle(200);
    const past = root().querySelectorAll('path.past');
    expect(past).toHaveLength(2);
    expect(past[0]!.getAttribute('d')).toMatch(/^M/);
    expect(root().querySelectorAll('.chip')).toHaveLength(2);
    const load = events.find((e) => e.type === 'nadir-load')!;
    expect(load.bubbles && load.composed).toBe(true);
    expect(load.detail.satellites.map((s: { name: string }) => s.name)).toEqual(['Sat a', 'Sat b']);
  });

  it('opens the panel and dispatches nadir-select when a satellite is picked by keyboard-reachable button', async () => {
    installFetch();
    const { root, events } = mount({ satellites: 'a', 'api-base': 'https://api.test', 'api-key': 'k' });
    await settle(200);
    (root().querySelector('.chip') as HTMLButtonElement).click();
    await settle(20);
    const sel = events.find((e) => e.type === 'nadir-select')!;
    expect(sel.detail).toMatchObject({ id: 'a', name: 'Sat a', altKm: 420 });
    expect(sel.detail.speedKmS).toBeCloseTo(7.66, 1);
    expect(root().querySelector('[part="panel"]')?.textContent).toContain('420 km');
  });

  it('shows a wrong origin in words inside the element and fires nadir-error', async () => {
    installFetch({ status: 403, code: 'origin-not-allowed' });
    const { root, events } = mount({ satellites: 'a', 'api-base': 'https://api.test', 'api-key': 'k' });
    await settle(100);
    expect(root().querySelector('.card')?.textContent).toContain('Not allowed on this site');
    expect(events.find((e) => e.type === 'nadir-error')?.detail).toMatchObject({ code: 'origin-not-allowed', fatal: true });
  });

  it('says the map has no key, makes no request and fires nadir-error once when api-key is empty', async () => {
    const calls = installFetch();
    const { root, events } = mount({ satellites: 'sat_a,sat_b', 'api-base': 'https://api.test', 'api-key': '' });
    await settle(300);
    expect(root().querySelector('.card')?.textContent).toContain('This map has no key');
    expect(root().querySelector('.card')?.textContent).toContain('api-key attribute');
    expect(calls.filter((c) => c.startsWith('/v1/'))).toEqual([]);
    expect(events.filter((e) => e.type === 'nadir-error').map((e) => e.detail.code)).toEqual(['no-key']);
    expect(root().querySelectorAll('.chip')).toHaveLength(0);
    expect(root().textContent).not.toContain('sat_a');
  });

  it('shows a neutral placeholder, never the raw id, in a chip whose name has not come yet', async () => {
    installFetch();
    const { root } = mount({ satellites: 'sat_a', 'api-base': 'https://api.test', 'api-key': 'k' });
    const chip = root().querySelector('.chip')!;
    expect(chip.classList.contains('pending')).toBe(true);
    expect(chip.textContent).not.toContain('sat_a');
    await settle(200);
    expect(root().querySelector('.chip')!.textContent).toContain('Sat sat_a');
  });

  it('hides the chips when the key is refused, so no raw ids show', async () => {
    installFetch({ status: 401, code: 'unauthenticated' });
    const { root, events } = mount({ satellites: 'sat_a,sat_b', 'api-base': 'https://api.test', 'api-key': 'k' });
    await settle(300);
    expect(root().querySelectorAll('.chip')).toHaveLength(0);
    expect(root().textContent).not.toContain('sat_a');
    expect(events.filter((e) => e.type === 'nadir-error')).toHaveLength(1);
  });

  it('says in words where the satellite is in a polite live region, by coordinates while the map has no place data', async () => {
    installFetch(); // the world map is missing here, so no country or ocean may be named
    const { root } = mount({ satellites: 'a', 'api-base': 'https://api.test', 'api-key': 'k' });
    await settle(200);
    const live = root().querySelector('[aria-live="polite"]')!;
    expect(live.textContent).toMatch(/^Sat a is at /);
    expect(live.textContent).not.toMatch(/ is over /);
    expect(live.textContent).toMatch(/\d+\.\d degrees (north|south|the equator)/);
    expect(live.textContent).toContain('420 kilometres up');
  });

  it('says over the pass list that rise and set are at 10 degrees, not the horizon', async () => {
    installFetch();
    const { root } = mount({ satellites: 'a', 'api-base': 'https://api.test', 'api-key': 'k', observer: '51.29,-2.43' });
    await settle(200);
    expect(root().querySelector('[part="passes"]')?.textContent).toContain('Rise and set are at 10° above the horizon.');
  });

  it('keeps the host’s style and class on the host, not on its inner frame', async () => {
    installFetch();
    const { root } = mount({ satellites: 'a', 'api-base': 'https://api.test', 'api-key': 'k', style: 'height: 420px; border: 3px solid red', class: 'brand' });
    await settle(50);
    const frame = root().querySelector('[part="frame"]')!;
    expect(frame.getAttribute('style')).toBeNull();
    expect(frame.classList.contains('brand')).toBe(false);
  });

  it('turns the map with the arrow keys and resets it with Home', async () => {
    installFetch();
    const { root } = mount({ satellites: 'a', 'api-base': 'https://api.test', 'api-key': 'k' });
    await settle(200);
    const map = root().querySelector('svg.map')!;
    const grid = () => root().querySelector('path.graticule')!.getAttribute('d');
    const before = grid();
    map.dispatchEvent(new KeyboardEvent('keydown', { key: 'ArrowLeft', bubbles: true }));
    await settle(20);
    expect(grid()).not.toBe(before);
    map.dispatchEvent(new KeyboardEvent('keydown', { key: 'Home', bubbles: true }));
    await settle(20);
    expect(grid()).toBe(before);
  });

  it('keeps the about-these-positions caution in the element', () => {
    installFetch();
    const { root } = mount({ satellites: 'a', 'api-base': 'https://api.test' });
    const note = root().querySelector('[part="note"]')!.textContent!;
    expect(note).toMatch(/Not for collision avoidance, navigation, safety-of-life or operational decisions/);
    expect(note).toMatch(/Sun/);
  });
});
