/**
 * Plans and payments in Debian's Chromium against the real server and its built-in fake payment
 * provider (demo data): the demo owner upgrades the Brackenfell Astronomy Club to Mission on the
 * fake's checkout page and sees the new quota; a declined card leaves the plan as it was with a
 * clear message; the paid Ostwick Science Centre lists its invoice; a viewer sees plan and quota only.
 * Screenshots land in tests/artifacts/billing/.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchChromium, signInThroughForm } from '../support/chromium.ts';
import { repoRoot, startServer, type StartedServer } from '../support/server.ts';

const ARTIFACTS = path.join(repoRoot, 'tests', 'artifacts', 'billing');
const STARTER_ORG = 'org_demo_brackenfell';

let server: StartedServer;
let browser: Browser;
const contexts: BrowserContext[] = [];

beforeAll(async () => {
  if (!fs.existsSync(path.join(repoRoot, 'console', 'dist', 'index.html'))) throw new Error('build the console first: npm run build');
  fs.mkdirSync(ARTIFACTS, { recursive: true });
  server = await startServer();
  browser = await launchChromium();
});
afterAll(async () => {
  for (const c of contexts) await c.close().catch(() => undefined);
  await browser?.close();
  await server?.stop();
});

async function signInAs(role: 'owner' | 'viewer'): Promise<Page> {
  const ctx = await browser.newContext({ viewport: { width: 1280, height: 900 }, locale: 'en-GB', timezoneId: 'UTC' });
  contexts.push(ctx);
  const page = await ctx.newPage();
  page.setDefaultTimeout(15_000);
  const u = server.credentials.users.find((x) => x.role === role)!;
  await signInThroughForm(page, server.url, u);
  return page;
}

async function shot(page: Page, name: string) {
  await page.screenshot({ path: path.join(ARTIFACTS, `${name}.png`), fullPage: true }).catch(() => undefined);
}

async function startMissionCheckout(page: Page) {
  await page.goto(`${server.url}/o/${STARTER_ORG}/plan`);
  await expect.poll(() => page.getByTestId('plan-name').textContent()).toBe('Starter');
  await page.locator('[data-plan="mission"]').getByRole('button', { name: 'Switch to Mission' }).click();
  await page.getByRole('dialog').getByRole('button', { name: 'Continue to payment' }).click();
  await page.waitForURL(/\/pay\/cs_test_/);
}

describe('plans and payments in the console', () => {
  it('a declined card leaves the plan unchanged and says so, on the payment page and back in the console', async () => {
    const page = await signInAs('owner');
    await startMissionCheckout(page);
    await page.getByLabel('Card number').fill('4000 0000 0000 0002');
    await page.getByRole('button', { name: /^Pay / }).click();
    await expect.poll(() => page.getByRole('alert').textContent()).toContain('Your card was declined. Nothing was charged.');
    await shot(page, 'checkout-declined');
    await page.getByRole('link', { name: 'Cancel and go back' }).click();
    await page.waitForURL(new RegExp(`/o/${STARTER_ORG}/plan`));
    await expect.poll(() => page.getByTestId('checkout-outcome').textContent()).toContain('Checkout was cancelled: nothing was charged and the plan is unchanged.');
    expect(await page.getByTestId('plan-name').textContent()).toBe('Starter');
    await expect.poll(() => page.locator('.quota').textContent()).toMatch(/of 100,000 requests/);
  });

  it('the demo owner upgrades to Mission through the fake checkout page and sees the new quota', async () => {
    const page = await signInAs('owner');
    await startMissionCheckout(page);
    expect(await page.locator('h1').textContent()).toBe('Pay for Nadirline Mission');
    await shot(page, 'checkout-page');
    await page.getByLabel('Card number').fill('4242 4242 4242 4242');
    await page.getByLabel('Name on card').fill('Maren Ostby');
    await page.getByRole('button', { name: /^Pay / }).click();
    await page.waitForURL(new RegExp(`/o/${STARTER_ORG}/plan`));
    try {
      await expect.poll(() => page.getByTestId('checkout-outcome').textContent(), { timeout: 30_000 }).toContain('Payment confirmed: Brackenfell Astronomy Club is on the Mission plan');
    } catch (err) {
      await shot(page, 'plan-upgrade-failed');
      throw new Error(`${(err as Error).message}\nserver output:\n${server.output().slice(-3000)}`);
    }
    expect(await page.getByTestId('plan-name').textContent()).toBe('Mission');
    await expect.poll(() => page.locator('.quota').textContent()).toMatch(/of 2,000,000 requests/);
    expect(await page.getByTestId('subscription-status').textContent()).toContain('Active');
    await expect.poll(() => page.locator('table.data').textContent()).toContain('€39');
    await shot(page, 'plan-after-upgrade');
  });

  it('the paid demo organization lists its invoice; a viewer sees plan and quota only', async () => {
    const owner = await signInAs('owner');
    await owner.goto(`${server.url}/o/${server.credentials.organizationId}/plan`);
    await expect.poll(() => owner.locator('table.data').textContent()).toMatch(/NLT-\d{5}.*€39.*Paid/s);
    expect(await owner.getByRole('button', { name: 'Manage billing' }).isVisible()).toBe(true);
    await shot(owner, 'plan-paid-owner');
    const viewer = await signInAs('viewer');
    await viewer.goto(`${server.url}/o/${server.credentials.organizationId}/plan`);
    await expect.poll(() => viewer.getByTestId('plan-name').textContent()).toBe('Mission');
    await expect.poll(() => viewer.locator('.quota').textContent()).toMatch(/of 2,000,000 requests/);
    expect(await viewer.getByText('Only the owner of the organization can change its plan.').isVisible()).toBe(true);
    expect(await viewer.getByRole('heading', { name: 'Invoices' }).count()).toBe(0);
    expect(await viewer.getByRole('button', { name: 'Manage billing' }).count()).toBe(0);
    await shot(viewer, 'plan-viewer');
  });
});
