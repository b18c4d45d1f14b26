/**
 * Widget figures for `npm run bench`:
 *   - gzipped size of the built scripts (goal: at most 60 KB each, Vue and d3-geo included);
 *   - time from navigation to the first drawn track on the science centre example, next to the
 *     load time of a blank page from the same server in the same run;
 *   - main-thread CPU time over 10 idle seconds with the map on screen;
 *   - /v1 requests while the tab is hidden and while the map is scrolled off-screen (goal: none).
 * The browser figures need the server: NADIRLINE_BENCH_URL points at a running one (its demo
 * credentials must be usable by the example page); otherwise a fresh one is started with
 * tests/support/server.ts. Chromium is Debian's (/usr/bin/chromium).
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { gzipSync } from 'node:zlib';
import type { Browser, Page } from 'playwright-core';
import { launchChromium } from '../support/chromium.ts';
import { repoRoot, startServer, type StartedServer } from '../support/server.ts';

const DIST = path.join(repoRoot, 'widget', 'dist');
const BUDGET_KB = 60;

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
};

export function bundleSizes(): { file: string; rawKB: number; gzipKB: number }[] {
  if (!fs.existsSync(path.join(DIST, 'nadir-track.js'))) {
    execFileSync(process.execPath, [path.join(repoRoot, 'node_modules', 'vite', 'bin', 'vite.js'), 'build'], { cwd: path.join(repoRoot, 'widget'), stdio: 'ignore' });
  }
  return ['nadir-track.js', 'nadir-track.iife.js'].map((file) => {
    const buf = fs.readFileSync(path.join(DIST, file));
    return { file, rawKB: buf.length / 1024, gzipKB: gzipSync(buf, { level: 9 }).length / 1024 };
  });
}

/**
 * ms from navigation start to the first drawn track. A 5 ms probe installed before the page's own
 * scripts notes the moment (Playwright's own polling would add up to a frame or two of lag).
 */
const PROBE = `(() => { const t = setInterval(() => { const d = document.querySelector('nadir-track')?.shadowRoot?.querySelector('path.past')?.getAttribute('d') ?? ''; if (d.length > 20) { window.__firstTrack = performance.now(); clearInterval(t); } }, 5); })()`;
async function firstTrackMs(page: Page, url: string): Promise<number> {
  await page.addInitScript(PROBE);
  await page.goto(url);
  const h = await page.waitForFunction(`window.__firstTrack ?? null`, undefined, { timeout: 20_000 });
  return Number(await h.jsonValue());
}

async function blankLoadMs(page: Page, url: string): Promise<number> {
  await page.route(url, (r) => r.fulfill({ contentType: 'text/html', body: '<!doctype html><title>blank</title><p>blank</p>' }));
  await page.goto(url, { waitUntil: 'load' });
  return page.evaluate(`(() => { const nav = performance.getEntriesByType('navigation')[0]; return nav ? nav.loadEventEnd : performance.now(); })()`);
}

async function browserFigures(browser: Browser, base: string): Promise<void> {
  const example = `${base}/examples/science-centre.html`;
  const track: number[] = [];
  const blank: number[] = [];
  for (let i = 0; i < 5; i++) {
    const ctx = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    const page = await ctx.newPage();
    blank.push(await blankLoadMs(page, `${base}/bench-blank-${i}.html`));
    // a new context each time: nothing cached, like a first visit
    const ctx2 = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    track.push(await firstTrackMs(await ctx2.newPage(), example));
    await ctx.close();
    await ctx2.close();
  }
  console.log(`first drawn track: median ${median(track).toFixed(0)} ms (runs: ${track.map((x) => x.toFixed(0)).join(', ')}); blank page load: median ${median(blank).toFixed(0)} ms`);

  // CPU over 10 idle seconds
  const ctx = await browser.newContext({ viewport: { width: 1280, height: 900 } });
  const page = await ctx.newPage();
  await firstTrackMs(page, example);
  await page.waitForTimeout(2000);
  const cdp = await ctx.newCDPSession(page);
  await cdp.send('Performance.enable');
  const metric = async (name: string) => ((await cdp.send('Performance.getMetrics')).metrics.find((m) => m.name === name)?.value ?? 0);
  const t0 = await metric('TaskDuration');
  const s0 = await metric('ScriptDuration');
  await page.waitForTimeout(10_000);
  const task = (await metric('TaskDuration')) - t0;
  const script = (await metric('ScriptDuration')) - s0;
  console.log(`CPU over 10 idle s: main-thread tasks ${(task * 1000).toFixed(0)} ms (${((task / 10) * 100).toFixed(1)} %), of which script ${(script * 1000).toFixed(0)} ms`);
  await ctx.close();

  // requests while hidden / off-screen, over three simulated hours (page clock)
  const ctx3 = await browser.newContext({ viewport: { width: 1280, height: 900 } });
  const p3 = await ctx3.newPage();
  let v1 = 0;
  p3.on('request', (r) => {
    if (new URL(r.url()).pathname.startsWith('/v1/')) v1++;
  });
  await p3.clock.install();
  await p3.goto(example);
  for (let i = 0; i < 100 && !(await p3.evaluate(`!!document.querySelector('nadir-track')?.shadowRoot?.querySelector('.mark')`)); i++) await p3.waitForTimeout(100);
  // strings, not functions: the TypeScript loader would wrap nested functions in a helper the page lacks
  await p3.evaluate(`Object.defineProperty(document, 'visibilityState', { configurable: true, get: () => 'hidden' });
    document.dispatchEvent(new Event('visibilitychange'));`);
  let before = v1;
  await p3.clock.runFor(3 * 3600_000);
  const hidden = v1 - before;
  await p3.evaluate(`Object.defineProperty(document, 'visibilityState', { configurable: true, get: () => 'visible' });
    document.body.style.paddingBottom = '6000px';
    window.scrollTo(0, 6000);
    document.dispatchEvent(new Event('visibilitychange'));`);
  await p3.waitForTimeout(300);
  before = v1;
  await p3.clock.runFor(3 * 3600_000);
  const offscreen = v1 - before;
  console.log(`/v1 requests over 3 simulated hours: while hidden ${hidden}, while off-screen ${offscreen} (goal: 0 and 0)`);
  await ctx3.close();
}

export async function run(): Promise<void> {
  for (const s of bundleSizes()) {
    console.log(`${s.file}: ${s.rawKB.toFixed(1)} KB, ${s.gzipKB.toFixed(1)} KB gzipped (budget ${BUDGET_KB} KB) ${s.gzipKB <= BUDGET_KB ? 'ok' : 'OVER BUDGET'}`);
  }
  let server: StartedServer | undefined;
  let browser: Browser | undefined;
  try {
    const base = process.env.NADIRLINE_BENCH_URL?.replace(/\/+$/, '') ?? (server = await startServer()).url;
    browser = await launchChromium();
    await browserFigures(browser, base);
  } catch (e) {
    console.log(`browser figures skipped: ${(e as Error).message.split('\n')[0]}`);
  } finally {
    await browser?.close();
    await server?.stop();
  }
}
