/**
 * The console in Debian's Chromium against the real Nadirline server (demo data): accounts,
 * satellites, keys, embeds and the role matrix, each through the pages a person would use.
 * Screenshots of failures land in tests/artifacts/console/.
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchChromium, signInThroughForm } from '../support/chromium.ts';
import { repoRoot, startServer, type StartedServer } from '../support/server.ts';

const ARTIFACTS = path.join(repoRoot, 'tests', 'artifacts', 'console');
type Role = 'owner' | 'admin' | 'editor' | 'viewer';

let server: StartedServer;
let browser: Browser;
const contexts: BrowserContext[] = [];

function build(workspace: 'console' | 'widget', entry: string) {
  if (fs.existsSync(path.join(repoRoot, workspace, 'dist', entry))) return;
  execFileSync(process.execPath, [path.join(repoRoot, 'node_modules', 'vite', 'bin', 'vite.js'), 'build'], { cwd: path.join(repoRoot, workspace), stdio: 'ignore' });
}

beforeAll(async () => {
  build('console', 'index.html');
  build('widget', 'nadir-track.js');
  fs.mkdirSync(ARTIFACTS, { recursive: true });
  server = await startServer();
  browser = await launchChromium();
});
afterAll(async () => {
  for (const c of contexts) await c.close().catch(() => undefined);
  await browser?.close();
  await server?.stop();
});

async function newPage(): Promise<Page> {
  const ctx = await browser.newContext({ viewport: { width: 1280, height: 900 }, locale: 'en-GB', timezoneId: 'UTC' });
  contexts.push(ctx);
  const page = await ctx.newPage();
  page.setDefaultTimeout(15_000);
  return page;
}

async function signIn(page: Page, email: string, password: string) {
  await signInThroughForm(page, server.url, { email, password });
}

async function signInAs(role: Role): Promise<{ page: Page; org: string }> {
  const page = await newPage();
  const u = server.credentials.users.find((x) => x.role === role)!;
  await signIn(page, u.email, u.password);
  return { page, org: server.credentials.organizationId };
}

async function shot(page: Page, name: string) {
  await page.screenshot({ path: path.join(ARTIFACTS, `${name}.png`), fullPage: true }).catch(() => undefined);
}

/** TLE line checksum: digits count their value, a minus sign counts 1, modulo 10 (common practice). */
function withChecksum(line: string): string {
  const body = line.slice(0, 68);
  let sum = 0;
  for (const ch of body) sum += ch === '-' ? 1 : /\d/.test(ch) ? Number(ch) : 0;
  return body + String(sum % 10);
}

/** A same-origin GET from the page, as a web page would send it. */
function pageGet(page: Page, url: string) {
  return page.evaluate(async (u) => {
    const r = await fetch(u);
    let code = '';
    try {
      code = ((await r.json()) as { code?: string }).code ?? '';
    } catch {
      // not JSON
    }
    return { status: r.status, code };
  }, url);
}

describe('the console against the real server', () => {
  it('takes a new person from sign-up through the e-mailed link to a verified sign-in', async () => {
    const page = await newPage();
    const email = `e2e.${Date.now()}@ostwick.example.org`;
    const password = 'lantern-orbit-4471';
    await page.goto(`${server.url}/sign-up`);
    await page.getByLabel('Your name').fill('Rosa Vennik');
    await page.getByLabel('E-mail').fill(email);
    await page.getByLabel('Organization').fill('Vennik Outreach Lab');
    // A common password is refused, and the form says why beside the field.
    await page.getByLabel('Password').fill('password1234');
    await page.getByRole('button', { name: 'Create account' }).click();
    await page.locator('p.error', { hasText: 'too easy to guess' }).waitFor();
    await shot(page, 'sign-up-weak-password');
    await page.getByLabel('Password').fill(password);
    await page.getByRole('button', { name: 'Create account' }).click();
    await page.getByRole('heading', { name: 'Check your inbox' }).waitFor();

    // Signing in before the address is confirmed is refused, with a way to get a new link.
    await page.getByRole('link', { name: 'Go to sign-in' }).click();
    await page.getByLabel('Password').fill(password);
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await page.getByText('Please confirm your e-mail address first.').waitFor();

    const box = (await (await fetch(`${server.url}/dev/mailbox.json`)).json()) as { messages: { to: string | string[]; links: string[] }[] };
    const mail = box.messages.filter((m) => String(m.to).includes(email)).at(-1);
    const link = mail?.links.find((l) => l.includes('/verify-email?token='));
    expect(link, 'the verification e-mail holds a link').toBeTruthy();
    await page.goto(link!.replace(/^https?:\/\/[^/]+/, server.url));
    await page.getByText(/is confirmed/).waitFor();
    await page.getByRole('link', { name: 'Sign in' }).click();
    await page.getByLabel('Password').fill(password);
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await page.waitForURL(/\/o\/[^/]+\/satellites$/);
    await page.getByRole('heading', { name: 'No satellites yet' }).waitFor();
    expect(await page.getByRole('button', { name: /Vennik Outreach Lab/ }).count()).toBe(1);
    await shot(page, 'signed-up-and-in');
  });

  it('lets an invited person sign up and be in the organization at once: no e-mail to wait for, no second sign-in', async () => {
    const { page, org } = await signInAs('admin');
    const email = `invited.${Date.now()}@ostwick.example.org`;
    const invited = await page.evaluate(
      async ({ o, address }) => {
        const { csrfToken } = (await (await fetch('/api/session')).json()) as { csrfToken: string };
        const r = await fetch(`/api/orgs/${o}/invitations`, {
          method: 'POST',
          headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken },
          body: JSON.stringify({ email: address, role: 'editor' }),
        });
        return r.status;
      },
      { o: org, address: email },
    );
    expect(invited).toBe(201);
    const box = (await (await fetch(`${server.url}/dev/mailbox.json`)).json()) as { messages: { to: string; links: string[] }[] };
    const link = box.messages.filter((m) => String(m.to).includes(email)).at(-1)?.links.find((l) => l.includes('/invite/'));
    expect(link, 'the invitation e-mail holds a link').toBeTruthy();
    const before = box.messages.length;

    const guest = await newPage();
    await guest.goto(link!.replace(/^https?:\/\/[^/]+/, server.url));
    await guest.getByRole('link', { name: 'Create an account' }).click();
    await guest.getByLabel('Your name').fill('Noor Achterberg');
    await guest.getByLabel('Password').fill('lantern-orbit-4471');
    await guest.getByRole('button', { name: 'Create account' }).click();
    // Signed in by the sign-up: straight into the organization's satellites, its navigation shown.
    await guest.waitForURL(new RegExp(`/o/${org}/satellites$`));
    await guest.getByRole('navigation', { name: 'Console' }).getByRole('link', { name: 'Keys' }).waitFor();
    expect(await guest.getByText(/Signed in as/).textContent()).toContain('Noor Achterberg');
    expect(await guest.getByText(/inbox|confirmation link/i).count()).toBe(0);
    await shot(guest, 'invited-sign-up-done');
    const after = (await (await fetch(`${server.url}/dev/mailbox.json`)).json()) as { messages: unknown[] };
    expect(after.messages.length).toBe(before);
    // A reload keeps the session: it is a real one, not a page state.
    await guest.reload();
    await guest.waitForURL(new RegExp(`/o/${org}/satellites$`));
  });

  it('registers a satellite and reports the one bad entry of an uploaded file by line and column', async () => {
    const { page, org } = await signInAs('editor');
    // A real element set to start from: the demo satellite's, exported as TLE, renumbered.
    const demo = server.credentials.satellites[0]!;
    const info = await page.request.get(`${server.url}/api/orgs/${org}/satellites/${demo.id}`);
    const current = ((await info.json()) as { current: { id: string } }).current;
    const tle = await (await page.request.get(`${server.url}/api/orgs/${org}/element-sets/${current.id}/export?format=tle`)).text();
    const [l1, l2] = tle
      .split(/\r?\n/)
      .filter((l) => /^[12] /.test(l))
      .map((l) => l.padEnd(69));
    const good1 = withChecksum(`1 99977${l1!.slice(7)}`);
    const good2 = withChecksum(`2 99977${l2!.slice(7)}`);
    const bad2 = good2.slice(0, 68) + String((Number(good2[68]) + 1) % 10);
    const file = ['E2E GOOD', good1, good2, 'E2E BAD', good1, bad2, ''].join('\n');

    await page.getByRole('button', { name: 'Register a satellite' }).first().click();
    await page.getByLabel('Name', { exact: true }).fill('Ostwick E2E Probe');
    await page.getByRole('button', { name: 'Register satellite' }).click();
    await page.waitForURL(/\/satellites\/[^/]+$/);
    await page.getByRole('tab', { name: 'Upload files' }).click();
    await page.locator('input[type="file"]').setInputFiles({ name: 'probe.tle', mimeType: 'text/plain', buffer: Buffer.from(file) });
    await page.getByText('probe.tle').first().waitFor();
    await page.getByRole('button', { name: 'Check and save' }).click();
    const report = page.locator('section.report');
    await report.getByText(/1\s+element set accepted,\s+1\s+rejected/).waitFor();
    await shot(page, 'upload-report');
    const rows = report.locator('tbody tr');
    expect(await rows.count()).toBe(2);
    expect(await rows.nth(0).textContent()).toContain('Accepted');
    const bad = (await rows.nth(1).textContent()) ?? '';
    expect(bad).toContain('Rejected');
    // One place and a readable field name, not "checksum: line 6 column 69: ...".
    expect(bad).toMatch(/Line 6, column 69 — Checksum: expected \d, found \d/);
    expect(bad).not.toMatch(/checksum:|line 6 column 69/);
    // The file went: the list is empty and the button cannot send it a second time.
    expect(await page.getByRole('list', { name: 'Files to send' }).count()).toBe(0);
    expect(await page.getByRole('button', { name: 'Check and save' }).isDisabled()).toBe(true);
    // The accepted set is now current: the orbit is derived and shown.
    await page.getByRole('heading', { name: 'Derived orbit' }).waitFor();
  });

  it('replaces a browser key with a newly named one; the old key retires when quiet and the list says which replaced which', async () => {
    const { page, org } = await signInAs('admin');
    await page.goto(`${server.url}/o/${org}/keys`);
    await page.getByRole('button', { name: 'Create a key' }).first().click();
    // Create key says what is missing while it cannot be pressed.
    const create = page.getByRole('button', { name: 'Create key' });
    expect(await create.isDisabled()).toBe(true);
    await page.getByText('Name the key first.').waitFor();
    await page.getByLabel('Name', { exact: true }).fill('E2E site');
    // No origin is filled in for the person: the console's own origin is not where pages live.
    expect(await page.getByLabel('Allowed origins').inputValue()).toBe('');
    await page.getByLabel('Allowed origins').fill(server.url);
    await create.click();
    const dialog = page.getByRole('dialog', { name: 'Your new key' });
    const first = ((await dialog.locator('pre').textContent()) ?? '').trim();
    expect(first).toMatch(/^nlb_/);
    await dialog.getByRole('button', { name: 'I have stored the key' }).click();
    await dialog.waitFor({ state: 'detached' });
    expect(await page.content()).not.toContain(first);
    expect((await pageGet(page, `/v1/satellites?key=${first}`)).status).toBe(200);
    await page.reload();

    const row = page.locator('tr', { hasText: 'E2E site' });
    await row.getByRole('button', { name: /Manage/ }).click();
    await page.getByRole('menuitem', { name: 'Replace with a new key…' }).click();
    const rotate = page.getByRole('dialog', { name: /Replace “E2E site”/ });
    await rotate.getByText(/Used by no embed; seen from this origin in the last 7 days/).waitFor();
    await rotate.getByText(new RegExp(`${server.url.replace(/[.:/]/g, '\\$&')}: 1 request`)).waitFor();
    // The new key needs a name of its own: the old name twice is refused, and the button says so.
    const name = rotate.getByLabel('Name of the new key');
    await name.fill('E2E site');
    expect(await rotate.getByRole('button', { name: 'Replace key' }).isDisabled()).toBe(true);
    await rotate.getByText('The new key needs a name of its own.').waitFor();
    await name.fill('E2E site, 2027');
    await rotate.getByLabel('Quiet spell', { exact: true }).fill('1');
    await rotate.getByLabel('Unit of the quiet spell').selectOption('hours');
    await rotate.getByText(/retires 1 hour after its last request/).waitFor();
    await shot(page, 'key-replace-dialog');
    await rotate.getByRole('button', { name: 'Replace key' }).click();
    const replaced = page.getByRole('dialog', { name: 'Key replaced' });
    const second = ((await replaced.locator('pre').textContent()) ?? '').trim();
    expect(second).toMatch(/^nlb_/);
    expect(second).not.toBe(first);
    await replaced.getByRole('heading', { name: '“E2E site, 2027” replaces “E2E site”' }).waitFor();
    await replaced.getByText(/retires when quiet: after 1 hour without use/).waitFor();
    await shot(page, 'key-replaced');
    await replaced.getByRole('button', { name: 'I have stored the key' }).click();

    // Both keys answer while the old one is still called; the list names both and the old one's callers.
    expect((await pageGet(page, `/v1/satellites?key=${second}`)).status).toBe(200);
    expect((await pageGet(page, `/v1/satellites?key=${first}`)).status).toBe(200);
    await page.reload();
    const oldRow = page.locator('tr', { hasText: 'Retiring when quiet' }).filter({ hasText: 'Replaced by “E2E site, 2027”' });
    await oldRow.waitFor();
    await oldRow.getByText(/Retires after 1 hour without use/).waitFor();
    await oldRow.getByText(`Still called from: ${server.url}`).waitFor();
    expect(await oldRow.getByRole('cell', { name: /just now|min ago/ }).count()).toBeGreaterThan(0);
    await page.locator('tr', { hasText: 'Replaces “E2E site”' }).filter({ hasText: 'E2E site, 2027' }).waitFor();
    await shot(page, 'key-list-retiring');

    // A quiet spell of zero retires the old key at once: it is then refused.
    await page.locator('tr', { hasText: 'E2E site, 2027' }).filter({ hasText: 'Active' }).getByRole('button', { name: /Manage/ }).click();
    await page.getByRole('menuitem', { name: 'Replace with a new key…' }).click();
    const again = page.getByRole('dialog', { name: /Replace “E2E site, 2027”/ });
    await again.getByLabel('Name of the new key').fill('E2E site, 2028');
    await again.getByLabel('Quiet spell', { exact: true }).fill('0');
    await again.getByText('The old key retires the moment you replace it.').waitFor();
    await again.getByRole('button', { name: 'Replace key' }).click();
    const third = ((await page.getByRole('dialog', { name: 'Key replaced' }).locator('pre').textContent()) ?? '').trim();
    await page.getByRole('button', { name: 'I have stored the key' }).click();
    expect((await pageGet(page, `/v1/satellites?key=${third}`)).status).toBe(200);
    const old = await pageGet(page, `/v1/satellites?key=${second}`);
    expect(old).toEqual({ status: 401, code: 'key-rotated' });
  });

  it('keeps an embed drawing, hosted and by script, after the key it used is replaced and retired', async () => {
    const { page, org } = await signInAs('admin');
    // A key and an embed of their own, made through the console API as the console makes them.
    const made = await page.evaluate(
      async ({ o, origin, sat }) => {
        const { csrfToken } = (await (await fetch('/api/session')).json()) as { csrfToken: string };
        const post = async (url: string, body: unknown) =>
          (await fetch(url, { method: 'POST', headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken }, body: JSON.stringify(body) })).json() as Promise<Record<string, { id: string }>>;
        const key = await post(`/api/orgs/${o}/keys`, { kind: 'browser', name: 'E2E embed key', origins: [origin] });
        const embed = await post(`/api/orgs/${o}/embeds`, { name: 'E2E follows', satelliteIds: [sat], apiKeyId: key.key!.id, options: { layers: ['footprint'] } });
        return { keyId: key.key!.id, embedId: embed.embed!.id };
      },
      { o: org, origin: server.url, sat: server.credentials.satellites[0]!.id },
    );
    const drawn = (p: Page) => p.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('.mark'), undefined, { timeout: 20_000 });
    const hosted = await newPage();
    await hosted.goto(`${server.url}/embed/${made.embedId}`);
    await drawn(hosted);
    const host = await newPage();
    const snippet = `<script type="module" src="${server.url}/widget/nadir-track.js"></script>\n<nadir-track embed="${made.embedId}" api-base="${server.url}"></nadir-track>`;
    await host.route(`${server.url}/e2e-follow-page.html`, (route) => route.fulfill({ contentType: 'text/html', body: `<!doctype html><title>Host</title>${snippet}` }));
    await host.goto(`${server.url}/e2e-follow-page.html`);
    await drawn(host);

    // Replace the key with a quiet spell of zero: the old key retires at once.
    await page.goto(`${server.url}/o/${org}/keys`);
    await page.locator('tr', { hasText: 'E2E embed key' }).getByRole('button', { name: /Manage/ }).click();
    await page.getByRole('menuitem', { name: 'Replace with a new key…' }).click();
    const rotate = page.getByRole('dialog', { name: /Replace “E2E embed key”/ });
    await rotate.getByText(/Used by 1 embed;/).waitFor();
    await rotate.getByText(/These embeds switch to the new key at once/).waitFor();
    await rotate.getByText('E2E follows').waitFor();
    await rotate.getByLabel('Name of the new key').fill('E2E embed key, new');
    await rotate.getByLabel('Quiet spell', { exact: true }).fill('0');
    await rotate.getByRole('button', { name: 'Replace key' }).click();
    await page.getByRole('dialog', { name: 'Key replaced' }).getByText('1 embed reads with the new key from now on; their pages need no change.').waitFor();
    await page.getByRole('button', { name: 'I have stored the key' }).click();
    await page.locator('tr', { hasText: 'E2E embed key, new' }).getByText('Used by 1 embed').waitFor();

    // Both pages, loaded afresh, draw again; the embed list shows the embed on the new key.
    for (const p of [hosted, host]) {
      const refused: number[] = [];
      p.on('response', (r) => {
        if (r.url().includes('/v1/') && r.status() >= 400) refused.push(r.status());
      });
      await p.reload();
      await drawn(p);
      expect(refused).toEqual([]);
    }
    await shot(hosted, 'embed-after-key-retired');
    await page.goto(`${server.url}/o/${org}/embeds`);
    const listed = page.locator('tr, li, article', { hasText: 'E2E follows' }).first();
    await listed.waitFor();
    expect(await listed.textContent()).not.toMatch(/expired|retired/i);
  });

  it('lets the last key row’s Manage menu be used with four keys or more, at 1280 and 390 px', async () => {
    const { page, org } = await signInAs('admin');
    await page.evaluate(async (o) => {
      const { csrfToken } = (await (await fetch('/api/session')).json()) as { csrfToken: string };
      for (let i = 1; i <= 4; i++) {
        await fetch(`/api/orgs/${o}/keys`, { method: 'POST', headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken }, body: JSON.stringify({ kind: 'server', name: `E2E menu key ${i}` }) });
      }
    }, org);
    for (const width of [1280, 390]) {
      await page.setViewportSize({ width, height: width === 390 ? 844 : 900 });
      await page.goto(`${server.url}/o/${org}/keys`);
      await page.locator('tr', { hasText: 'E2E menu key 1' }).waitFor();
      const manage = page.getByRole('button', { name: /Manage/ });
      expect(await manage.count()).toBeGreaterThanOrEqual(4);
      const last = manage.last();
      await last.scrollIntoViewIfNeeded();
      await last.click();
      const revoke = page.getByRole('menuitem', { name: 'Revoke…' });
      await revoke.waitFor();
      // Nothing lies over the item: the browser would click it where a person would.
      const box = (await revoke.boundingBox())!;
      const hit = await page.evaluate(({ x, y }) => document.elementFromPoint(x, y)?.textContent ?? '', { x: box.x + box.width / 2, y: box.y + box.height / 2 });
      expect(hit).toContain('Revoke');
      await shot(page, `keys-menu-open-${width}`);
      await revoke.click();
      await page.getByRole('dialog', { name: /^Revoke “/ }).waitFor();
      await page.getByRole('dialog', { name: /^Revoke “/ }).getByText(/^Used by (no embed|\d+ embeds?);/).waitFor();
      await page.getByRole('button', { name: 'Cancel' }).click();
    }
  });

  it('deletes a revoked key through its Manage menu and the dialog at 1280 px, and will not delete one an embed reads with', async () => {
    const { page, org } = await signInAs('admin');
    const made = await page.evaluate(
      async ({ o, origin, sat }) => {
        const { csrfToken } = (await (await fetch('/api/session')).json()) as { csrfToken: string };
        const send = async (method: string, url: string, body?: unknown) =>
          (await fetch(url, { method, headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken }, body: JSON.stringify(body ?? {}) })).json() as Promise<Record<string, { id: string }> & { secret: string }>;
        const gone = await send('POST', `/api/orgs/${o}/keys`, { kind: 'browser', name: 'E2E leaflet page', origins: [origin] });
        // one use from this page, so the dialog has a last use and an origin to show
        await fetch(`/v1/satellites?key=${gone.secret}`);
        await send('POST', `/api/orgs/${o}/keys/${gone.key!.id}/revoke`);
        const kept = await send('POST', `/api/orgs/${o}/keys`, { kind: 'browser', name: 'E2E kept for an embed', origins: [origin] });
        await send('POST', `/api/orgs/${o}/embeds`, { name: 'E2E lobby wall', satelliteIds: [sat], apiKeyId: kept.key!.id, options: {} });
        return { goneId: gone.key!.id, goneSecret: gone.secret };
      },
      { o: org, origin: server.url, sat: server.credentials.satellites[0]!.id },
    );
    await page.goto(`${server.url}/o/${org}/keys`);

    // a key an embed reads with: the dialog names the embed and the button says why it waits
    await page.locator('tr', { hasText: 'E2E kept for an embed' }).getByRole('button', { name: /Manage/ }).click();
    await page.getByRole('menuitem', { name: 'Delete…' }).click();
    const blocked = page.getByRole('dialog', { name: 'Delete “E2E kept for an embed”?' });
    await blocked.getByText('An embed reads with this key.').waitFor();
    await blocked.getByRole('link', { name: 'E2E lobby wall' }).waitFor();
    await blocked.getByText(/Used by 1 embed; not called in the last 7 days/).waitFor();
    await blocked.getByText('Last used: never.').waitFor();
    expect(await blocked.getByRole('button', { name: 'Delete key' }).isDisabled()).toBe(true);
    await blocked.getByText('Give that embed another key first.').waitFor();
    await shot(page, 'key-delete-blocked-1280');
    await blocked.getByRole('button', { name: 'Cancel' }).click();
    await blocked.waitFor({ state: 'detached' });

    // a key that still works and no embed reads with: its name must be typed
    await page.locator('tr', { hasText: 'Demo flight-dynamics pipeline' }).getByRole('button', { name: /Manage/ }).click();
    await page.getByRole('menuitem', { name: 'Delete…' }).click();
    const working = page.getByRole('dialog', { name: 'Delete “Demo flight-dynamics pipeline”?' });
    await working.getByText(/still works\. Deleting it stops it at once/).waitFor();
    expect(await working.getByRole('button', { name: 'Delete key' }).isDisabled()).toBe(true);
    await working.getByText('Type the key’s name to confirm.').waitFor();
    await working.getByLabel(/Type .* to confirm/).fill('Demo flight-dynamics pipeline');
    expect(await working.getByRole('button', { name: 'Delete key' }).isDisabled()).toBe(false);
    await shot(page, 'key-delete-working-1280');
    await working.getByRole('button', { name: 'Cancel' }).click();
    await working.waitFor({ state: 'detached' });

    // the revoked key, shown with the others that no longer answer
    await page.getByRole('button', { name: /^Show \d+ retired, revoked or expired/ }).click();
    const row = page.locator('tr', { hasText: 'E2E leaflet page' });
    await row.getByText('Revoked').waitFor();
    await row.getByRole('button', { name: /Manage/ }).click();
    expect(await page.getByRole('menuitem', { name: 'Revoke…' }).count()).toBe(0);
    await page.getByRole('menuitem', { name: 'Delete…' }).click();
    const dialog = page.getByRole('dialog', { name: 'Delete “E2E leaflet page”?' });
    await dialog.getByText(/was revoked on .* and no longer answers/).waitFor();
    await dialog.getByText(/stay counted in this organization’s usage under its name/).waitFor();
    await dialog.getByText(/Last used: (just now|\d+ min ago)/).waitFor();
    await dialog.getByText(/Used by no embed; seen from this origin in the last 7 days/).waitFor();
    await dialog.getByText('It was called from these origins (their requests are refused already):').waitFor();
    await dialog.getByText(new RegExp(`${server.url.replace(/[.:/]/g, '\\$&')}: 1 request`)).waitFor();
    for (const [width, scheme] of [[1280, 'light'], [1280, 'dark'], [390, 'dark'], [390, 'light']] as const) {
      await page.setViewportSize({ width, height: width === 390 ? 844 : 900 });
      await page.emulateMedia({ colorScheme: scheme });
      await shot(page, `key-delete-dialog-${width}-${scheme}`);
    }
    await page.setViewportSize({ width: 1280, height: 900 });
    await page.emulateMedia({ colorScheme: 'light' });
    await dialog.getByRole('button', { name: 'Delete key' }).click();
    await dialog.waitFor({ state: 'detached' });
    await page.getByText('Key deleted. Its past requests stay in the usage reports.').waitFor();
    expect(await page.locator('tr', { hasText: 'E2E leaflet page' }).count()).toBe(0);
    await page.reload();
    await page.locator('tr', { hasText: 'E2E kept for an embed' }).waitFor();
    const toggle = page.getByRole('button', { name: /^Show \d+ retired, revoked or expired/ });
    if (await toggle.count()) await toggle.click();
    expect(await page.locator('tr', { hasText: 'E2E leaflet page' }).count()).toBe(0);
    expect(await pageGet(page, `/v1/satellites?key=${made.goneSecret}`)).toEqual({ status: 401, code: 'invalid-key' });
    await page.goto(`${server.url}/o/${org}/activity`);
    await page.getByText(/deleted a key/).first().waitFor();
  });

  it('refuses an invalid observer in the embed builder and says why Save cannot be pressed', async () => {
    const { page, org } = await signInAs('editor');
    await page.goto(`${server.url}/o/${org}/embeds/new`);
    const save = page.getByRole('button', { name: 'Save embed' });
    await page.getByText('Name the embed first.').waitFor();
    expect(await save.isDisabled()).toBe(true);
    await page.getByLabel('Name', { exact: true }).fill('E2E observer');
    await page.getByRole('checkbox', { name: /Next passes over the observer/ }).check();
    await page.getByText('The passes layer needs an observer, or turn passes off.').waitFor();
    expect(await save.isDisabled()).toBe(true);
    await page.getByRole('radio', { name: 'A fixed place' }).check();
    await page.getByLabel('Latitude (°, north +)').fill('123');
    await page.getByLabel('Longitude (°, east +)').fill('0');
    await page.getByText(/Latitude is a number from -90 to 90 \(north positive\); “123” is not\./).first().waitFor();
    expect(await save.isDisabled()).toBe(true);
    await page.getByLabel('Latitude (°, north +)').fill('52.1');
    await page.getByLabel('Longitude (°, east +)').fill('abc');
    await page.getByText(/“abc” is not/).first().waitFor();
    expect(await save.isDisabled()).toBe(true);
    await shot(page, 'builder-invalid-observer');
    await page.getByLabel('Longitude (°, east +)').fill('4.3');
    await expect.poll(() => save.isDisabled()).toBe(false);
    await save.click();
    await page.waitForURL(/\/embeds\/(?!new)[^/]+$/);
    const id = page.url().split('/').at(-1)!;
    const saved = (await (await page.request.get(`${server.url}/api/orgs/${org}/embeds`)).json()) as { embeds: { id: string; options: { observer: string } }[] };
    expect(saved.embeds.find((e) => e.id === id)?.options.observer).toBe('52.1,4.3');
  });

  it('builds an embed whose snippet then works in a separate page', async () => {
    const { page, org } = await signInAs('editor');
    await page.goto(`${server.url}/o/${org}/embeds/new`);
    await page.getByLabel('Name', { exact: true }).fill('E2E lobby map');
    await page.getByRole('button', { name: 'Save embed' }).click();
    await page.waitForURL(/\/embeds\/(?!new)[^/]+$/);
    const id = page.url().split('/').at(-1)!;
    const snippet = ((await page.getByLabel('Script snippet').textContent()) ?? '').trim();
    expect(snippet).toContain(`embed="${id}"`);
    expect(snippet).toContain('/widget/nadir-track.js');
    await shot(page, 'embed-saved');

    // A host page on an origin the demo browser key lists (this server's), holding only the snippet.
    const host = await newPage();
    await host.route(`${server.url}/e2e-host-page.html`, (route) =>
      route.fulfill({ contentType: 'text/html', body: `<!doctype html><title>Host</title><h1>Our mission</h1>\n${snippet}\n` }),
    );
    await host.goto(`${server.url}/e2e-host-page.html`);
    await host.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('.mark'), undefined, { timeout: 20_000 });
    await shot(host, 'embed-host-page');

    // The hosted iframe form, too.
    const framed = await newPage();
    await framed.goto(`${server.url}/embed/${id}`);
    await framed.waitForFunction(() => !!document.querySelector('nadir-track')?.shadowRoot?.querySelector('.mark'), undefined, { timeout: 20_000 });
  });

  it('previews a satellite live for a viewer, read with the console preview token and no embed', async () => {
    const { page, org } = await signInAs('viewer');
    const reads: string[] = [];
    const credentials: string[] = [];
    page.on('request', (r) => {
      if (!r.url().includes('/v1/')) return;
      reads.push(r.url());
      credentials.push(new URL(r.url()).searchParams.get('key') ?? (r.headers().authorization ?? '').replace(/^Bearer /, ''));
    });
    const sat = server.credentials.satellites.find((s) => s.name === 'Orrery-1') ?? server.credentials.satellites[0]!;
    await page.goto(`${server.url}/o/${org}/satellites/${sat.id}`);
    await page.getByRole('heading', { name: 'Derived orbit' }).waitFor();
    await page.waitForFunction(() => {
      const root = document.querySelector('nadir-track')?.shadowRoot;
      return !!root?.querySelector('.mark') && (root.querySelector('path.future')?.getAttribute('d') ?? '').length > 50;
    }, undefined, { timeout: 20_000 });
    await shot(page, 'viewer-satellite-preview');
    const trackReads = reads.filter((u) => u.includes(`/v1/satellites/${sat.id}/track`));
    expect(trackReads.length).toBeGreaterThan(0);
    // Every read (the widget's with ?key=, the decay check's with a Bearer header) uses the preview token.
    for (const c of credentials) expect(c).toMatch(/^nlp_/);
    for (const u of reads) expect(new URL(u).searchParams.has('embed')).toBe(false);
    // The same token is refused from a page of another origin.
    const token = new URL(trackReads[0]!).searchParams.get('key')!;
    const elsewhere = await fetch(`${server.url}/v1/satellites/${sat.id}?key=${encodeURIComponent(token)}`, { headers: { Origin: 'https://pages.example.org' } });
    expect(elsewhere.status).toBe(403);
  });

  it('previews an unsaved embed configuration in the builder before anything is saved', async () => {
    const { page, org } = await signInAs('editor');
    const before = (await (await page.request.get(`${server.url}/api/orgs/${org}/embeds`)).json()) as { embeds: unknown[] };
    await page.goto(`${server.url}/o/${org}/embeds/new`);
    const chosen = server.credentials.satellites.find((s) => s.name === 'Tessera GEO')!;
    await page.getByRole('checkbox', { name: 'Tessera GEO' }).waitFor();
    const boxes = page.getByRole('group', { name: 'Satellites', exact: true }).getByRole('checkbox');
    for (let i = 0; i < (await boxes.count()); i++) await boxes.nth(i).uncheck();
    await page.getByRole('checkbox', { name: 'Tessera GEO' }).check();
    await page.getByRole('radio', { name: /Globe/ }).click();
    await page.waitForFunction(
      (id) => {
        const el = document.querySelector('nadir-track');
        const root = el?.shadowRoot;
        return el?.getAttribute('satellites') === id && el.getAttribute('projection') === 'globe' && !!root?.querySelector('.mark');
      },
      chosen.id,
      { timeout: 20_000 },
    );
    expect(await page.locator('nadir-track').getAttribute('api-key')).toMatch(/^nlp_/);
    expect(page.url()).toMatch(/\/embeds\/new$/);
    await shot(page, 'builder-unsaved-preview');
    const after = (await (await page.request.get(`${server.url}/api/orgs/${org}/embeds`)).json()) as { embeds: unknown[] };
    expect(after.embeds.length).toBe(before.embeds.length);
  });

  it('shows a satellite whose set SGP4 has carried below the atmosphere as decayed, on its page and in the list', async () => {
    const { page, org } = await signInAs('editor');
    // Heavy drag (B* 0.1) at 15.5 rev/day, epoch 20 March 2026: down within 60 days (the engine's
    // own decay case in shared/src/orbit/propagate.spec.ts), well inside the 365-day span.
    const l1 = withChecksum('1 90001U 26001A   26079.00000000  .00000000  00000-0  10000-1 0  999');
    const l2 = withChecksum('2 90001  51.6000  10.0000 0010000   0.0000   0.0000 15.50000000    1');
    await page.getByRole('button', { name: 'Register a satellite' }).first().click();
    await page.getByLabel('Name', { exact: true }).fill('Ostwick Faller');
    await page.getByLabel('First element sets (optional)').fill(['OSTWICK FALLER', l1, l2].join('\n'));
    await page.getByRole('button', { name: 'Register satellite' }).click();
    await page.waitForURL(/\/satellites\/[^/]+$/);
    await page.locator('header .badge', { hasText: 'Decayed' }).waitFor();
    await page.getByText(/SGP4 says Ostwick Faller has decayed by now/).waitFor();
    await shot(page, 'decayed-satellite');
    await page.goto(`${server.url}/o/${org}/satellites`);
    const row = page.locator('tr', { hasText: 'Ostwick Faller' });
    await row.locator('.badge', { hasText: 'Decayed' }).waitFor();
    expect(await page.locator('tr', { hasText: 'Orrery-1' }).locator('.badge', { hasText: 'Decayed' }).count()).toBe(0);
    await page.locator('.summary', { hasText: /1 decayed/ }).waitFor();
  });

  it('offers a viewer no key or member actions, and the server refuses them anyway', async () => {
    const { page, org } = await signInAs('viewer');
    await page.goto(`${server.url}/o/${org}/keys`);
    await page.getByText(/can see keys but not change them/).waitFor();
    expect(await page.getByRole('button', { name: 'Create a key' }).count()).toBe(0);
    expect(await page.getByRole('button', { name: /Manage/ }).count()).toBe(0);
    await page.goto(`${server.url}/o/${org}/members`);
    await page.getByRole('heading', { name: 'What each role may do' }).waitFor();
    expect(await page.getByRole('button', { name: 'Invite a member' }).count()).toBe(0);
    expect(await page.locator('select').count()).toBe(0);
    expect(await page.getByRole('button', { name: /^Remove/ }).count()).toBe(0);
    await shot(page, 'viewer-members');

    // The embed builder is for roles that may edit embeds: a viewer lands on the list, told why.
    await page.goto(`${server.url}/o/${org}/embeds/new`);
    await page.waitForURL(new RegExp(`/o/${org}/embeds$`));
    await page.getByText(/can look at embeds but not build them/).waitFor();

    // Trying anyway, with a valid session and CSRF token: 403 forbidden from the server.
    const tried = await page.evaluate(async (o) => {
      const { csrfToken } = (await (await fetch('/api/session')).json()) as { csrfToken: string };
      const post = (url: string, body: unknown) =>
        fetch(url, { method: 'POST', headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken }, body: JSON.stringify(body) }).then(async (r) => ({
          status: r.status,
          code: ((await r.json()) as { code?: string }).code,
        }));
      return {
        key: await post(`/api/orgs/${o}/keys`, { kind: 'browser', name: 'Sneaky', origins: ['https://example.org'] }),
        invite: await post(`/api/orgs/${o}/invitations`, { email: 'someone@example.org', role: 'admin' }),
      };
    }, org);
    expect(tried.key).toEqual({ status: 403, code: 'forbidden' });
    expect(tried.invite).toEqual({ status: 403, code: 'forbidden' });
  });
});
