import { createPinia, setActivePinia } from 'pinia';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { createMemoryHistory } from 'vue-router';
import { useNoticesStore } from '../stores/notices.ts';
import { useOrgStore } from '../stores/org.ts';
import { mockFetch } from '../testing/fetch-mock.ts';
import { session } from '../testing/fixtures.ts';
import { createAppRouter, safeNext } from './index.ts';

afterEach(() => {
  vi.unstubAllGlobals();
});

describe('the return path after sign-in', () => {
  it('follows paths inside the console', () => {
    expect(safeNext('/o/org1/keys?x=1')).toBe('/o/org1/keys?x=1');
  });
  it('ignores other sites, protocol-relative and backslash tricks', () => {
    expect(safeNext('https://elsewhere.example/')).toBeNull();
    expect(safeNext('//elsewhere.example/')).toBeNull();
    expect(safeNext('/\\elsewhere.example')).toBeNull();
    expect(safeNext(['/a'])).toBeNull();
  });
});

describe('pages a role may not use', () => {
  it('sends a viewer from the new-embed page to the embed list, saying why, and lets an editor in', async () => {
    for (const [role, lands] of [
      ['viewer', '/o/org1/embeds'],
      ['editor', '/o/org1/embeds/new'],
    ] as const) {
      setActivePinia(createPinia());
      mockFetch([{ path: '/api/session', body: session(role) }]);
      const router = createAppRouter(createMemoryHistory());
      await router.push('/o/org1/embeds/new');
      expect(router.currentRoute.value.fullPath).toBe(lands);
      expect(useNoticesStore().notices.some((n) => /can look at embeds but not build them/.test(n.text))).toBe(role === 'viewer');
    }
  });
});

describe('pages outside an organization', () => {
  it('keeps the organization navigation on the profile page, opened directly', async () => {
    setActivePinia(createPinia());
    mockFetch([{ path: '/api/session', body: session('editor') }]);
    const router = createAppRouter(createMemoryHistory());
    await router.push('/profile');
    expect(router.currentRoute.value.name).toBe('profile');
    expect(useOrgStore().currentId).toBe('org1');
  });
});
