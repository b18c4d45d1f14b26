import { flushPromises } from '@vue/test-utils';
import { afterEach, describe, expect, it, vi } from 'vitest';
import type { Role } from '../api/types.ts';
import { useKeysStore } from '../stores/keys.ts';
import { mockFetch } from '../testing/fetch-mock.ts';
import { key, session } from '../testing/fixtures.ts';
import { mountAt } from '../testing/mount.ts';
import KeysPage from './KeysPage.vue';

afterEach(() => {
  vi.unstubAllGlobals();
  document.body.innerHTML = '';
});

const SECRET = 'nlb_Q2hvb3NlIGFuIG9yaWdpbmFsIGtleQ';

function serve(role: Role) {
  return mockFetch([
    { path: '/api/session', body: session(role) },
    { path: '/api/orgs/org1/keys', body: { keys: [key(), key({ id: 'k2', kind: 'server', name: 'Uploader', lastFour: 'c91Z', origins: [], scopes: ['read', 'element-sets:write'] })] } },
    {
      method: 'POST',
      path: '/api/orgs/org1/keys',
      status: 201,
      body: { key: key({ id: 'k3', name: 'Museum kiosk', lastFour: 'igIQ', origins: ['https://kiosk.kestrel.example'] }), secret: SECRET },
    },
  ]);
}

async function open(role: Role) {
  serve(role);
  return mountAt(KeysPage, '/o/org1/keys', { org: 'org1' });
}

describe('the keys page', () => {
  it('lists keys with kind, last four, origins, limit and state', async () => {
    const { wrapper } = await open('viewer');
    const text = wrapper.text();
    expect(text).toContain('Public website');
    expect(text).toContain('nlb_…x7Qa');
    expect(text).toContain('nls_…c91Z');
    expect(text).toContain('https://www.kestrel.example');
    expect(text).toContain('600/min');
    expect(text).toContain('Active');
    wrapper.unmount();
  });

  it('offers a viewer no way to create, replace, revoke or delete keys', async () => {
    const { wrapper } = await open('viewer');
    const buttons = wrapper.findAll('button').map((b) => b.text());
    expect(buttons.some((t) => /create a key/i.test(t))).toBe(false);
    expect(buttons.some((t) => /manage/i.test(t))).toBe(false);
    expect(wrapper.text()).toMatch(/can see keys but not change them/);
    wrapper.unmount();
  });

  it('offers an editor no key actions either', async () => {
    const { wrapper } = await open('editor');
    expect(wrapper.findAll('button').some((b) => /create a key|manage/i.test(b.text()))).toBe(false);
    wrapper.unmount();
  });

  it('offers an admin creation and per-key management', async () => {
    const { wrapper } = await open('admin');
    const buttons = wrapper.findAll('button').map((b) => b.text());
    expect(buttons.some((t) => /create a key/i.test(t))).toBe(true);
    expect(buttons.filter((t) => /^manage/i.test(t))).toHaveLength(2);
    wrapper.unmount();
  });

  it('shows the full text of a new key once, and never again after the dialog closes', async () => {
    const { wrapper } = await open('owner');
    await wrapper.findAll('button').find((b) => /create a key/i.test(b.text()))!.trigger('click');
    await flushPromises();
    const name = document.body.querySelector<HTMLInputElement>('input[type="text"][maxlength="200"]')!;
    name.value = 'Museum kiosk';
    name.dispatchEvent(new Event('input'));
    const origins = document.body.querySelector<HTMLTextAreaElement>('[role="dialog"] textarea')!;
    origins.value = 'https://kiosk.kestrel.example';
    origins.dispatchEvent(new Event('input'));
    await flushPromises();
    const submit = [...document.body.querySelectorAll<HTMLButtonElement>('button[type="submit"]')].find((b) => /create key/i.test(b.textContent ?? ''))!;
    submit.click();
    await flushPromises();

    expect(document.body.textContent).toContain(SECRET);
    expect(document.body.textContent).toMatch(/only time the full key is shown/);
    const secretCount = () => (document.body.textContent ?? '').split(SECRET).length - 1;
    expect(secretCount()).toBe(1);

    const done = [...document.body.querySelectorAll('button')].find((b) => /i have stored the key/i.test(b.textContent ?? ''))!;
    done.click();
    await flushPromises();
    expect(secretCount()).toBe(0);
    expect(useKeysStore().revealed).toBeNull();
    expect(wrapper.text()).toContain('Museum kiosk');
    expect(wrapper.text()).toContain('nlb_…igIQ');
    wrapper.unmount();
  });

  it('keeps the new key on screen when Escape is pressed before it was stored, and asks first', async () => {
    const { wrapper } = await open('admin');
    await wrapper.findAll('button').find((b) => /create a key/i.test(b.text()))!.trigger('click');
    await flushPromises();
    const name = document.body.querySelector<HTMLInputElement>('input[type="text"][maxlength="200"]')!;
    name.value = 'Museum kiosk';
    name.dispatchEvent(new Event('input'));
    const origins = document.body.querySelector<HTMLTextAreaElement>('[role="dialog"] textarea')!;
    origins.value = 'https://kiosk.kestrel.example';
    origins.dispatchEvent(new Event('input'));
    await flushPromises();
    [...document.body.querySelectorAll<HTMLButtonElement>('button[type="submit"]')].find((b) => /create key/i.test(b.textContent ?? ''))!.click();
    await flushPromises();
    expect(document.body.textContent).toContain(SECRET);

    const escape = () => (document.activeElement ?? document.body).dispatchEvent(new KeyboardEvent('keydown', { key: 'Escape', bubbles: true, cancelable: true }));
    const button = (text: RegExp) => [...document.body.querySelectorAll('button')].find((b) => text.test(b.textContent ?? ''));
    escape();
    await flushPromises();
    expect(document.body.textContent).toContain(SECRET);
    expect(useKeysStore().revealed).not.toBeNull();
    expect(document.body.textContent).toMatch(/You have not stored it yet — close anyway\?/);
    expect(document.activeElement?.textContent).toBe('Keep it open');

    button(/^keep it open$/i)!.click();
    await flushPromises();
    expect(document.body.textContent).not.toMatch(/close anyway/);
    expect(button(/i have stored the key/i)).toBeTruthy();

    escape();
    await flushPromises();
    button(/close without storing/i)!.click();
    await flushPromises();
    expect(document.body.textContent).not.toContain(SECRET);
    expect(useKeysStore().revealed).toBeNull();
    wrapper.unmount();
  });

  it('starts a new browser key with no origin, an example to follow, and asks for one before sending', async () => {
    const { wrapper } = await open('admin');
    const { calls } = serve('admin');
    await wrapper.findAll('button').find((b) => /create a key/i.test(b.text()))!.trigger('click');
    await flushPromises();
    const origins = document.body.querySelector<HTMLTextAreaElement>('[role="dialog"] textarea')!;
    expect(origins.value).toBe('');
    expect(origins.placeholder).toBe('https://www.example.org');
    const name = document.body.querySelector<HTMLInputElement>('input[type="text"][maxlength="200"]')!;
    name.value = 'Museum kiosk';
    name.dispatchEvent(new Event('input'));
    await flushPromises();
    [...document.body.querySelectorAll<HTMLButtonElement>('button[type="submit"]')].find((b) => /create key/i.test(b.textContent ?? ''))!.click();
    await flushPromises();
    expect(calls.some((c) => c.method === 'POST')).toBe(false);
    expect(document.body.textContent).toContain('Add at least one origin');
    expect(origins.getAttribute('aria-invalid')).toBe('true');
    wrapper.unmount();
  });
});

describe('deleting a key', () => {
  const revoked = key({ id: 'k4', name: 'Old leaflet page', lastFour: 'Rv0k', state: 'revoked', revokedAt: '2031-02-01T10:00:00Z', lastUsedAt: '2031-01-30T08:00:00Z' });
  const inUse = key({ id: 'k5', name: 'Lobby key', lastFour: 'Lb5y', use: { embeds: [{ id: 'emb1', name: 'Lobby wall' }, { id: 'emb2', name: 'Visitor guide' }], origins: [], originsSince: '2030-12-26' } });
  const unused = key({
    id: 'k6',
    name: 'Spare pipeline',
    kind: 'server',
    lastFour: 'Sp6e',
    origins: [],
    use: { embeds: [], origins: [{ origin: 'https://ops.kestrel.example', count: 12, lastDay: '2031-01-02' }], originsSince: '2030-12-26' },
  });

  async function page(keys = [revoked, inUse, unused]) {
    const fetched = mockFetch([
      { path: '/api/session', body: session('admin') },
      { path: '/api/orgs/org1/keys', body: { keys } },
      { method: 'DELETE', path: /\/api\/orgs\/org1\/keys\/k\d$/, status: 204 },
    ]);
    const mounted = await mountAt(KeysPage, '/o/org1/keys', { org: 'org1' });
    return { ...fetched, ...mounted };
  }
  const button = (text: RegExp) => [...document.body.querySelectorAll<HTMLButtonElement>('button')].find((b) => text.test(b.textContent ?? ''));
  async function openDelete(name: string) {
    const manage = [...document.body.querySelectorAll<HTMLButtonElement>('button')].find((b) => /^Manage/.test(b.textContent ?? '') && (b.textContent ?? '').includes(name))!;
    manage.click();
    await flushPromises();
    button(/^Delete…$/)!.click();
    await flushPromises();
    return document.body.querySelector<HTMLElement>('[role="dialog"]')!;
  }

  it('deletes a revoked key after saying what deletion does, and takes it off the list', async () => {
    const { wrapper, calls } = await page();
    button(/Show 1 retired, revoked or expired key/)!.click();
    await flushPromises();
    const dialog = await openDelete('Old leaflet page');
    expect(dialog.textContent).toContain('Delete “Old leaflet page”?');
    expect(dialog.textContent).toMatch(/was revoked on .*and no longer answers/);
    expect(dialog.textContent).toMatch(/stay counted in this organization’s usage under its name/);
    expect(dialog.textContent).toMatch(/Last used:/);
    expect(dialog.textContent).toMatch(/Used by no embed; not called in the last 7 days/);
    expect(dialog.querySelector('[data-confirm-name]')).toBeNull();
    const confirm = button(/^Delete key$/)!;
    expect(confirm.disabled).toBe(false);
    confirm.click();
    await flushPromises();
    const del = calls.find((c) => c.method === 'DELETE');
    expect(del?.url).toContain('/api/orgs/org1/keys/k4');
    expect(del?.headers['x-csrf-token']).toBe('csrf-1');
    expect(useKeysStore().keys.map((k) => k.id)).not.toContain('k4');
    expect(wrapper.text()).not.toContain('Old leaflet page');
    wrapper.unmount();
  });

  it('names the embeds that read with a key and will not delete it until they have another key', async () => {
    const { wrapper, calls } = await page();
    const dialog = await openDelete('Lobby key');
    expect(dialog.textContent).toMatch(/2 embeds read with this key/);
    expect(dialog.textContent).toContain('Lobby wall');
    expect(dialog.textContent).toContain('Visitor guide');
    expect(dialog.querySelector('a[href="/o/org1/embeds/emb1"]')).not.toBeNull();
    const confirm = button(/^Delete key$/)!;
    expect(confirm.disabled).toBe(true);
    expect(dialog.textContent).toContain('Give those embeds another key first.');
    confirm.click();
    await flushPromises();
    expect(calls.some((c) => c.method === 'DELETE')).toBe(false);
    wrapper.unmount();
  });

  it('asks for the name of a key that still works, and says where it was called from', async () => {
    const { wrapper, calls } = await page();
    const dialog = await openDelete('Spare pipeline');
    expect(dialog.textContent).toMatch(/still works\. Deleting it stops it at once/);
    expect(dialog.textContent).toContain('https://ops.kestrel.example: 12 requests');
    const confirm = button(/^Delete key$/)!;
    expect(confirm.disabled).toBe(true);
    expect(dialog.textContent).toContain('Type the key’s name to confirm.');
    const input = dialog.querySelector<HTMLInputElement>('[data-confirm-name]')!;
    input.value = 'Spare';
    input.dispatchEvent(new Event('input'));
    await flushPromises();
    expect(confirm.disabled).toBe(true);
    input.value = 'Spare pipeline';
    input.dispatchEvent(new Event('input'));
    await flushPromises();
    expect(confirm.disabled).toBe(false);
    confirm.click();
    await flushPromises();
    expect(calls.find((c) => c.method === 'DELETE')?.url).toContain('/keys/k6');
    wrapper.unmount();
  });
});
