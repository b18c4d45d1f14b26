/**
 * Debian's Chromium through playwright-core, headless and kept off the network (no browser
 * download, no background requests). Close the browser in afterAll.
 *
 *   const browser = await launchChromium();
 *   const page = await browser.newPage();
 */
import { chromium, type Browser, type LaunchOptions, type Page } from 'playwright-core';

export const CHROMIUM_PATH = '/usr/bin/chromium';
export const CHROMIUM_ARGS = [
  '--no-sandbox',
  '--disable-dev-shm-usage',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
  '--disable-gpu',
];

export function launchChromium(options: LaunchOptions = {}): Promise<Browser> {
  return chromium.launch({
    executablePath: CHROMIUM_PATH,
    headless: true,
    ...options,
    args: [...CHROMIUM_ARGS, ...(options.args ?? [])],
  });
}

/** Sign in through the console's own form, as a person would, and wait for the satellites page it opens on. */
export async function signInThroughForm(page: Page, baseUrl: string, user: { email: string; password: string }): Promise<void> {
  await page.goto(`${baseUrl}/sign-in`);
  await page.getByLabel('E-mail').fill(user.email);
  await page.getByLabel('Password').fill(user.password);
  await page.getByRole('button', { name: 'Sign in', exact: true }).click();
  await page.waitForURL(/\/o\/[^/]+\/satellites$/);
}
