/**
 * Webhooks out in Debian's Chromium against the real server (demo data, development mode, so a
 * receiver on 127.0.0.1 is accepted and the server's own worker sends): the demo owner adds an
 * endpoint, sees the signing secret once, sends a test event and sees it delivered; the receiver
 * checks the signature with the secret the page showed. Screenshots of the page at 390 and 1280 px,
 * light and dark, land in tests/artifacts/webhooks/.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import path from 'node:path';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchChromium, signInThroughForm } from '../support/chromium.ts';
import { repoRoot, startServer, type StartedServer } from '../support/server.ts';

const ARTIFACTS = path.join(repoRoot, 'tests', 'artifacts', 'webhooks');

let server: StartedServer;
let browser: Browser;
let receiver: http.Server;
let receiverUrl = '';
const got: Array<{ headers: http.IncomingHttpHeaders; body: string }> = [];
const contexts: BrowserContext[] = [];

beforeAll(async () => {
  if (!fs.existsSync(path.join(repoRoot, 'console', 'dist', 'index.html'))) throw new Error('build the console first: npm run build');
  fs.mkdirSync(ARTIFACTS, { recursive: true });
  receiver = http.createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on('data', (c: Buffer) => chunks.push(c));
    req.on('end', () => {
      got.push({ headers: req.headers, body: Buffer.concat(chunks).toString('utf8') });
      res.writeHead(204).end();
    });
  });
  await new Promise<void>((resolve) => receiver.listen(0, '127.0.0.1', resolve));
  receiverUrl = `http://127.0.0.1:${(receiver.address() as AddressInfo).port}/mission-desk`;
  server = await startServer({ env: { WEBHOOK_TICK_MS: '1000' } });
  browser = await launchChromium();
});
afterAll(async () => {
  for (const c of contexts) await c.close().catch(() => undefined);
  await browser?.close();
  await server?.stop();
  receiver?.closeAllConnections();
  await new Promise<void>((resolve) => (receiver ? receiver.close(() => resolve()) : resolve()));
});

async function signIn(width: number, colorScheme: 'light' | 'dark'): Promise<Page> {
  const ctx = await browser.newContext({ viewport: { width, height: 900 }, colorScheme, locale: 'en-GB', timezoneId: 'UTC' });
  contexts.push(ctx);
  await ctx.grantPermissions(['clipboard-read', 'clipboard-write'], { origin: server.url });
  const page = await ctx.newPage();
  page.setDefaultTimeout(15_000);
  const u = server.credentials.users.find((x) => x.role === 'owner')!;
  await signInThroughForm(page, server.url, u);
  return page;
}

describe('webhooks in the console', () => {
  it('the owner adds an endpoint, sees the secret once, sends a test event and sees it delivered', async () => {
    const page = await signIn(1280, 'light');
    await page.getByRole('navigation', { name: 'Console' }).getByRole('link', { name: 'Webhooks' }).click();
    await page.waitForURL(/\/o\/[^/]+\/webhooks$/);
    await page.getByRole('button', { name: 'Add an endpoint' }).first().click();
    const dialog = page.getByRole('dialog');
    await dialog.getByLabel('URL').fill(receiverUrl);
    await dialog.getByLabel('What it is for (optional)').fill('Mission desk');
    await dialog.getByRole('checkbox', { name: /plan\.changed/ }).check();
    await dialog.getByRole('checkbox', { name: /element-set\.stale/ }).check();
    await page.screenshot({ path: path.join(ARTIFACTS, 'add-endpoint-1280-light.png') });
    await dialog.getByRole('button', { name: 'Add endpoint' }).click();

    const secretDialog = page.getByRole('dialog', { name: 'Endpoint added' });
    const secret = ((await secretDialog.locator('pre').textContent()) ?? '').trim();
    expect(secret).toMatch(/^nlwh_/);
    await secretDialog.getByRole('button', { name: /^Copy/ }).click();
    expect(await page.evaluate(() => navigator.clipboard.readText())).toBe(secret);
    await page.screenshot({ path: path.join(ARTIFACTS, 'secret-once-1280-light.png') });
    await secretDialog.getByRole('button', { name: 'I have stored the secret' }).click();
    await expect.poll(() => page.getByRole('dialog').count()).toBe(0);
    // Shown once: not on the page any more, not after a reload.
    expect(await page.content()).not.toContain(secret);
    await page.reload();
    await expect.poll(() => page.locator('.endpoint').count(), { timeout: 15_000 }).toBe(1);
    expect(await page.content()).not.toContain(secret);
    expect(await page.locator('.endpoint').textContent()).toContain(`…${secret.slice(-4)}`);

    await page.getByRole('button', { name: 'Send a test event' }).click();
    await expect.poll(() => page.getByTestId('delivery-state').first().textContent(), { timeout: 20_000 }).toBe('Delivered');
    expect(await page.locator('tbody tr').first().textContent()).toMatch(/webhook\.test.*HTTP 204/s);

    expect(got).toHaveLength(1);
    const g = got[0]!;
    const id = String(g.headers['nadirline-webhook-id']);
    const ts = String(g.headers['nadirline-webhook-timestamp']);
    expect(g.headers['nadirline-webhook-signature']).toBe(`v1=${crypto.createHmac('sha256', secret).update(`${id}.${ts}.${g.body}`).digest('hex')}`);
    expect(JSON.parse(g.body)).toMatchObject({ id, type: 'webhook.test', organizationId: /\/o\/([^/]+)\//.exec(page.url())![1] });
  });

  it('draws the page without sideways scrolling at 390 and 1280 px, light and dark', async () => {
    for (const scheme of ['light', 'dark'] as const) {
      for (const width of [390, 1280]) {
        const page = await signIn(width, scheme);
        const org = /\/o\/([^/]+)\//.exec(page.url())![1]!;
        await page.goto(`${server.url}/o/${org}/webhooks`);
        await expect.poll(() => page.getByTestId('delivery-state').count(), { timeout: 15_000 }).toBeGreaterThan(0);
        const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
        expect([width, scheme, overflow]).toEqual([width, scheme, 0]);
        await page.screenshot({ path: path.join(ARTIFACTS, `webhooks-${width}-${scheme}.png`), fullPage: true });
      }
    }
  });
});
