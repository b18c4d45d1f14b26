/**
 * <nadir-track> in Debian's Chromium against the real Nadirline server (demo data).
 * Screenshots land in tests/artifacts/widget/ (kept by CI as artifacts, ignored by git).
 */
import { execFile, execFileSync } from 'node:child_process';
import fs from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import path from 'node:path';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchChromium } from '../support/chromium.ts';
import { repoRoot, startServer, type StartedServer } from '../support/server.ts';

const ARTIFACTS = path.join(repoRoot, 'tests', 'artifacts', 'widget');
const ZONE = 'Europe/London';

let server: StartedServer;
let browser: Browser;

function ensureWidgetBuilt() {
  if (fs.existsSync(path.join(repoRoot, 'widget', 'dist', 'nadir-track.js'))) return;
  execFileSync(process.execPath, [path.join(repoRoot, 'node_modules', 'vite', 'bin', 'vite.js'), 'build'], { cwd: path.join(repoRoot, 'widget'), stdio: 'ignore' });
}

beforeAll(async () => {
  ensureWidgetBuilt();
  fs.mkdirSync(ARTIFACTS, { recursive: true });
  server = await startServer();
  // Pages of one loopback origin load the widget from another in the wrong-origin test; Chromium's
  // local-network-access checks would block that before the server could answer.
  browser = await launchChromium({ args: ['--disable-features=LocalNetworkAccessChecks'] });
});
afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

interface Watched {
  ctx: BrowserContext;
  page: Page;
  pageErrors: string[];
  consoleErrors: string[];
  v1: string[];
}

async function open(url: string, opts: { width?: number; scheme?: 'light' | 'dark'; before?: (p: Page) => Promise<unknown> } = {}): Promise<Watched> {
  const ctx = await browser.newContext({ viewport: { width: opts.width ?? 1280, height: 900 }, colorScheme: opts.scheme ?? 'light', timezoneId: ZONE, locale: 'en-GB' });
  const page = await ctx.newPage();
  const w: Watched = { ctx, page, pageErrors: [], consoleErrors: [], v1: [] };
  page.on('pageerror', (e) => w.pageErrors.push(e.message));
  page.on('console', (m) => {
    if (m.type() === 'error' && !m.text().startsWith('Failed to load resource')) w.consoleErrors.push(m.text());
  });
  // failed loads are listed by URL (the browser's own console line does not say which); no favicon here
  page.on('response', (r) => {
    if (r.status() >= 400 && !r.url().endsWith('/favicon.ico')) w.consoleErrors.push(`${r.status()} ${r.url()}`);
  });
  page.on('request', (r) => {
    if (new URL(r.url()).pathname.startsWith('/v1/')) w.v1.push(r.url());
  });
  await opts.before?.(page);
  await page.goto(url);
  return w;
}

/** The text of the message card inside the first widget, once there is one. */
async function cardText(page: Page): Promise<string> {
  const h = await page.waitForFunction(() => document.querySelector('nadir-track')?.shadowRoot?.querySelector('.card')?.textContent ?? null, undefined, { timeout: 15_000 });
  return String(await h.jsonValue());
}
/** Whether the first widget has drawn a marker (read from Node, so it works under a fake page clock). */
const hasMarker = (page: Page) => page.evaluate(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('.mark'));
const markerAt = (page: Page) => page.evaluate(() => document.querySelector('nadir-track')!.shadowRoot!.querySelector('.mark')?.getAttribute('transform') ?? null);

describe('<nadir-track> on the science centre example', () => {
  it('draws a track in its shadow root within seconds, with no page errors', async () => {
    const started = Date.now();
    const w = await open(`${server.url}/examples/science-centre.html`);
    const d = await w.page.waitForFunction(() => {
      const p = document.querySelector('nadir-track')?.shadowRoot?.querySelector('path.past')?.getAttribute('d') ?? '';
      return p.length > 20 ? p : null;
    });
    expect(String(await d.jsonValue())).toMatch(/^M[\d.-]+,[\d.-]+L/);
    expect(Date.now() - started).toBeLessThan(10_000);
    expect(await w.page.evaluate(() => document.querySelector('nadir-track')!.shadowRoot!.querySelectorAll('.chip').length)).toBe(server.credentials.satellites.length);
    await w.page.waitForTimeout(500);
    await w.page.screenshot({ path: path.join(ARTIFACTS, 'science-centre-1280-light.png'), fullPage: true });
    expect(w.pageErrors).toEqual([]);
    expect(w.consoleErrors).toEqual([]);
    await w.ctx.close();
  });

  it('moves the marker as time passes, without a request per frame', async () => {
    const w = await open(`${server.url}/examples/science-centre.html`);
    await w.page.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('.mark'));
    await w.page.waitForTimeout(1500);
    const first = await markerAt(w.page);
    const requests = w.v1.length;
    await w.page.waitForTimeout(3500);
    const later = await markerAt(w.page);
    expect(later).not.toBe(first);
    expect(w.v1.length).toBe(requests);
    await w.ctx.close();
  });

  it('lists the same passes as /v1/passes, in the reader’s time zone', async () => {
    const w = await open(`${server.url}/examples/science-centre.html`);
    // the list shows the first satellite's passes; the satellites' requests leave in any order
    const firstPasses = `/satellites/${server.credentials.satellites[0]!.id}/passes?`;
    await expect.poll(() => w.v1.some((u) => u.includes(firstPasses)), { timeout: 15_000 }).toBe(true);
    const passUrl = new URL(w.v1.find((u) => u.includes(firstPasses))!);
    await w.page.waitForFunction(() => (document.querySelector('nadir-track')?.shadowRoot?.querySelectorAll('[part="passes"] .row').length ?? 0) > 0);
    const shown = await w.page.evaluate(() =>
      Array.from(document.querySelector('nadir-track')!.shadowRoot!.querySelectorAll('[part="passes"] .row .when strong')).map((e) => e.textContent!.trim()),
    );
    // ask the API ourselves, with the server key, for the same satellite, place and start
    const q = new URLSearchParams(passUrl.search);
    q.delete('key');
    const res = await fetch(`${server.url}${passUrl.pathname}?${q}`, { headers: { authorization: `Bearer ${server.credentials.serverKey}` } });
    expect(res.status).toBe(200);
    const body = (await res.json()) as { passes: { rise: { t: string }; set: { t: string } }[] };
    const fmt = new Intl.DateTimeFormat('en-GB', { hour: '2-digit', minute: '2-digit', timeZone: ZONE });
    const now = Date.now();
    // the list drops a pass within ten seconds of its set: allow for one ending just now
    const upcoming = (from: number) => body.passes.filter((p) => Date.parse(p.set.t) > from).slice(0, 4).map((p) => fmt.format(Date.parse(p.rise.t)));
    expect(shown.length).toBeGreaterThan(0);
    expect([upcoming(now).slice(0, shown.length), upcoming(now - 15_000).slice(0, shown.length)]).toContainEqual(shown);
    await w.ctx.close();
  });

  it('names no place in the live region until the map’s place data has loaded, then names one', async () => {
    let release!: () => void;
    const held = new Promise<void>((r) => (release = r));
    const w = await open(`${server.url}/examples/science-centre.html`, {
      before: (p) =>
        p.route('**/countries-110m*.json', async (r) => {
          await held;
          await r.continue();
        }),
    });
    const live = () => w.page.evaluate(() => document.querySelector('nadir-track')?.shadowRoot?.querySelector('[aria-live]')?.textContent ?? '');
    await expect.poll(live, { timeout: 15_000 }).toMatch(/ is at \d/);
    expect(await live()).not.toMatch(/ is over /);
    release();
    await expect.poll(live, { timeout: 15_000 }).toMatch(/ is over [A-Z]|is over the /);
    expect(w.pageErrors).toEqual([]);
    await w.ctx.close();
  });

  it('shows a wrong key in words inside the element', async () => {
    const pageUrl = `${server.url}/e2e-wrong-key.html`;
    const w = await open(pageUrl, {
      before: (p) =>
        p.route(pageUrl, (r) =>
          r.fulfill({
            contentType: 'text/html',
            body: `<!doctype html><script type="module" src="/widget/nadir-track.js"></script><nadir-track satellites="${server.credentials.satellites[0]!.id}" api-key="nlb_not-a-real-key-at-all"></nadir-track>`,
          }),
        ),
    });
    expect(await cardText(w.page)).toContain('Map key not accepted');
    await w.page.screenshot({ path: path.join(ARTIFACTS, 'wrong-key-1280.png') });
    expect(w.pageErrors).toEqual([]);
    await w.ctx.close();
  });

  it('says the map has no key when api-key is emptied, and then asks nothing and reports it once', async () => {
    const w = await open(`${server.url}/examples/science-centre.html`, {
      before: (p) => p.addInitScript(() => {
        const seen: unknown[] = [];
        (window as unknown as { nadirErrors: unknown[] }).nadirErrors = seen;
        document.addEventListener('nadir-error', (e) => seen.push((e as CustomEvent).detail));
      }),
    });
    await w.page.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot);
    await w.page.evaluate(() => {
      (window as unknown as { nadirErrors: unknown[] }).nadirErrors.length = 0;
      document.querySelector('nadir-track')!.setAttribute('api-key', '');
    });
    expect(await cardText(w.page)).toContain('This map has no key');
    const asked = w.v1.length;
    await w.page.waitForTimeout(3000);
    expect(w.v1.length).toBe(asked);
    const errors = await w.page.evaluate(() => (window as unknown as { nadirErrors: { code: string; fatal: boolean }[] }).nadirErrors);
    expect(errors).toEqual([expect.objectContaining({ code: 'no-key', fatal: true, retryMs: null })]);
    // no raw satellite ids where names would be
    const chips = await w.page.evaluate(() => Array.from(document.querySelector('nadir-track')!.shadowRoot!.querySelectorAll('.chip')).map((c) => c.textContent ?? ''));
    expect(chips.filter((t) => /sat_/.test(t))).toEqual([]);
    await w.page.screenshot({ path: path.join(ARTIFACTS, 'no-key-1280.png') });
    expect(w.pageErrors).toEqual([]);
    await w.ctx.close();
  });

  it('shows a wrong origin in words inside the element', async () => {
    // another loopback origin that the demo browser key does not list
    const other = `http://localhost:${server.port === 5999 ? 5998 : 5999}`;
    const pageUrl = `${other}/museum.html`;
    const w = await open(pageUrl, {
      width: 320,
      before: (p) =>
        p.route(pageUrl, (r) =>
          r.fulfill({
            contentType: 'text/html',
            body: `<!doctype html><meta name="viewport" content="width=device-width"><script type="module" src="${server.url}/widget/nadir-track.js"></script><nadir-track satellites="${server.credentials.satellites[0]!.id}" api-key="${server.credentials.browserKey}"></nadir-track>`,
          }),
        ),
    });
    const text = await cardText(w.page);
    expect(text).toContain('Not allowed on this site');
    expect(text).toContain(other);
    await w.page.screenshot({ path: path.join(ARTIFACTS, 'wrong-origin-320.png'), fullPage: true });
    expect(w.pageErrors).toEqual([]);
    await w.ctx.close();
  });

  it('makes no request while hidden or off-screen and catches up when seen again', async () => {
    const w = await open(`${server.url}/examples/science-centre.html`, { before: (p) => p.clock.install() });
    await expect.poll(() => hasMarker(w.page), { timeout: 15_000 }).toBe(true);
    await w.page.clock.runFor(2000);
    // hidden tab
    await w.page.evaluate(() => {
      Object.defineProperty(document, 'visibilityState', { configurable: true, get: () => 'hidden' });
      document.dispatchEvent(new Event('visibilitychange'));
    });
    const before = w.v1.length;
    await w.page.clock.runFor(3 * 3600_000); // three hours: every track window would need refreshing
    expect(w.v1.length).toBe(before);
    // off-screen in a visible tab
    await w.page.evaluate(() => {
      Object.defineProperty(document, 'visibilityState', { configurable: true, get: () => 'visible' });
      document.body.style.paddingBottom = '6000px';
      window.scrollTo(0, 6000);
    });
    await w.page.clock.runFor(100);
    await w.page.evaluate(() => document.dispatchEvent(new Event('visibilitychange')));
    await w.page.waitForTimeout(300);
    const offscreen = w.v1.length;
    await w.page.clock.runFor(3 * 3600_000);
    expect(w.v1.length).toBe(offscreen);
    // back in view: fresh windows are fetched
    await w.page.evaluate(() => window.scrollTo(0, 0));
    await w.page.waitForTimeout(300);
    await w.page.clock.runFor(1000);
    await expect.poll(() => w.v1.length, { timeout: 10_000 }).toBeGreaterThan(offscreen);
    await w.ctx.close();
  });

  it('asks for the reader’s location only when the button is pressed, then lists passes over it', async () => {
    const pageUrl = `${server.url}/e2e-auto-observer.html`;
    const w = await open(pageUrl, {
      width: 320,
      before: async (p) => {
        await p.context().grantPermissions(['geolocation']);
        await p.context().setGeolocation({ latitude: 51.29, longitude: -2.43 });
        await p.route(pageUrl, (r) =>
          r.fulfill({
            contentType: 'text/html',
            body: `<!doctype html><meta name="viewport" content="width=device-width"><script type="module" src="/widget/nadir-track.js"></script><nadir-track satellites="${server.credentials.satellites[0]!.id}" api-key="${server.credentials.browserKey}" observer="auto"></nadir-track>`,
          }),
        );
      },
    });
    await w.page.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('.ask button'));
    expect(w.v1.some((u) => u.includes('/passes?'))).toBe(false);
    await w.page.locator('nadir-track .ask button').click();
    await expect.poll(() => w.v1.find((u) => u.includes('/passes?')) ?? null, { timeout: 15_000 }).toMatch(/lat=51\.29&lon=-2\.43/);
    await w.page.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('[part="passes"]'));
    await w.page.screenshot({ path: path.join(ARTIFACTS, 'auto-observer-320.png'), fullPage: true });
    expect(w.pageErrors).toEqual([]);
    await w.ctx.close();
  });

  it('follows the reader’s colour scheme, live, with theme="auto"', async () => {
    const w = await open(`${server.url}/examples/science-centre.html`, { scheme: 'dark' });
    const frameClass = () => w.page.evaluate(() => document.querySelector('nadir-track')?.shadowRoot?.querySelector('.nadir')?.className ?? '');
    await w.page.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('.nadir'));
    await w.page.evaluate(() => document.querySelector('nadir-track')!.setAttribute('theme', 'auto'));
    await expect.poll(frameClass).toContain('theme-dark');
    await w.page.emulateMedia({ colorScheme: 'light' });
    await expect.poll(frameClass).toContain('theme-light');
    expect(w.pageErrors).toEqual([]);
    await w.ctx.close();
  });

  it('fills a host given a height: the map takes the room the controls and notes leave, with no empty band', async () => {
    for (const [width, height] of [[1280, 520], [390, 420]] as const) {
      const pageUrl = `${server.url}/e2e-fixed-${width}.html`;
      const w = await open(pageUrl, {
        width,
        before: (p) =>
          p.route(pageUrl, (r) =>
            r.fulfill({
              contentType: 'text/html',
              body: `<!doctype html><meta name="viewport" content="width=device-width"><body style="margin:0"><script type="module" src="/widget/nadir-track.js"></script><nadir-track satellites="${server.credentials.satellites.map((x) => x.id).join(',')}" api-key="${server.credentials.browserKey}" style="display:block;height:${height}px"></nadir-track>`,
            }),
          ),
      });
      await w.page.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('path.past')?.getAttribute('d'));
      const m = await w.page.evaluate(() => {
        const sr = document.querySelector('nadir-track')!.shadowRoot!;
        const frame = sr.querySelector('.nadir')!.getBoundingClientRect();
        const box = sr.querySelector('.mapbox')!.getBoundingClientRect();
        const about = sr.querySelector('.about')!.getBoundingClientRect();
        const scroller = sr.querySelector('.nadir')!;
        return { frameH: frame.height, frameW: frame.width, frameBottom: frame.bottom, boxH: box.height, aboutBottom: about.bottom, overflows: scroller.scrollHeight > scroller.clientHeight + 1 };
      });
      expect(m.frameH).toBeCloseTo(height, 0);
      expect(m.frameBottom - m.aboutBottom).toBeLessThan(14); // the frame's padding and border, no band
      expect(m.overflows).toBe(false);
      // The map takes the rest, or at a phone's width at least its own Equal Earth shape (about 2.05:1)
      // when the pass list and the time control share the height below it.
      expect(m.boxH).toBeGreaterThan(Math.min(height * 0.6, (m.frameW - 24) / 2.1));
      await w.page.screenshot({ path: path.join(ARTIFACTS, `fixed-height-${width}.png`) });
      expect(w.pageErrors).toEqual([]);
      await w.ctx.close();
    }
  });

  it('fills the hosted embed page’s frame, the map taking the height', async () => {
    const ctx = await browser.newContext({ viewport: { width: 1280, height: 620 } });
    const page = await ctx.newPage();
    await page.goto(`${server.url}/embed/${server.credentials.embedId}`);
    await page.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('path.past')?.getAttribute('d'));
    const [frameH, boxH] = await page.evaluate(() => {
      const sr = document.querySelector('nadir-track')!.shadowRoot!;
      return [sr.querySelector('.nadir')!.getBoundingClientRect().height, sr.querySelector('.mapbox')!.getBoundingClientRect().height];
    });
    expect(frameH).toBeCloseTo(620, 0);
    expect(boxH).toBeGreaterThan(450);
    await ctx.close();
  });

  it('keeps the satellite buttons whole at 320 px (they wrap into rows), so the map keeps its height', async () => {
    const w = await open(`${server.url}/examples/science-centre.html`, { width: 320 });
    await w.page.waitForFunction(() => (document.querySelector('nadir-track')?.shadowRoot?.querySelectorAll('button.chip').length ?? 0) >= 4);
    const m = await w.page.evaluate(() => {
      const sr = document.querySelector('nadir-track')!.shadowRoot!;
      const tops = Array.from(sr.querySelectorAll('.chip')).map((c) => Math.round(c.getBoundingClientRect().top));
      const bar = sr.querySelector('.bar')!.getBoundingClientRect();
      const chips = sr.querySelector('.chips')!;
      const cut = Array.from(sr.querySelectorAll<HTMLElement>('.chip')).filter((c) => c.scrollWidth > c.clientWidth + 1).length;
      return { rows: new Set(tops).size, barH: bar.height, sideways: chips.scrollWidth > chips.clientWidth + 1, cut, box: sr.querySelector('.mapbox')!.getBoundingClientRect().height };
    });
    expect(m.rows).toBeGreaterThanOrEqual(1);
    expect(m.rows).toBeLessThanOrEqual(3);
    expect(m.cut).toBe(0);
    expect(m.sideways).toBe(false);
    expect(m.box).toBeGreaterThan(110);
    await w.ctx.close();
  });

  it('draws each satellite’s name beside its own marker or not at all', async () => {
    for (const width of [320, 1280]) {
      const w = await open(`${server.url}/examples/side-by-side.html`, { width });
      await w.page.waitForFunction(() => Array.from(document.querySelectorAll('nadir-track')).every((e) => !!e.shadowRoot?.querySelector('.mark')));
      await w.page.waitForTimeout(500);
      const bad = await w.page.evaluate(() =>
        Array.from(document.querySelectorAll('nadir-track')).flatMap((el) => {
          const sr = el.shadowRoot!;
          const names = new Map(Array.from(sr.querySelectorAll('button.chip')).map((c, i) => [i, c.textContent!.trim()]));
          const marks = Array.from(sr.querySelectorAll('.mark')).map((g) => {
            const r = g.querySelector('.dot')!.getBoundingClientRect();
            const slot = Number(/slot-(\d)/.exec(g.getAttribute('class') ?? '')![1]);
            return { name: names.get(slot - 1), x: r.x + r.width / 2, y: r.y + r.height / 2 };
          });
          return Array.from(sr.querySelectorAll('.label')).flatMap((t) => {
            const b = t.getBoundingClientRect();
            const d = (m: { x: number; y: number }) => Math.hypot(Math.max(b.left - m.x, 0, m.x - b.right), Math.max(b.top - m.y, 0, m.y - b.bottom));
            const nearest = [...marks].sort((p, q) => d(p) - d(q))[0]!;
            return nearest.name === t.textContent!.trim() ? [] : [`${t.textContent} nearest to ${nearest.name}`];
          });
        }),
      );
      expect(bad).toEqual([]);
      await w.ctx.close();
    }
  });

  it('looks right in light and dark at 320 and 1280 px (screenshots kept)', async () => {
    for (const width of [320, 1280]) {
      for (const scheme of ['light', 'dark'] as const) {
        const w = await open(`${server.url}/examples/side-by-side.html`, { width, scheme });
        await w.page.waitForFunction(() => Array.from(document.querySelectorAll('nadir-track')).every((e) => !!e.shadowRoot?.querySelector('path.past')?.getAttribute('d')));
        await w.page.waitForTimeout(700);
        await w.page.screenshot({ path: path.join(ARTIFACTS, `side-by-side-${width}-${scheme}.png`), fullPage: true });
        const overflow = await w.page.evaluate(() => document.documentElement.scrollWidth > window.innerWidth);
        expect(overflow).toBe(false);
        expect(w.pageErrors).toEqual([]);
        await w.ctx.close();
      }
    }
  });
});

describe('the examples', () => {
  it('shows curl.md as a readable page at curl.html instead of a download', async () => {
    const w = await open(`${server.url}/examples/curl.html`, { width: 320 });
    await w.page.waitForFunction(() => document.querySelector('h1')?.textContent === 'The Nadirline API from a shell');
    const m = await w.page.evaluate(() => ({ code: document.querySelectorAll('pre code').length, rows: document.querySelectorAll('table tbody tr').length, wide: document.documentElement.scrollWidth > innerWidth }));
    expect(m.code).toBeGreaterThan(5);
    expect(m.rows).toBeGreaterThan(5);
    expect(m.wide).toBe(false);
    expect(w.pageErrors).toEqual([]);
    expect(w.consoleErrors).toEqual([]);
    await w.ctx.close();
  });

  describe('next-passes.mjs', () => {
    const script = path.join(repoRoot, 'examples', 'next-passes.mjs');
    let fake: http.Server;
    let base = '';
    const t0 = Date.parse('2026-03-04T18:00:00Z');
    const at = (min: number) => new Date(t0 + min * 60_000).toISOString();
    beforeAll(async () => {
      // a stand-in /v1 with one good satellite (one whole pass, one cut by the window end), one decayed, one unknown
      fake = http.createServer((req, res) => {
        const u = new URL(req.url!, 'http://x');
        const send = (status: number, body: unknown) => res.writeHead(status, { 'content-type': status < 400 ? 'application/json' : 'application/problem+json' }).end(JSON.stringify(body));
        const m = /^\/v1\/satellites\/([^/]+)(\/passes)?$/.exec(u.pathname);
        if (!m || m[1] === 'nope') return send(404, { status: 404, code: 'not-found', title: 'Not found', detail: `No satellite ${m?.[1]} is visible to this key.` });
        if (!m[2]) return send(200, { id: m[1], name: m[1] === 'good' ? 'Good Sat' : 'Gone Sat', derived: { ageDays: 1.5, stale: false } });
        if (m[1] === 'gone') return send(422, { status: 422, code: 'decayed', title: 'Decayed', detail: 'SGP4 says the object has decayed.' });
        const pass = (rise: number, top: number, set: number, end: boolean) => ({
          rise: { t: at(rise), azimuth: 200 },
          culmination: { t: at(top), azimuth: 150, elevation: 41, rangeKm: 700 },
          set: { t: at(set), azimuth: 60 },
          visible: false,
          inProgressAtStart: false,
          inProgressAtEnd: end,
        });
        return send(200, { alwaysUp: false, passes: [pass(10, 14, 18, false), pass(2877, 2880, 2880, true)] });
      });
      await new Promise<void>((r) => fake.listen(0, '127.0.0.1', r));
      base = `http://127.0.0.1:${(fake.address() as AddressInfo).port}`;
    });
    afterAll(() => new Promise<void>((r) => fake.close(() => r())));

    const run = (...ids: string[]) =>
      new Promise<{ code: number; out: string; err: string }>((resolve) => {
        execFile(process.execPath, [script, '51.29', '-2.43', ...ids], { env: { ...process.env, NADIRLINE_API: base, NADIRLINE_KEY: 'nls_test', TZ: 'UTC' } }, (e, out, err) =>
          resolve({ code: e ? Number(e.code ?? 1) : 0, out, err }),
        );
      });

    it('goes on to the next satellite after a problem with one, and says what the problem was', async () => {
      const r = await run('gone', 'nope', 'good');
      expect(r.code).toBe(0);
      expect(r.out).toContain('Good Sat (good)');
      expect(r.err).toMatch(/Gone Sat: 422 decayed/);
      expect(r.err).toMatch(/nope: 404 not-found/);
    });

    it('prints a pass still under way at the window end as such, not with a set equal to its highest point', async () => {
      const r = await run('good');
      const lines = r.out.split('\n').filter((l) => l.startsWith('  '));
      expect(lines[0]).toMatch(/rise .* highest .* set .* min/);
      expect(lines[1]).toMatch(/still up at .* when the window ends/);
      expect(lines[1]).not.toMatch(/\bset /);
      expect(r.out).toContain('rise and set are when a satellite climbs above 10°');
    });

    it('exits non-zero only when no satellite could be shown', async () => {
      expect((await run('gone', 'nope')).code).toBe(1);
    });
  });
});
