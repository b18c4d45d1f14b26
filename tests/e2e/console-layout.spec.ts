/**
 * Every console route, the server's own pages and the examples at 390 and 1280 px in the light and
 * the dark theme: none scrolls sideways. Then the layout faults a full visual review found, each
 * checked where it was: the invitation row on a phone, the signed-out page without the console
 * around it, paired builder fields, wrapping tabs, the docs tables, the mailbox in the dark, the
 * first-steps row, the usage tables and the pass list's buttons.
 * Screenshots land in tests/artifacts/console-layout/.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchChromium, signInThroughForm } from '../support/chromium.ts';
import { repoRoot, startServer, type StartedServer } from '../support/server.ts';

const ARTIFACTS = path.join(repoRoot, 'tests', 'artifacts', 'console-layout');
type Scheme = 'light' | 'dark';

let server: StartedServer;
let browser: Browser;
const contexts: BrowserContext[] = [];

beforeAll(async () => {
  fs.mkdirSync(ARTIFACTS, { recursive: true });
  server = await startServer();
  browser = await launchChromium();
});
afterAll(async () => {
  for (const c of contexts) await c.close().catch(() => undefined);
  await browser?.close();
  await server?.stop();
});

async function newPage(width: number, scheme: Scheme = 'light'): Promise<Page> {
  const ctx = await browser.newContext({ viewport: { width, height: 900 }, colorScheme: scheme, locale: 'en-GB', timezoneId: 'UTC' });
  contexts.push(ctx);
  const page = await ctx.newPage();
  page.setDefaultTimeout(15_000);
  return page;
}

async function signIn(page: Page, role: 'owner' | 'viewer' = 'owner') {
  const u = server.credentials.users.find((x) => x.role === role)!;
  await signInThroughForm(page, server.url, u);
}

async function settle(page: Page) {
  await page.waitForLoadState('networkidle').catch(() => undefined);
}

const sideways = (page: Page) => page.evaluate(() => document.scrollingElement!.scrollWidth - window.innerWidth);

/** Invite someone through the API as the signed-in owner, so the members page lists an open invitation. */
async function invite(page: Page, email: string) {
  const org = server.credentials.organizationId;
  const status = await page.evaluate(
    async ({ org, email }) => {
      const s = await (await fetch('/api/session')).json();
      const r = await fetch(`/api/orgs/${org}/invitations`, {
        method: 'POST',
        headers: { 'content-type': 'application/json', 'x-csrf-token': s.csrfToken },
        body: JSON.stringify({ email, role: 'editor' }),
      });
      return r.status;
    },
    { org, email },
  );
  expect(status).toBe(201);
}

describe('every screen at phone and desktop widths, light and dark', () => {
  it('scrolls no console page, server page or example sideways', async () => {
    const org = server.credentials.organizationId;
    const sat = server.credentials.satellites[0]!.id;
    const signedOut = ['/sign-in', '/sign-up', '/forgot-password', '/reset-password?token=none', '/verify-email?token=none', '/invite/none', '/no/such/page'];
    const signedIn = [
      '/',
      '/orgs/new',
      `/o/${org}/satellites`,
      `/o/${org}/satellites/${sat}`,
      `/o/${org}/keys`,
      `/o/${org}/embeds`,
      `/o/${org}/embeds/new`,
      `/o/${org}/embeds/${server.credentials.embedId}`,
      `/o/${org}/members`,
      `/o/${org}/activity`,
      `/o/${org}/usage`,
      `/o/${org}/plan`,
      '/profile',
      '/no/such/page',
    ];
    const served = ['/docs/api', '/docs/problems', '/dev/mailbox', '/examples/', '/examples/science-centre.html', '/examples/side-by-side.html', '/examples/curl.html', `/embed/${server.credentials.embedId}`];
    const wide: string[] = [];
    let invited = false;
    for (const scheme of ['light', 'dark'] as const) {
      for (const width of [390, 1280]) {
        const page = await newPage(width, scheme);
        const look = async (url: string, name: string) => {
          await page.goto(`${server.url}${url}`);
          await settle(page);
          const by = await sideways(page);
          if (by > 0) wide.push(`${url} at ${width} px (${scheme}) by ${by} px`);
          if (width === 390) await page.screenshot({ path: path.join(ARTIFACTS, `${name}-${width}-${scheme}.png`), fullPage: true });
        };
        for (const url of [...signedOut, ...served]) await look(url, `out${url.replace(/[^a-z0-9]+/gi, '-')}`);
        await signIn(page);
        if (!invited) {
          await invite(page, 'layout.check@ostwick.example.org');
          invited = true;
        }
        for (const url of signedIn) await look(url, `in${url.replace(/[^a-z0-9]+/gi, '-')}`);
        await page.context().close();
      }
    }
    expect(wide, 'pages that scroll sideways').toEqual([]);
  }, 600_000);
});

describe('layout faults found by looking', () => {
  it('keeps the Withdraw button of an invitation with a long address on a phone screen', async () => {
    const page = await newPage(390);
    await signIn(page);
    await invite(page, 'a.rather.long.address.for.testing@ostwick.example.org');
    await page.goto(`${server.url}/o/${server.credentials.organizationId}/members`);
    const button = page.getByRole('button', { name: /Withdraw the invitation of a\.rather/ });
    const box = (await button.boundingBox())!;
    expect(box.x + box.width).toBeLessThanOrEqual(390);
    expect(await sideways(page)).toBeLessThanOrEqual(0);
  });

  it('shows a signed-out visitor the not-found page without the console’s navigation or sign-out', async () => {
    const page = await newPage(1280);
    await page.goto(`${server.url}/no/such/page`);
    await page.getByRole('heading', { name: 'Nothing here' }).waitFor();
    expect(await page.getByRole('button', { name: 'Sign out' }).count()).toBe(0);
    expect(await page.getByText('Signed in as').count()).toBe(0);
    await page.getByRole('link', { name: 'Sign in' }).waitFor();
  });

  it('lines up the inputs of paired builder fields when one label wraps on a phone', async () => {
    const page = await newPage(390);
    await signIn(page);
    await page.goto(`${server.url}/o/${server.credentials.organizationId}/embeds/new`);
    const behind = (await page.getByLabel('Orbits drawn behind').boundingBox())!;
    const ahead = (await page.getByLabel('Orbits drawn ahead').boundingBox())!;
    expect(Math.abs(behind.y - ahead.y)).toBeLessThanOrEqual(1);
    const width = (await page.getByLabel('Width', { exact: true }).boundingBox())!;
    const height = (await page.getByLabel('Height', { exact: true }).boundingBox())!;
    expect(Math.abs(width.y - height.y)).toBeLessThanOrEqual(1);
    await page.getByLabel('A fixed place').check();
    const lat = (await page.getByLabel(/^Latitude \(/).boundingBox())!;
    const lon = (await page.getByLabel(/^Longitude \(/).boundingBox())!;
    expect(Math.abs(lat.y - lon.y)).toBeLessThanOrEqual(1);
    // the hidden legend first in the form adds no gap above the first field
    const gap = await page.evaluate(() => {
      const form = document.querySelector('form.settings')!.getBoundingClientRect();
      const first = document.querySelector('form.settings .field')!.getBoundingClientRect();
      return first.top - form.top;
    });
    expect(gap).toBeLessThanOrEqual(24);
  });

  it('wraps the element-set tabs on a phone instead of cutting the last one off', async () => {
    const page = await newPage(390);
    await signIn(page);
    await page.goto(`${server.url}/o/${server.credentials.organizationId}/satellites/${server.credentials.satellites[0]!.id}`);
    await page.getByRole('tab', { name: 'Type Keplerian elements' }).waitFor();
    const fits = await page.evaluate(() => {
      const list = document.querySelector('.tabs-list')!;
      const l = list.getBoundingClientRect();
      return Array.from(list.querySelectorAll('[role="tab"]')).map((t) => {
        const r = t.getBoundingClientRect();
        return { text: t.textContent?.trim(), inside: r.left >= l.left - 0.5 && r.right <= l.right + 0.5 };
      });
    });
    expect(fits).toEqual([
      { text: 'Paste text', inside: true },
      { text: 'Upload files', inside: true },
      { text: 'Type Keplerian elements', inside: true },
    ]);
  });

  it('breaks no word of the API reference’s limits table on a phone, and underlines no gap in the route index', async () => {
    const page = await newPage(390);
    await page.goto(`${server.url}/docs/api`);
    const split = await page.evaluate(() => {
      const table = Array.from(document.querySelectorAll('h2')).find((h) => h.textContent === 'Limits')!.nextElementSibling!;
      const out: string[] = [];
      for (const td of Array.from(table.querySelectorAll('tr td:first-child'))) {
        const range = document.createRange();
        range.selectNodeContents(td);
        const lines = new Set(Array.from(range.getClientRects()).map((r) => Math.round(r.top))).size;
        const words = (td.textContent ?? '').trim().split(/\s+/).length;
        if (lines > words) out.push(`${td.textContent} on ${lines} lines`);
      }
      return out;
    });
    expect(split).toEqual([]);
    const underline = await page.evaluate(() => getComputedStyle(document.querySelector('ul.routes a')!).textDecorationLine);
    expect(underline).toBe('none');
  });

  it('draws the development mailbox in the dark theme when the reader asks for it', async () => {
    const page = await newPage(390, 'dark');
    await page.goto(`${server.url}/dev/mailbox`);
    const ground = await page.evaluate(() => {
      const m = getComputedStyle(document.body).backgroundColor.match(/\d+(\.\d+)?/g)!.map(Number);
      return (m[0]! + m[1]! + m[2]!) / 3;
    });
    expect(ground).toBeLessThan(60);
    expect(await sideways(page)).toBeLessThanOrEqual(0);
  });

  it('puts the five first steps in one row and the usage tables two a row on a desktop', async () => {
    const page = await newPage(1280);
    await signIn(page);
    const org = server.credentials.organizationId;
    await page.locator('[data-test="onboarding"] .steps > li').first().waitFor();
    const stepTops = await page.evaluate(() => Array.from(document.querySelectorAll('[data-test="onboarding"] .steps > li')).map((li) => Math.round(li.getBoundingClientRect().top)));
    expect(stepTops.length).toBe(5);
    expect(new Set(stepTops).size).toBe(1);
    await page.goto(`${server.url}/o/${org}/usage`);
    await page.locator('[data-test="by-origin"]').waitFor();
    const lefts = await page.evaluate(() => Array.from(document.querySelectorAll('.tables > .table-wrap')).map((t) => Math.round(t.getBoundingClientRect().left)));
    expect(lefts.length).toBe(4);
    expect(new Set(lefts).size).toBe(2);
  });

  it('gives every pass’s sky-path button its own width, not the width left by the visibility label', async () => {
    for (const width of [390, 1280]) {
      const page = await newPage(width);
      await page.goto(`${server.url}/examples/science-centre.html`);
      await page.waitForFunction(() => (document.querySelector('nadir-track')?.shadowRoot?.querySelectorAll('[part="passes"] .row').length ?? 0) > 1, undefined, { timeout: 30_000 });
      const widths = await page.evaluate(() => Array.from(document.querySelector('nadir-track')!.shadowRoot!.querySelectorAll('.skybtn')).map((b) => Math.round(b.getBoundingClientRect().width)));
      expect(new Set(widths).size, `sky-path button widths at ${width} px: ${widths.join(', ')}`).toBe(1);
      await page.context().close();
    }
  });
});
