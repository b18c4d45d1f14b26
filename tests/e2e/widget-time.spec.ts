/**
 * <nadir-track>'s time and sky features in Debian's Chromium against the real server (demo
 * data): the time control (keyboard, words, tracks asked for the shown time, back to now), the
 * at attribute, the sky plot of a pass, and the "Add to calendar" link. Screenshots land in
 * tests/artifacts/widget-time/.
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchChromium } from '../support/chromium.ts';
import { repoRoot, startServer, type StartedServer } from '../support/server.ts';

const ARTIFACTS = path.join(repoRoot, 'tests', 'artifacts', 'widget-time');
let server: StartedServer;
let browser: Browser;

beforeAll(async () => {
  if (!fs.existsSync(path.join(repoRoot, 'widget', 'dist', 'nadir-track.js'))) {
    execFileSync(process.execPath, [path.join(repoRoot, 'node_modules', 'vite', 'bin', 'vite.js'), 'build'], { cwd: path.join(repoRoot, 'widget'), stdio: 'ignore' });
  }
  fs.mkdirSync(ARTIFACTS, { recursive: true });
  server = await startServer();
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

async function open(locale = 'en-GB'): Promise<{ page: Page; v1: string[]; errors: string[] }> {
  const ctx = await browser.newContext({ viewport: { width: 1100, height: 1300 }, timezoneId: 'UTC', locale });
  const page = await ctx.newPage();
  const v1: string[] = [];
  const errors: string[] = [];
  page.on('request', (r) => {
    if (new URL(r.url()).pathname.startsWith('/v1/')) v1.push(r.url());
  });
  page.on('pageerror', (e) => errors.push(e.message));
  await page.goto(`${server.url}/examples/science-centre.html`);
  await page.waitForFunction(() => (document.querySelector('nadir-track')?.shadowRoot?.querySelectorAll('[part="passes"] .row').length ?? 0) > 0, undefined, { timeout: 30_000 });
  return { page, v1, errors };
}

const inRoot = <T>(page: Page, fn: (root: ShadowRoot) => T) => page.evaluate(fn as never, undefined) as Promise<T>;
const shownText = (page: Page) => page.evaluate(() => document.querySelector('nadir-track')!.shadowRoot!.querySelector('.tshown')?.textContent ?? '');
const markerAt = (page: Page) => page.evaluate(() => document.querySelector('nadir-track')!.shadowRoot!.querySelector('.mark')?.getAttribute('transform') ?? null);

describe('the time control', () => {
  it('moves the map by keyboard, says the shown time, asks tracks for it, and comes back to now', async () => {
    const { page, v1, errors } = await open();
    expect(await shownText(page)).toMatch(/, now$/);
    const before = await markerAt(page);
    await page.evaluate(() => (document.querySelector('nadir-track')!.shadowRoot!.querySelector('.tslider') as HTMLInputElement).focus());
    for (let i = 0; i < 4; i++) await page.keyboard.press('PageDown'); // back in time
    await expect.poll(() => shownText(page)).toMatch(/h( \d+ min)? back$/);
    const valueText = await page.evaluate(() => document.querySelector('nadir-track')!.shadowRoot!.querySelector('.tslider')!.getAttribute('aria-valuetext'));
    expect(valueText).toMatch(/^Map shows \d\d:\d\d \(.* back\)\.$/);
    // the polite status says the same as the slider once the reader stops (both read at once: the
    // shown time moves on with the clock, so a minute can turn between two reads)
    await expect
      .poll(
        () =>
          page.evaluate(() => {
            const sr = document.querySelector('nadir-track')!.shadowRoot!;
            return (sr.querySelector('.timectl [role="status"]')?.textContent ?? '') === sr.querySelector('.tslider')!.getAttribute('aria-valuetext');
          }),
        { timeout: 5000 },
      )
      .toBe(true);
    await expect.poll(() => markerAt(page)).not.toBe(before);
    // a track window around the shown time was asked for (more than 8 h back)
    const starts = v1.filter((u) => u.includes('/track?') || u.includes('/tracks?')).map((u) => Date.parse(new URL(u).searchParams.get('start')!));
    expect(Math.min(...starts)).toBeLessThan(Date.now() - 8 * 3600_000);
    // the panel of a picked satellite says the shown time plainly
    await page.evaluate(() => (document.querySelector('nadir-track')!.shadowRoot!.querySelector('.chip') as HTMLButtonElement).click());
    await expect.poll(() => inRoot(page, () => document.querySelector('nadir-track')!.shadowRoot!.querySelector('.shown-at')?.textContent ?? '')).toMatch(/^Position at \d\d:\d\d, .* back$/);
    await page.locator('nadir-track').screenshot({ path: path.join(ARTIFACTS, 'time-back.png') });
    await page.evaluate(() => (document.querySelector('nadir-track')!.shadowRoot!.querySelector('.tnow') as HTMLButtonElement).click());
    await expect.poll(() => shownText(page)).toMatch(/, now$/);
    expect(errors).toEqual([]);
    await page.context().close();
  });

  it('pins the map to the at attribute and moves from there', async () => {
    const { page } = await open();
    const at = new Date(Date.now() - 5 * 3600_000);
    at.setUTCSeconds(0, 0);
    await page.evaluate((iso) => document.querySelector('nadir-track')!.setAttribute('at', iso), at.toISOString());
    await expect.poll(() => shownText(page)).toBe(`Shown: ${at.toISOString().slice(11, 16)}, the pinned time`);
    expect(await page.evaluate(() => document.querySelector('nadir-track')!.shadowRoot!.querySelector('.tnow')!.textContent!.trim())).toBe('Back to the pinned time');
    await page.evaluate(() => (document.querySelector('nadir-track')!.shadowRoot!.querySelectorAll('.tstep')[1] as HTMLButtonElement).click());
    await expect.poll(() => shownText(page)).toMatch(/after the pinned time$/);
    await page.context().close();
  });
});

describe('the sky plot and the calendar link', () => {
  it('opens a pass\u2019s sky plot with horizon, cardinal points, rise and set and a text equivalent', async () => {
    const { page, v1 } = await open();
    await page.evaluate(() => (document.querySelector('nadir-track')!.shadowRoot!.querySelector('.skybtn') as HTMLButtonElement).click());
    await page.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('.sky-svg .run'), undefined, { timeout: 15_000 });
    expect(v1.some((u) => u.includes('/passes?') && new URL(u).searchParams.get('path') === 'true')).toBe(true);
    const plot = await page.evaluate(() => {
      const r = document.querySelector('nadir-track')!.shadowRoot!;
      return {
        horizon: r.querySelectorAll('.sky-svg circle.horizon').length,
        cardinals: Array.from(r.querySelectorAll('.sky-svg .cardinal')).map((e) => e.textContent),
        runs: Array.from(r.querySelectorAll('.sky-svg .run')).map((e) => e.getAttribute('class')),
        rise: r.querySelectorAll('.sky-svg .mark.rise').length,
        set: r.querySelectorAll('.sky-svg .mark.set').length,
        words: Array.from(r.querySelectorAll('.sky-words li')).map((e) => e.textContent ?? ''),
        focused: r.activeElement?.tagName,
        expanded: r.querySelector('.skybtn')!.getAttribute('aria-expanded'),
      };
    });
    expect(plot.horizon).toBe(1);
    expect(plot.cardinals).toEqual(['N', 'E', 'S', 'W']);
    expect(plot.runs.length).toBeGreaterThan(0);
    expect(plot.runs.every((c) => /run (visible|sunlit|shadow)/.test(c ?? ''))).toBe(true);
    expect(plot.rise).toBe(1);
    expect(plot.set).toBe(1);
    expect(plot.words[0]).toMatch(/^Rises at \d\d:\d\d in the /);
    expect(plot.words.some((w) => /^Highest at \d\d:\d\d, \d+° above the horizon/.test(w))).toBe(true);
    expect(plot.focused).toBe('H4');
    expect(plot.expanded).toBe('true');
    await page.locator('nadir-track').screenshot({ path: path.join(ARTIFACTS, 'sky-plot.png') });
    await page.context().close();
  });

  it('links the pass calendar, which lists the same passes as the list', async () => {
    const { page } = await open();
    const href = await page.evaluate(() => document.querySelector('nadir-track')!.shadowRoot!.querySelector('.cal a')?.getAttribute('href') ?? '');
    const u = new URL(href);
    expect(u.pathname).toMatch(/^\/v1\/satellites\/[^/]+\/passes\.ics$/);
    expect(u.searchParams.get('lat')).toBe('51.29');
    expect(u.searchParams.get('lon')).toBe('-2.43');
    expect(u.searchParams.get('key')).toMatch(/^nlb_/);
    const text = await page.evaluate(async (url) => (await fetch(url)).text(), href);
    expect(text.startsWith('BEGIN:VCALENDAR\r\n')).toBe(true);
    const starts = [...text.matchAll(/^DTSTART:(\d{8}T\d{4})\d\dZ$/gm)].map((m) => m[1]!);
    // the list's first pass (times in UTC here) is among the calendar's events
    const firstRise = await page.evaluate(() => document.querySelector('nadir-track')!.shadowRoot!.querySelector('[part="passes"] .row .when strong')!.textContent!.trim());
    expect(starts.some((s) => `${s.slice(9, 11)}:${s.slice(11, 13)}` === firstRise)).toBe(true);
    await page.context().close();
  });
});

describe('in German', () => {
  it('a German browser’s widget says the time control, the sky plot and the calendar link in German', async () => {
    // no locale attribute on the page: the browser's language chooses
    const { page, errors } = await open('de-DE');
    await expect.poll(() => shownText(page), { timeout: 10_000 }).toMatch(/^Gezeigt: \d\d:\d\d, jetzt$/);
    const controls = await inRoot(page, () => {
      const r = document.querySelector('nadir-track')!.shadowRoot!;
      return {
        group: r.querySelector('.timectl')!.getAttribute('aria-label'),
        steps: Array.from(r.querySelectorAll('.tstep')).map((b) => [b.textContent!.trim(), b.getAttribute('aria-label')]),
        now: r.querySelector('.tnow')!.textContent!.trim(),
        role: r.querySelector('svg[part="map"]')!.getAttribute('aria-roledescription'),
        cal: r.querySelector('.cal a')!.textContent!.trim(),
        calLabel: r.querySelector('.cal a')!.getAttribute('aria-label'),
        skyBtn: r.querySelector('.skybtn')!.textContent!.trim(),
        skyLabel: r.querySelector('.skybtn')!.getAttribute('aria-label'),
      };
    });
    expect(controls).toEqual({
      group: 'Auf der Karte gezeigte Zeit',
      steps: [
        ['− 1 Umlauf', 'Einen Umlauf zurück'],
        ['+ 1 Umlauf', 'Einen Umlauf vor'],
      ],
      now: 'Zurück zu jetzt',
      role: 'Karte',
      cal: 'In den Kalender übernehmen',
      calLabel: expect.stringMatching(/^Überflüge von .+ über Ashcombe Vale in Ihren Kalender übernehmen \(iCalendar-Datei\)$/),
      skyBtn: 'Bahn am Himmel',
      skyLabel: expect.stringMatching(/^Bahn des Überflugs um .*\d\d:\d\d über Ihren Himmel zeigen$/),
    });

    // back in time by keyboard: the status line, the slider's words and the panel line
    await page.evaluate(() => (document.querySelector('nadir-track')!.shadowRoot!.querySelector('.tslider') as HTMLInputElement).focus());
    await page.keyboard.press('PageDown'); // a tenth of the range: 2 h 24 min back
    await expect.poll(() => shownText(page)).toMatch(/^Gezeigt: \d\d:\d\d, vor 2 Std\.( \d+ Min\.)?$/);
    expect(await inRoot(page, () => document.querySelector('nadir-track')!.shadowRoot!.querySelector('.tslider')!.getAttribute('aria-valuetext'))).toMatch(/^Die Karte zeigt \d\d:\d\d \(vor 2 Std\.( \d+ Min\.)?\)\.$/);
    await page.evaluate(() => (document.querySelector('nadir-track')!.shadowRoot!.querySelector('.chip') as HTMLButtonElement).click());
    await expect.poll(() => inRoot(page, () => document.querySelector('nadir-track')!.shadowRoot!.querySelector('.shown-at')?.textContent ?? '')).toMatch(/^Position um \d\d:\d\d, vor 2 Std\./);
    expect(await inRoot(page, () => document.querySelector('nadir-track')!.shadowRoot!.querySelector('.panel .over span:last-child')?.textContent ?? '')).toMatch(/^\d+,\d° [NS], \d+,\d° [OW]$/);

    // the sky plot of the first pass
    await page.evaluate(() => (document.querySelector('nadir-track')!.shadowRoot!.querySelector('.skybtn') as HTMLButtonElement).click());
    await page.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('.sky-svg .run'), undefined, { timeout: 15_000 });
    const sky = await inRoot(page, () => {
      const r = document.querySelector('nadir-track')!.shadowRoot!;
      const all = (sel: string) => Array.from(r.querySelectorAll(sel)).map((e) => e.textContent!.trim());
      return {
        title: r.querySelector('.sky-head h4')!.textContent!.trim(),
        region: r.querySelector('.sky')!.getAttribute('aria-label'),
        close: r.querySelector('.sky-close')!.textContent!.trim(),
        cardinals: all('.sky-svg .cardinal'),
        marks: all('.sky-svg .mark-label'),
        legend: all('.legend li'),
        words: all('.sky-words li'),
        orientation: r.querySelector('.orientation')!.textContent!.trim(),
      };
    });
    expect(sky.title).toMatch(/^.+ an Ihrem Himmel, .*\d\d:\d\d$/);
    expect(sky.region).toBe(sky.title);
    expect(sky.close).toBe('Schließen');
    expect(sky.cardinals).toEqual(['N', 'O', 'S', 'W']);
    expect(sky.marks).toEqual(['Aufgang', 'Untergang']);
    expect(sky.legend.length).toBeGreaterThan(0);
    for (const l of sky.legend) expect(['von der Sonne beschienen vor dunklem Himmel: mit bloßem Auge sichtbar', 'von der Sonne beschienen, aber Ihr Himmel ist noch hell', 'im Erdschatten']).toContain(l);
    expect(sky.words[0]).toMatch(/^Geht um \d\d:\d\d im (Norden|Nordosten|Osten|Südosten|Süden|Südwesten|Westen|Nordwesten) auf\.$/);
    expect(sky.words.some((w) => /^Am höchsten um \d\d:\d\d, \d+° über dem Horizont im /.test(w))).toBe(true);
    expect(sky.words.some((w) => /^Geht um \d\d:\d\d im .+ unter\.$/.test(w))).toBe(true);
    expect(sky.words.some((w) => /^Von \d\d:\d\d bis \d\d:\d\d /.test(w))).toBe(true);
    expect(sky.orientation).toMatch(/^Norden ist oben, Osten rechts/);

    // nothing of the English time, sky or calendar words is left anywhere in the widget
    const text = await inRoot(page, () => (document.querySelector('nadir-track')!.shadowRoot!.querySelector('.nadir') as HTMLElement).innerText);
    expect(text).not.toMatch(/Shown:|Back to|\borbit\b|across your sky|Sky path|Add to calendar|Rises at|Highest at|Sets at|Position at|North is at|sunlit|\b(ahead|back|now)\b/);
    await page.locator('nadir-track').screenshot({ path: path.join(ARTIFACTS, 'de-time-back-sky.png') });
    await page.setViewportSize({ width: 390, height: 1600 });
    await page.evaluate(() => document.querySelector('nadir-track')!.setAttribute('theme', 'dark'));
    await page.waitForTimeout(300);
    await page.locator('nadir-track').screenshot({ path: path.join(ARTIFACTS, 'de-time-back-sky-390-dark.png') });
    expect(errors).toEqual([]);
    await page.context().close();
  });
});
