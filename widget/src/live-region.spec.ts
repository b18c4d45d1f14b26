/**
 * The live region and the panel never name a wrong place: coordinates alone until the country
 * outlines are ready, then the country or ocean. (Its own file: the world map is loaded once per
 * module, and here it must arrive late, on cue.)
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { register } from './index.ts';

register();
const require = createRequire(import.meta.url);
const countries = readFileSync(require.resolve('world-atlas/countries-110m.json'), 'utf8');

async function settle(ms = 50) {
  for (let i = 0; i < 10; i++) await new Promise((r) => setTimeout(r, ms / 10));
}

afterEach(async () => {
  document.body.innerHTML = '';
  await settle(20);
  vi.unstubAllGlobals();
});

describe('the live region', () => {
  it('gives coordinates alone before the map’s place data is ready, then the country', async () => {
    let release!: () => void;
    const worldHeld = new Promise<void>((r) => (release = r));
    vi.stubGlobal('fetch', async (input: string) => {
      const u = new URL(input);
      const json = (b: unknown) => new Response(JSON.stringify(b), { headers: { 'content-type': 'application/json' } });
      if (u.pathname.endsWith('countries-110m.test.json')) {
        await worldHeld;
        return new Response(countries, { headers: { 'content-type': 'application/json' } });
      }
      const m = u.pathname.match(/^\/v1\/satellites\/([^/]+)(?:\/(\w+))?$/);
      if (!m) return new Response('no', { status: 404 });
      if (!m[2]) return json({ id: m[1], name: 'Halcyon Relay' });
      if (m[2] === 'elements') return json({ epoch: '2026-03-04T00:00:00Z', periodMin: 92, semiMajorAxisKm: 6790, inclinationDeg: 63.4, ageDays: 0.3, stale: false });
      const start = Date.parse(u.searchParams.get('start')!);
      const end = Date.parse(u.searchParams.get('end')!);
      const step = Number(u.searchParams.get('step')) * 1000;
      const points = [];
      // inland Siberia, where a guess from longitude alone said "the North Pacific"
      for (let t = start; t <= end; t += step) points.push({ t: new Date(t).toISOString(), lat: 50.9, lon: 104.3, altKm: 420, sunlit: true });
      return json({ points });
    });
    const el = document.createElement('nadir-track');
    el.setAttribute('satellites', 'h');
    el.setAttribute('api-base', 'https://api.test');
    el.setAttribute('api-key', 'k');
    document.body.append(el);
    const live = () => el.shadowRoot!.querySelector('[aria-live="polite"]')!.textContent ?? '';
    await settle(200);
    expect(live()).toMatch(/^Halcyon Relay is at 50\.9 degrees north, 104\.3 degrees east, 420 kilometres up/);
    expect(live()).not.toMatch(/ over /);
    (el.shadowRoot!.querySelector('.chip') as HTMLButtonElement).click();
    await settle(20);
    expect(el.shadowRoot!.querySelector('[part="panel"] .over')!.textContent!.trim()).toBe('50.9° N, 104.3° E');

    release();
    await vi.waitFor(() => expect(live()).toMatch(/^Halcyon Relay is over Russia at 50\.9 degrees north/), { timeout: 3000, interval: 50 });
    expect(el.shadowRoot!.querySelector('[part="panel"] .over')!.textContent).toMatch(/^\s*Over Russia/);
  });
});
