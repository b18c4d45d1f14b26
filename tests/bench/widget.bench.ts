/**
 * Widget figures for `npm run bench`:
 *   - gzipped size of the built scripts (goal: at most 60 KB each, Vue and d3-geo included);
 *   - time from navigation to the first drawn track on the science centre example, next to the
 *     load time of a blank page from the same server in the same run;
 *   - main-thread CPU time over 10 idle seconds with the map on screen;
 *   - /v1 requests while the tab is hidden and while the map is scrolled off-screen (goal: none);
 *   - on a slow link (1.6 Mbit/s down, 150 ms latency, Chromium DevTools network emulation): time
 *     to the first drawn track and to the drawn coastlines (goal: coastlines no later than tracks),
 *     next to a blank page's load over the same link in the same run;
 *   - 50 satellites in one widget (created through /v1 with the demo server key): time to the
 *     first drawing of all 50 tracks (goal under 2 s locally), /v1 requests it took, and
 *     main-thread CPU over 10 idle seconds (goal under 3 % of a core), next to the one-satellite
 *     example in the same run.
 * The browser figures need the server: NADIRLINE_BENCH_URL points at a running one (its demo
 * credentials must be usable by the example page); otherwise a fresh one is started with
 * tests/support/server.ts. Chromium is Debian's (/usr/bin/chromium).
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { gzipSync } from 'node:zlib';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { fromKeplerian, toTle } from '@nadirline/shared';
import { launchChromium } from '../support/chromium.ts';
import { repoRoot, startServer, type DemoCredentials, type StartedServer } from '../support/server.ts';

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

/** The link of a reader on a slow mobile connection: 1.6 Mbit/s down, 750 kbit/s up, 150 ms round trip. */
const SLOW = { offline: false, latency: 150, downloadThroughput: (1.6e6 / 8) * 0.9, uploadThroughput: (750e3 / 8) * 0.9 };

async function throttle(ctx: BrowserContext, page: Page): Promise<void> {
  const cdp = await ctx.newCDPSession(page);
  await cdp.send('Network.enable');
  await cdp.send('Network.emulateNetworkConditions', SLOW);
}

/** ms to the first drawn track and to the drawn land outline, probed every 5 ms. */
const PROBE_BOTH = `(() => { const t = setInterval(() => { const r = document.querySelector('nadir-track')?.shadowRoot; const d = r?.querySelector('path.past')?.getAttribute('d') ?? ''; const land = r?.querySelector('path.land')?.getAttribute('d') ?? ''; if (d.length > 20 && window.__firstTrack === undefined) window.__firstTrack = performance.now(); if (land.length > 20 && window.__coast === undefined) window.__coast = performance.now(); if (window.__firstTrack !== undefined && window.__coast !== undefined) clearInterval(t); }, 5); })()`;

async function slowLinkFigures(browser: Browser, base: string): Promise<void> {
  const example = `${base}/examples/science-centre.html`;
  const track: number[] = [];
  const coast: number[] = [];
  const blank: number[] = [];
  for (let i = 0; i < 3; i++) {
    const ctx = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    const page = await ctx.newPage();
    await throttle(ctx, page);
    blank.push(await blankLoadMs(page, `${base}/bench-slow-blank-${i}.html`));
    await ctx.close();
    const ctx2 = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    const p2 = await ctx2.newPage();
    await throttle(ctx2, p2);
    await p2.addInitScript(PROBE_BOTH);
    await p2.goto(example);
    await p2.waitForFunction(`window.__firstTrack !== undefined && window.__coast !== undefined`, undefined, { timeout: 30_000 });
    const [t, c] = (await p2.evaluate(`[window.__firstTrack, window.__coast]`)) as [number, number];
    track.push(t);
    coast.push(c);
    await ctx2.close();
  }
  const late = coast.filter((c, i) => c > track[i]! + 20).length;
  console.log(
    `slow link (1.6 Mbit/s, 150 ms): first drawn track median ${median(track).toFixed(0)} ms (runs: ${track.map((x) => x.toFixed(0)).join(', ')}), ` +
      `coastlines median ${median(coast).toFixed(0)} ms (after the tracks in ${late} of ${coast.length} runs; goal 0); ` +
      `blank page over the same link: median ${median(blank).toFixed(0)} ms (ratio ${(median(track) / median(blank)).toFixed(1)}x)`,
  );
}

/** Element sets for extra satellites: low orbits spread over planes and phases, epoch an hour ago. */
function constellationTle(i: number): string {
  const r = fromKeplerian({
    epoch: new Date(Math.floor(Date.now() / 60_000) * 60_000 - 3_600_000).toISOString(),
    name: `BENCH ${i + 1}`,
    catalogNumber: String(98000 + i),
    intlDesignator: `26${String(100 + i).padStart(3, '0')}A`,
    semiMajorAxisKm: 6378.137 + 500 + (i % 5) * 40,
    eccentricity: 0.001,
    inclinationDeg: 53 + (i % 3) * 20,
    raanDeg: (i * 36) % 360,
    argPerigeeDeg: 0,
    meanAnomalyDeg: (i * 47) % 360,
    bstar: 0.0001,
  });
  if (!r.ok) throw new Error(`bench element set refused: ${r.message}`);
  return toTle(r.elementSet).text;
}

/** The demo satellites plus new ones made through POST /v1/satellites until there are `n`. */
async function fiftySatellites(base: string, creds: DemoCredentials, n: number): Promise<string[]> {
  const ids = creds.satellites.map((s) => s.id);
  const listed = (await (await fetch(`${base}/v1/satellites`, { headers: { Authorization: `Bearer ${creds.serverKey}` } })).json()) as { satellites: Array<{ id: string; name: string }> };
  for (const s of listed.satellites) if (!ids.includes(s.id) && /^Bench /.test(s.name)) ids.push(s.id);
  for (let i = ids.length; i < n; i++) {
    const res = await fetch(`${base}/v1/satellites`, {
      method: 'POST',
      headers: { Authorization: `Bearer ${creds.serverKey}`, 'Content-Type': 'application/json' },
      body: JSON.stringify({ name: `Bench ${i + 1}`, elements: constellationTle(i) }),
    });
    if (res.status !== 201) throw new Error(`creating bench satellite ${i + 1}: ${res.status} ${await res.text()}`);
    ids.push(((await res.json()) as { id: string }).id);
  }
  return ids.slice(0, n);
}

async function idleCpu(ctx: BrowserContext, page: Page): Promise<{ task: number; script: number }> {
  const cdp = await ctx.newCDPSession(page);
  await cdp.send('Performance.enable');
  const metric = async (name: string) => (await cdp.send('Performance.getMetrics')).metrics.find((m) => m.name === name)?.value ?? 0;
  const t0 = await metric('TaskDuration');
  const s0 = await metric('ScriptDuration');
  await page.waitForTimeout(10_000);
  return { task: (await metric('TaskDuration')) - t0, script: (await metric('ScriptDuration')) - s0 };
}

async function manySatelliteFigures(browser: Browser, base: string, creds: DemoCredentials): Promise<void> {
  const N = 50;
  const ids = await fiftySatellites(base, creds, N);
  const pageUrl = `${base}/bench-fifty.html`;
  const html = `<!doctype html><meta name="viewport" content="width=device-width"><body style="margin:0"><script type="module" src="/widget/nadir-track.js"></script><nadir-track satellites="${ids.join(',')}" api-key="${creds.browserKey}" style="display:block"></nadir-track>`;
  const all = `(() => { const t = setInterval(() => { const r = document.querySelector('nadir-track')?.shadowRoot; if (!r) return; const n = [...r.querySelectorAll('path.past')].filter((p) => (p.getAttribute('d') ?? '').length > 20).length; if (n >= ${N}) { window.__allTracks = performance.now(); clearInterval(t); } }, 5); })()`;
  const first: number[] = [];
  const requests: number[] = [];
  for (let i = 0; i < 3; i++) {
    const ctx = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    const page = await ctx.newPage();
    let v1 = 0;
    page.on('request', (r) => {
      if (new URL(r.url()).pathname.startsWith('/v1/')) v1++;
    });
    await page.route(pageUrl, (r) => r.fulfill({ contentType: 'text/html', body: html }));
    await page.addInitScript(all);
    await page.goto(pageUrl);
    const h = await page.waitForFunction(`window.__allTracks ?? null`, undefined, { timeout: 60_000 });
    first.push(Number(await h.jsonValue()));
    requests.push(v1);
    if (i === 2) {
      await page.waitForTimeout(2000);
      const cpu = await idleCpu(ctx, page);
      console.log(
        `${N} satellites: all tracks drawn median ${median(first).toFixed(0)} ms (runs: ${first.map((x) => x.toFixed(0)).join(', ')}; goal under 2000 ms), ` +
          `/v1 requests to get there ${requests.join(', ')}; CPU over 10 idle s ${(cpu.task * 1000).toFixed(0)} ms (${((cpu.task / 10) * 100).toFixed(1)} % of a core; goal under 3 %), of which script ${(cpu.script * 1000).toFixed(0)} ms`,
      );
    }
    await ctx.close();
  }
  // the one-satellite baseline in this run
  const ctx = await browser.newContext({ viewport: { width: 1280, height: 900 } });
  const page = await ctx.newPage();
  const one = await firstTrackMs(page, `${base}/examples/science-centre.html`);
  await page.waitForTimeout(2000);
  const cpu = await idleCpu(ctx, page);
  console.log(`baseline, the science centre example: first track ${one.toFixed(0)} ms, CPU over 10 idle s ${((cpu.task / 10) * 100).toFixed(1)} %; ${N}-satellite first draw ratio ${(median(first) / one).toFixed(1)}x`);
  await ctx.close();
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
    console.log(`${s.file}: ${s.rawKB.toFixed(1)} KB, ${s.gzipKB.toFixed(1)} KB gzipped (${Math.round(s.gzipKB * 1024)} B; budget ${BUDGET_KB} KB, also checked by tests/e2e/widget-size.spec.ts) ${s.gzipKB <= BUDGET_KB ? 'ok' : 'OVER BUDGET'}`);
  }
  let server: StartedServer | undefined;
  let browser: Browser | undefined;
  try {
    const base = process.env.NADIRLINE_BENCH_URL?.replace(/\/+$/, '') ?? (server = await startServer()).url;
    browser = await launchChromium();
    await browserFigures(browser, base);
    await slowLinkFigures(browser, base);
    const creds = server?.credentials ?? (JSON.parse(fs.readFileSync(path.join(repoRoot, 'data', 'demo-credentials.json'), 'utf8')) as DemoCredentials);
    await manySatelliteFigures(browser, base, creds);
  } catch (e) {
    console.log(`browser figures skipped: ${(e as Error).message.split('\n')[0]}`);
  } finally {
    await browser?.close();
    await server?.stop();
  }
}
