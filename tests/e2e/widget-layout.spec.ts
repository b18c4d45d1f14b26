/**
 * <nadir-track> at the sizes pages give it and in the reader's language, in Debian's Chromium
 * against the real server: the map keeps its size beside the pass list, the satellite chips stay
 * readable next to the Map/Globe switch, the words follow `locale` or the browser, the globe
 * turns to the picked satellite, and a hosted embed framed by an unlisted site shows our notice.
 * Screenshots land in tests/artifacts/widget-layout/ (ignored by git).
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchChromium } from '../support/chromium.ts';
import { repoRoot, startServer, type StartedServer } from '../support/server.ts';

const ARTIFACTS = path.join(repoRoot, 'tests', 'artifacts', 'widget-layout');

let server: StartedServer;
let browser: Browser;

beforeAll(async () => {
  if (!fs.existsSync(path.join(repoRoot, 'widget', 'dist', 'nadir-track.js'))) {
    execFileSync(process.execPath, [path.join(repoRoot, 'node_modules', 'vite', 'bin', 'vite.js'), 'build'], { cwd: path.join(repoRoot, 'widget'), stdio: 'ignore' });
  }
  fs.mkdirSync(ARTIFACTS, { recursive: true });
  server = await startServer();
  // a page of another (made-up) origin frames the server's embed in the refused-frame test; Chromium's
  // local-network-access checks would block a loopback frame before the server could answer
  browser = await launchChromium({ args: ['--disable-features=LocalNetworkAccessChecks'] });
});
afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

interface Opened {
  ctx: BrowserContext;
  page: Page;
  pageErrors: string[];
}

/** A page of this server holding one <nadir-track> with these attributes and host style. */
interface PageOptions {
  width?: number;
  height?: number;
  scheme?: 'light' | 'dark';
  locale?: string;
  zone?: string;
  style?: string;
  /** Routes to set before the page loads (answers held back, for instance). */
  prepare?: (page: Page) => Promise<unknown>;
  /** A classic script run before the widget's. */
  headScript?: string;
  /** Whether to wait for the first drawn track (default true). */
  waitForTrack?: boolean;
}

async function widgetPage(name: string, attrs: string, opts: PageOptions = {}): Promise<Opened> {
  const ctx = await browser.newContext({
    viewport: { width: opts.width ?? 1280, height: opts.height ?? 900 },
    colorScheme: opts.scheme ?? 'light',
    locale: opts.locale ?? 'en-GB',
    timezoneId: opts.zone ?? 'Europe/London',
  });
  const page = await ctx.newPage();
  const pageErrors: string[] = [];
  page.on('pageerror', (e) => pageErrors.push(e.message));
  await opts.prepare?.(page);
  const url = `${server.url}/e2e-layout-${name}.html`;
  const head = opts.headScript ? `<script>${opts.headScript}</script>` : '';
  await page.route(url, (r) =>
    r.fulfill({
      contentType: 'text/html',
      body: `<!doctype html><meta name="viewport" content="width=device-width"><body style="margin:0;padding:8px">${head}<script type="module" src="/widget/nadir-track.js"></script><nadir-track api-key="${server.credentials.browserKey}" ${attrs} style="${opts.style ?? 'display:block'}"></nadir-track>`,
    }),
  );
  await page.goto(url);
  if (opts.waitForTrack !== false) await page.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('path.past')?.getAttribute('d'), undefined, { timeout: 20_000 });
  return { ctx, page, pageErrors };
}

const allIds = () => server.credentials.satellites.map((s) => s.id).join(',');
/** Until the pass list holds its rows (or says there are none), not while it is still working them out. */
const passesSettled = (page: Page) =>
  page.waitForFunction(() => {
    const sr = document.querySelector('nadir-track')?.shadowRoot;
    return !!sr?.querySelector('.passes .row') || Array.from(sr?.querySelectorAll('.passes .quiet') ?? []).some((q) => !/Working out/.test(q.textContent ?? ''));
  }, undefined, { timeout: 20_000 });

describe('map size beside the pass list', () => {
  it('keeps a 900 x 420 element with passes from shrinking its map to a thumbnail', async () => {
    const w = await widgetPage('passes-900', `satellites="${server.credentials.satellites[0]!.id}" observer="51.38,-2.36" layers="footprint,terminator,passes,graticule,labels"`, {
      style: 'display:block;width:900px;height:420px',
    });
    await passesSettled(w.page);
    const m = await w.page.evaluate(() => {
      const sr = document.querySelector('nadir-track')!.shadowRoot!;
      // the drawn Earth, not the svg box it is fitted into
      const svg = sr.querySelector('path.sea')!.getBoundingClientRect();
      const frame = sr.querySelector('.nadir')!;
      const below = sr.querySelector('.below')!;
      const time = sr.querySelector('.timectl')!.getBoundingClientRect();
      const box = sr.querySelector('.mapbox')!.getBoundingClientRect();
      return {
        w: svg.width,
        h: svg.height,
        overflows: frame.scrollHeight > frame.clientHeight + 1,
        // the pass column ends inside the frame and scrolls what does not fit
        belowBottom: below.getBoundingClientRect().bottom,
        belowScrolls: below.scrollHeight <= below.clientHeight + 1 || getComputedStyle(below).overflowY === 'auto',
        belowLeft: below.getBoundingClientRect().left,
        frameBottom: frame.getBoundingClientRect().bottom,
        gap: time.top - box.bottom,
        timeRight: time.right,
      };
    });
    await w.page.screenshot({ path: path.join(ARTIFACTS, 'passes-900x420.png') });
    expect(m.w).toBeGreaterThanOrEqual(520);
    expect(m.h).toBeGreaterThanOrEqual(250);
    expect(m.overflows).toBe(false);
    expect(m.belowBottom).toBeLessThanOrEqual(m.frameBottom + 1);
    expect(m.belowScrolls).toBe(true);
    // the time control directly under the map, in the map's column
    expect(m.gap).toBeGreaterThanOrEqual(0);
    expect(m.gap).toBeLessThan(16);
    expect(m.timeRight).toBeLessThanOrEqual(m.belowLeft);
    expect(w.pageErrors).toEqual([]);
    await w.ctx.close();
  });

  for (const width of [390, 720, 900, 1280]) {
    it(`puts the time control directly under the map at ${width} px with passes, not under the pass list`, async () => {
      const w = await widgetPage(`time-under-map-${width}`, `satellites="${server.credentials.satellites[0]!.id}" observer="51.38,-2.36" layers="footprint,terminator,passes"`, { width, height: 1000 });
      await passesSettled(w.page);
      await w.page.evaluate(() => (document.querySelector('nadir-track')!.shadowRoot!.querySelector('.chip') as HTMLButtonElement).click());
      await w.page.waitForFunction(() => !!document.querySelector('nadir-track')!.shadowRoot!.querySelector('.panel'));
      const m = await w.page.evaluate(() => {
        const sr = document.querySelector('nadir-track')!.shadowRoot!;
        const r = (sel: string) => sr.querySelector(sel)!.getBoundingClientRect();
        const [box, time, below, sea] = [r('.mapbox'), r('.timectl'), r('.below'), r('path.sea')];
        return { side: sr.querySelector('.body')!.classList.contains('side') && below.left >= box.right, gap: time.top - box.bottom, seaGap: time.top - sea.bottom, timeBottom: time.bottom, belowTop: below.top, belowBottom: below.bottom, timeRight: time.right, belowLeft: below.left };
      });
      await w.page.locator('nadir-track').screenshot({ path: path.join(ARTIFACTS, `time-under-map-${width}.png`) });
      expect(m.gap).toBeGreaterThanOrEqual(0);
      expect(m.gap).toBeLessThan(16);
      // under the drawn map itself, not under an empty stretch of its box
      expect(m.seaGap).toBeLessThan(24);
      if (m.side) {
        expect(m.timeRight).toBeLessThanOrEqual(m.belowLeft);
        expect(m.timeBottom).toBeLessThan(m.belowBottom);
      } else {
        expect(m.timeBottom).toBeLessThanOrEqual(m.belowTop);
      }
      // wide elements put the list beside the map; a phone stacks them
      expect(m.side).toBe(width >= 900);
      expect(w.pageErrors).toEqual([]);
      await w.ctx.close();
    });
  }

  it('keeps the map the larger part of a 390 px wide, 620 px high element with passes, with nothing cut off', async () => {
    const w = await widgetPage('passes-390', `satellites="${server.credentials.satellites[0]!.id}" observer="51.38,-2.36" layers="footprint,terminator,passes"`, {
      width: 390,
      height: 844,
      style: 'display:block;height:620px',
    });
    await passesSettled(w.page);
    const m = await w.page.evaluate(() => {
      const sr = document.querySelector('nadir-track')!.shadowRoot!;
      // the drawn Earth, not the svg box it is fitted into
      const svg = sr.querySelector('path.sea')!.getBoundingClientRect();
      const frame = sr.querySelector('.nadir')!;
      const about = sr.querySelector('.about')!.getBoundingClientRect();
      return { w: svg.width, h: svg.height, overflows: frame.scrollHeight > frame.clientHeight + 1, aboutBottom: about.bottom, frameBottom: frame.getBoundingClientRect().bottom };
    });
    await w.page.screenshot({ path: path.join(ARTIFACTS, 'passes-390x620.png') });
    expect(m.w).toBeGreaterThan(330);
    expect(m.overflows).toBe(false);
    expect(m.aboutBottom).toBeLessThanOrEqual(m.frameBottom + 1);
    await w.ctx.close();
  });
});

describe('satellite chips', () => {
  for (const width of [1280, 390]) {
    it(`shows four chips whole at ${width} px: none under the Map/Globe switch, none cut short`, async () => {
      const w = await widgetPage(`chips-${width}`, `satellites="${allIds()}"`, { width, height: 900 });
      await w.page.waitForFunction(() => document.querySelector('nadir-track')!.shadowRoot!.querySelectorAll('button.chip').length === 4);
      const m = await w.page.evaluate(() => {
        const sr = document.querySelector('nadir-track')!.shadowRoot!;
        const views = sr.querySelector('.views')!.getBoundingClientRect();
        const chips = Array.from(sr.querySelectorAll<HTMLElement>('button.chip')).map((c) => {
          const r = c.getBoundingClientRect();
          const hit = document.elementFromPoint(r.left + r.width / 2, r.top + r.height / 2);
          return {
            text: c.textContent ?? '',
            overlapsViews: r.right > views.left && r.left < views.right && r.bottom > views.top && r.top < views.bottom,
            cut: c.scrollWidth > c.clientWidth + 1,
            // the chip itself answers a click at its centre (the shadow host is what the page sees)
            reachable: hit === document.querySelector('nadir-track') && sr.elementFromPoint(r.left + r.width / 2, r.top + r.height / 2)?.closest('button.chip') === c,
            inside: r.left >= 0 && r.right <= window.innerWidth,
          };
        });
        return chips;
      });
      await w.page.screenshot({ path: path.join(ARTIFACTS, `chips-${width}.png`) });
      for (const c of m) {
        expect(c.overlapsViews, c.text).toBe(false);
        expect(c.cut, c.text).toBe(false);
        expect(c.reachable, c.text).toBe(true);
        expect(c.inside, c.text).toBe(true);
      }
      await w.ctx.close();
    });
  }
});

describe('the picked satellite', () => {
  it('separates the place from the coordinates in the panel', async () => {
    const w = await widgetPage('panel', `satellites="${allIds()}"`);
    await w.page.waitForFunction(() => document.querySelector('nadir-track')!.shadowRoot!.querySelectorAll('button.chip').length === 4);
    await w.page.evaluate(() => document.querySelector('nadir-track')!.shadowRoot!.querySelector<HTMLElement>('button.chip')!.click());
    const over = await w.page.waitForFunction(
      () => {
        const p = document.querySelector('nadir-track')!.shadowRoot!.querySelector('.panel .over');
        return p && /Over /.test(p.textContent ?? '') ? (p as HTMLElement).innerText : null;
      },
      undefined,
      { timeout: 15_000 },
    );
    // "Over the North Atlantic · 33.1° N, 20.3° W": never "Atlantic33.1° N"
    expect(String(await over.jsonValue())).toMatch(/[A-Za-z)]\s*[·,–—]?\s+\d/);
    expect(String(await over.jsonValue())).not.toMatch(/[a-z]\d/);
    await w.ctx.close();
  });

  it('turns the globe to the satellite picked', async () => {
    const w = await widgetPage('globe', `satellites="${allIds()}" projection="globe"`);
    await w.page.waitForFunction(() => document.querySelector('nadir-track')!.shadowRoot!.querySelectorAll('button.chip').length === 4);
    for (const i of [2, 1]) {
      await w.page.evaluate((n) => document.querySelector('nadir-track')!.shadowRoot!.querySelectorAll<HTMLElement>('button.chip')[n]!.click(), i);
      // the picked marker ends near the middle of the globe (within a quarter of its radius)
      await w.page.waitForFunction(
        () => {
          const sr = document.querySelector('nadir-track')!.shadowRoot!;
          const svg = sr.querySelector('svg.map')!.getBoundingClientRect();
          const mark = sr.querySelector('.mark.selected');
          if (!mark) return false;
          const r = mark.getBoundingClientRect();
          const dx = r.left + r.width / 2 - (svg.left + svg.width / 2);
          const dy = r.top + r.height / 2 - (svg.top + svg.height / 2);
          return Math.hypot(dx, dy) < Math.min(svg.width, svg.height) / 8;
        },
        undefined,
        { timeout: 10_000 },
      );
    }
    await w.page.screenshot({ path: path.join(ARTIFACTS, 'globe-picked.png') });
    await w.ctx.close();
  });
});

describe('an element given more height than its map needs', () => {
  for (const projection of ['equal-earth', 'globe'] as const) {
    it(`keeps the time control directly under the ${projection} map in a 390 x 844 element`, async () => {
      const w = await widgetPage(`tall-${projection}`, `satellites="${allIds()}" projection="${projection}"`, { width: 420, style: 'display:block;width:390px;height:844px' });
      const m = await w.page.evaluate(() => {
        const sr = document.querySelector('nadir-track')!.shadowRoot!;
        const map = sr.querySelector('svg.map')!.getBoundingClientRect();
        const ctl = sr.querySelector('.timectl')!.getBoundingClientRect();
        return { mapBottom: map.bottom, ctlTop: ctl.top, mapHeight: map.height, mapWidth: map.width };
      });
      await w.page.screenshot({ path: path.join(ARTIFACTS, `tall-${projection}.png`) });
      // the map is drawn at its width (not shrunk), and the control follows it, not the element's foot
      expect(m.mapWidth).toBeGreaterThan(340);
      expect(m.ctlTop - m.mapBottom).toBeLessThan(24);
      expect(m.ctlTop - m.mapBottom).toBeGreaterThan(-1);
      await w.ctx.close();
    });
  }
});

describe('coastlines first', () => {
  it('draws no track over an empty ocean while the land outline is on its way', async () => {
    const { ctx, page } = await widgetPage('coast-first', `satellites="${server.credentials.satellites[0]!.id}"`, {
      waitForTrack: false,
      // the land and country outlines come 1.2 s after the tracks could have been drawn
      prepare: (pg) =>
        pg.route(/\/assets\/(land|countries)-110m\./, async (r) => {
          await new Promise((ok) => setTimeout(ok, 1200));
          await r.continue();
        }),
      headScript: `
          window.__seen = [];
          setInterval(() => {
            const sr = document.querySelector('nadir-track')?.shadowRoot;
            const track = (sr?.querySelector('path.past')?.getAttribute('d') ?? '').length > 20;
            const land = (sr?.querySelector('path.land')?.getAttribute('d') ?? '').length > 20;
            if (track || land) window.__seen.push({ track, land });
          }, 10);`,
    });
    await page.waitForFunction(() => (window as unknown as { __seen: { track: boolean; land: boolean }[] }).__seen.some((x) => x.track && x.land), undefined, { timeout: 15_000 });
    const seen = await page.evaluate(() => (window as unknown as { __seen: { track: boolean; land: boolean }[] }).__seen);
    expect(seen.filter((x) => x.track && !x.land)).toEqual([]);
    await ctx.close();
  });
});

describe('the picked satellite, picked early', () => {
  // the picked marker comes to the middle of the globe (within a tenth of its radius) and stays there
  const centred = (page: Page) =>
    page.waitForFunction(
      () => {
        const sr = document.querySelector('nadir-track')!.shadowRoot!;
        const svg = sr.querySelector('svg.map')!.getBoundingClientRect();
        const mark = sr.querySelector('.mark.selected');
        if (!mark) return false;
        const r = mark.getBoundingClientRect();
        return Math.hypot(r.left + r.width / 2 - (svg.left + svg.width / 2), r.top + r.height / 2 - (svg.top + svg.height / 2)) < Math.min(svg.width, svg.height) / 20;
      },
      undefined,
      { timeout: 10_000 },
    );

  it('turns the globe to a satellite picked before its track arrived', async () => {
    let release!: () => void;
    const held = new Promise<void>((r) => (release = r));
    const { ctx, page } = await widgetPage('early-pick', `satellites="${allIds()}" projection="globe"`, {
      waitForTrack: false,
      // the track windows wait until the pick is made
      prepare: (pg) =>
        pg.route(/\/v1\/(tracks|satellites\/[^/]+\/track)\b/, async (r) => {
          await held;
          await r.continue();
        }),
    });
    await page.waitForFunction(() => document.querySelector('nadir-track')?.shadowRoot?.querySelectorAll('button.chip').length === 4, undefined, { timeout: 15_000 });
    await page.evaluate(() => document.querySelector('nadir-track')!.shadowRoot!.querySelectorAll<HTMLElement>('button.chip')[2]!.click());
    release();
    await centred(page);
    await ctx.close();
  });

  it('turns the globe to the picked satellite when the reader switches from the map', async () => {
    const w = await widgetPage('map-then-globe', `satellites="${allIds()}"`);
    await w.page.waitForFunction(() => document.querySelector('nadir-track')!.shadowRoot!.querySelectorAll('button.chip').length === 4);
    await w.page.evaluate(() => document.querySelector('nadir-track')!.shadowRoot!.querySelectorAll<HTMLElement>('button.chip')[2]!.click());
    await w.page.evaluate(() => {
      const sr = document.querySelector('nadir-track')!.shadowRoot!;
      Array.from(sr.querySelectorAll<HTMLElement>('button')).find((b) => /globe/i.test(b.textContent ?? ''))!.click();
    });
    await centred(w.page);
    await w.ctx.close();
  });
});

describe('words in the reader’s language', () => {
  const text = (page: Page) => page.evaluate(() => (document.querySelector('nadir-track')!.shadowRoot!.querySelector('.nadir') as HTMLElement).innerText);

  it('speaks German when the locale attribute says de, with the time zone as people say it', async () => {
    const w = await widgetPage('de', `satellites="${server.credentials.satellites[0]!.id}" observer="52.52,13.40" layers="passes,footprint" locale="de" time-zone="Europe/Berlin"`, { locale: 'en-US' });
    await w.page.waitForFunction(() => /Globus/.test((document.querySelector('nadir-track')!.shadowRoot!.querySelector('.nadir') as HTMLElement).innerText), undefined, { timeout: 10_000 });
    await w.page.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('.passes .row, .passes .quiet'));
    const t = await text(w.page);
    expect(t).toContain('Karte');
    expect(t).toContain('Über diese Positionen');
    expect(t).toMatch(/Nächste Überflüge von .+ über /);
    expect(t).toContain('Mitteleuropäische');
    expect(t).not.toContain('Europe/Berlin');
    expect(t).not.toMatch(/\bover you\b|Next passes/);
    await w.page.screenshot({ path: path.join(ARTIFACTS, 'locale-de.png') });
    await w.ctx.close();
  });

  for (const [lang, word, about] of [
    ['fr-FR', 'Carte', 'À propos de ces positions'],
    ['es-ES', 'Mapa', 'Sobre estas posiciones'],
  ] as const) {
    it(`follows a ${lang} browser when no locale is set`, async () => {
      const w = await widgetPage(`browser-${lang}`, `satellites="${server.credentials.satellites[0]!.id}"`, { locale: lang, zone: 'Europe/Paris' });
      await w.page.waitForFunction((a) => (document.querySelector('nadir-track')!.shadowRoot!.querySelector('.nadir') as HTMLElement).innerText.includes(a), about, { timeout: 10_000 });
      expect(await text(w.page)).toContain(word);
      await w.ctx.close();
    });
  }

  it('names the country under a picked satellite in German: “Über” and the German name', async () => {
    const sat = server.credentials.satellites[0]!.id;
    // the map's countries by English name, and the German names by atlas id (id, else the English name)
    const atlas = JSON.parse(fs.readFileSync(createRequire(import.meta.url).resolve('world-atlas/countries-110m.json'), 'utf8')) as { objects: { countries: { geometries: { id?: string; properties: { name: string } }[] } } };
    const keyOf = new Map(atlas.objects.countries.geometries.map((g) => [g.properties.name, String(g.id ?? g.properties.name)]));
    const german = (JSON.parse(fs.readFileSync(path.join(repoRoot, 'widget', 'src', 'locales', 'de.json'), 'utf8')) as { countries: Record<string, string> }).countries;
    const placeText = (page: Page) => page.evaluate(() => document.querySelector('nadir-track')!.shadowRoot!.querySelector('.panel .place')?.textContent ?? '');
    const pin = (page: Page, ms: number) => page.evaluate((iso) => document.querySelector('nadir-track')!.setAttribute('at', iso), new Date(ms).toISOString());
    const pick = (page: Page) => page.evaluate(() => (document.querySelector('nadir-track')!.shadowRoot!.querySelector('.chip') as HTMLButtonElement).click());

    // in English first, a moment pinned with `at` when the satellite is over a country (not the sea)
    const t0 = Math.floor(Date.now() / 60_000) * 60_000;
    const en = await widgetPage('over-en', `satellites="${sat}" locale="en" at="${new Date(t0).toISOString()}"`);
    await pick(en.page);
    let found: { at: number; name: string } | null = null;
    for (let i = 0; i < 90 && !found; i++) {
      const at = t0 + i * 7 * 60_000;
      await pin(en.page, at);
      await expect.poll(() => en.page.evaluate(() => document.querySelector('nadir-track')!.shadowRoot!.querySelector('.shown-at')?.textContent ?? ''), { timeout: 10_000 }).toContain('Position at');
      const text = await expect.poll(() => placeText(en.page), { timeout: 15_000 }).toMatch(/^Over /).then(() => placeText(en.page));
      const name = text.replace(/^Over (the )?/, '');
      // well inside: the same country a minute either side (the German page computes its own samples)
      if (!keyOf.has(name)) continue;
      await pin(en.page, at - 60_000);
      const before = await expect.poll(() => placeText(en.page), { timeout: 10_000 }).toMatch(/^Over /).then(() => placeText(en.page));
      await pin(en.page, at + 60_000);
      const after = await expect.poll(() => placeText(en.page), { timeout: 10_000 }).toMatch(/^Over /).then(() => placeText(en.page));
      if (before === text && after === text) found = { at, name };
    }
    await en.ctx.close();
    expect(found, 'the satellite crosses a country within ten hours').not.toBeNull();
    const expected = german[keyOf.get(found!.name)!]!;
    expect(expected).toBeTruthy();

    const de = await widgetPage('over-de', `satellites="${sat}" locale="de" at="${new Date(found!.at).toISOString()}"`, { locale: 'en-US' });
    await pick(de.page);
    await expect.poll(() => placeText(de.page), { timeout: 20_000 }).toBe(`Über ${expected}`);
    // the live region says it in German too
    await expect.poll(() => de.page.evaluate(() => document.querySelector('nadir-track')!.shadowRoot!.querySelector('[aria-live="polite"]')?.textContent ?? ''), { timeout: 15_000 }).toContain(`über ${expected} bei`);
    await de.page.locator('nadir-track').screenshot({ path: path.join(ARTIFACTS, 'over-de.png') });
    expect(de.pageErrors).toEqual([]);
    await de.ctx.close();
  });

  it('names a fixed observer place in the pass list instead of “you”', async () => {
    const w = await widgetPage('place', `satellites="${server.credentials.satellites[0]!.id}" observer="51.38,-2.36" layers="passes" observer-name="Ostwick Hall"`);
    const title = await w.page.waitForFunction(() => document.querySelector('nadir-track')!.shadowRoot!.querySelector('.passes-title')?.textContent ?? null, undefined, { timeout: 15_000 });
    expect(String(await title.jsonValue())).toContain('over Ostwick Hall');
    expect(String(await title.jsonValue())).not.toContain('over you');
    expect(String(await title.jsonValue())).not.toMatch(/Europe\/London/);
    await w.ctx.close();
    const w2 = await widgetPage('place-coords', `satellites="${server.credentials.satellites[0]!.id}" observer="51.38,-2.36" layers="passes"`);
    const t2 = await w2.page.waitForFunction(() => document.querySelector('nadir-track')!.shadowRoot!.querySelector('.passes-title')?.textContent ?? null, undefined, { timeout: 15_000 });
    expect(String(await t2.jsonValue())).toMatch(/over 51\.4° N, 2\.4° W/);
    await w2.ctx.close();
  });
});

describe('hosted embed framed by a site its key does not list', () => {
  it('shows the Nadirline notice inside the frame, not a blocked frame', async () => {
    const ctx = await browser.newContext({ viewport: { width: 1000, height: 700 } });
    const page = await ctx.newPage();
    const outside = 'http://pages.elsewhere.test/story.html';
    await page.route(outside, (r) =>
      r.fulfill({ contentType: 'text/html', body: `<!doctype html><h1>A story</h1><iframe src="${server.url}/embed/${server.credentials.embedId}" width="800" height="420" title="Our satellites"></iframe>` }),
    );
    await page.goto(outside);
    const frame = await (await page.waitForSelector('iframe')).contentFrame();
    expect(frame).not.toBeNull();
    await frame!.waitForSelector('text=This map is not allowed on this site', { timeout: 10_000 });
    expect(await frame!.textContent('body')).toContain('http://pages.elsewhere.test');
    await page.screenshot({ path: path.join(ARTIFACTS, 'embed-refused.png') });
    await ctx.close();
  });
});

describe('hosted embed framed by a page that sends no Referer', () => {
  const framePage = (policy: 'meta' | 'attribute') =>
    `<!doctype html>${policy === 'meta' ? '<meta name="referrer" content="no-referrer">' : ''}<h1>A story</h1>` +
    `<iframe src="${server.url}/embed/${server.credentials.embedId}"${policy === 'attribute' ? ' referrerpolicy="no-referrer"' : ''} width="800" height="420" title="Our satellites"></iframe>`;

  for (const policy of ['meta', 'attribute'] as const) {
    it(`shows the Nadirline notice on a site the key does not list (no-referrer by ${policy})`, async () => {
      const ctx = await browser.newContext({ viewport: { width: 1000, height: 700 } });
      const page = await ctx.newPage();
      const outside = 'http://quiet.elsewhere.test/story.html';
      const embedRequests: Array<{ url: string; referer: string | undefined; status: number }> = [];
      page.on('response', (r) => {
        if (r.url().includes('/embed/')) embedRequests.push({ url: r.url(), referer: r.request().headers()['referer'], status: r.status() });
      });
      await page.route(outside, (r) => r.fulfill({ contentType: 'text/html', body: framePage(policy) }));
      await page.goto(outside);
      const frame = await (await page.waitForSelector('iframe')).contentFrame();
      expect(frame).not.toBeNull();
      await frame!.waitForSelector('text=This map is not allowed on this site', { timeout: 10_000 });
      expect(await frame!.textContent('body')).toContain('http://quiet.elsewhere.test');
      expect(await frame!.$('nadir-track')).toBeNull();
      // the first request really carried no Referer, so the server could not have judged it alone
      const first = embedRequests.find((e) => new URL(e.url).pathname === `/embed/${server.credentials.embedId}`);
      expect(first?.referer).toBeUndefined();
      expect(first?.status).toBe(200);
      expect(embedRequests.some((e) => e.url.includes('framers=') && e.status === 403)).toBe(true);
      if (policy === 'meta') await page.screenshot({ path: path.join(ARTIFACTS, 'embed-refused-no-referrer.png') });
      await ctx.close();
    });
  }

  it('still draws the map on a site the key lists, with no Referer', async () => {
    const ctx = await browser.newContext({ viewport: { width: 1000, height: 700 } });
    const page = await ctx.newPage();
    const pageErrors: string[] = [];
    page.on('pageerror', (e) => pageErrors.push(e.message));
    // the demo key lists both loopback names of the server's port; this page is on the other one
    const listed = `${server.url.replace('127.0.0.1', 'localhost')}/e2e-quiet-story.html`;
    expect(listed).not.toBe(`${server.url}/e2e-quiet-story.html`);
    await page.route(listed, (r) => r.fulfill({ contentType: 'text/html', body: framePage('meta') }));
    await page.goto(listed);
    const frame = await (await page.waitForSelector('iframe')).contentFrame();
    await frame!.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('.mark'), undefined, { timeout: 20_000 });
    expect(await frame!.textContent('body')).not.toContain('not allowed on this site');
    expect(pageErrors).toEqual([]);
    await ctx.close();
  });
});
