/**
 * The server's own documentation pages (/docs/api, /docs/problems) on narrow phones: no sideways
 * scrolling, wide tables stacked. The app runs in-process; these pages need no build.
 */
import fs from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp, type NadirlineApp } from '@nadirline/server/app';
import { loadConfig } from '@nadirline/server/config';
import { launchChromium } from '../support/chromium.ts';

let app: NadirlineApp;
let server: http.Server;
let base: string;
let browser: Browser;
let dir: string;

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-docs-'));
  app = await createApp(loadConfig({ NODE_ENV: 'test', SQLITE_FILE: path.join(dir, 'docs.sqlite'), LOG_LEVEL: 'silent', DEMO: 'false' }));
  server = http.createServer(app.app);
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
  await new Promise((resolve) => server?.close(resolve));
  await app?.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('documentation pages on a phone', () => {
  for (const width of [390, 320]) {
    for (const page of ['/docs/problems', '/docs/api']) {
      it(`${page} fits ${width} px without sideways scrolling`, async () => {
        const ctx = await browser.newContext({ viewport: { width, height: 800 } });
        try {
          const p = await ctx.newPage();
          await p.goto(`${base}${page}`);
          const { scroll, client, widest } = await p.evaluate(() => ({
            scroll: document.documentElement.scrollWidth,
            client: document.documentElement.clientWidth,
            widest: Math.max(0, ...Array.from(document.querySelectorAll('table'), (t) => t.getBoundingClientRect().right)),
          }));
          expect(scroll).toBeLessThanOrEqual(client);
          expect(widest).toBeLessThanOrEqual(client);
        } finally {
          await ctx.close();
        }
      });
    }
  }

  it('shows every problem code with its meaning on a phone', async () => {
    const ctx = await browser.newContext({ viewport: { width: 390, height: 800 } });
    try {
      const p = await ctx.newPage();
      await p.goto(`${base}/docs/problems`);
      const rows = await p.$$eval('tr[id]', (trs) => trs.map((tr) => ({ id: tr.id, meaning: (tr.querySelector('td:last-child') as HTMLElement).innerText.trim(), shown: (tr as HTMLElement).offsetHeight > 0 })));
      expect(rows.length).toBeGreaterThan(25);
      for (const r of rows) {
        expect(r.shown, r.id).toBe(true);
        expect(r.meaning.length, r.id).toBeGreaterThan(30);
      }
    } finally {
      await ctx.close();
    }
  });
});
