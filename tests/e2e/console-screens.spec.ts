/**
 * The console screens this work touched, at 390 and 1280 px in the light and the dark theme:
 * each is drawn without sideways scrolling, and a screenshot of each lands in
 * tests/artifacts/console-screens/ to be looked at.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchChromium, signInThroughForm } from '../support/chromium.ts';
import { repoRoot, startServer, type StartedServer } from '../support/server.ts';

const ARTIFACTS = path.join(repoRoot, 'tests', 'artifacts', 'console-screens');
let server: StartedServer;
let browser: Browser;

beforeAll(async () => {
  fs.mkdirSync(ARTIFACTS, { recursive: true });
  server = await startServer();
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

describe('touched console screens at phone and desktop widths, light and dark', () => {
  it('draws keys, usage, plan, profile, satellites and the embed builder without sideways scrolling', async () => {
    const org = server.credentials.organizationId;
    const owner = server.credentials.users.find((u) => u.role === 'owner')!;
    const screens = ['keys', 'usage', 'plan', 'satellites', 'embeds/new', 'profile'];
    for (const scheme of ['light', 'dark'] as const) {
      for (const width of [390, 1280]) {
        const ctx = await browser.newContext({ viewport: { width, height: 900 }, colorScheme: scheme, locale: 'en-GB', timezoneId: 'UTC' });
        const page = await ctx.newPage();
        page.setDefaultTimeout(15_000);
        await signInThroughForm(page, server.url, owner);
        for (const screen of screens) {
          await page.goto(`${server.url}${screen === 'profile' ? '/profile' : `/o/${org}/${screen}`}`);
          await page.locator('h1').first().waitFor();
          await page.waitForLoadState('networkidle').catch(() => undefined);
          const wide = await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
          expect(wide, `${screen} at ${width} px (${scheme}) scrolls sideways by ${wide} px`).toBeLessThanOrEqual(0);
          await page.screenshot({ path: path.join(ARTIFACTS, `${screen.replace('/', '-')}-${width}-${scheme}.png`), fullPage: true });
        }
        await page.goto(`${server.url}/o/${org}/keys`);
        await page.getByRole('button', { name: /Manage/ }).last().click();
        await page.getByRole('menuitem', { name: 'Replace with a new key…' }).click();
        await page.getByRole('dialog').waitFor();
        await page.screenshot({ path: path.join(ARTIFACTS, `replace-dialog-${width}-${scheme}.png`) });
        await ctx.close();
      }
    }
  });
});
