/**
 * Debian's Chromium through playwright-core, headless and kept off the network (no browser
 * download, no background requests). Close the browser in afterAll.
 *
 *   const browser = await launchChromium();
 *   const page = await browser.newPage();
 */
import { chromium, type Browser, type LaunchOptions } from 'playwright-core';

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
