import { flushPromises } from '@vue/test-utils';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { defineComponent, h } from 'vue';
import { api } from '../api/client.ts';
import { useSessionStore } from '../stores/session.ts';
import { mockFetch, problem } from '../testing/fetch-mock.ts';
import { session } from '../testing/fixtures.ts';
import { mountAt } from '../testing/mount.ts';
import { useAsync } from './useAsync.ts';

afterEach(() => vi.unstubAllGlobals());

/** A stand-in page that loads the keys through useAsync, as the real pages do. */
const Probe = defineComponent({
  setup() {
    const load = useAsync(() => api.keys('org1'));
    return { load };
  },
  render() {
    return h('div', [h('span', { class: 'loading' }, String(this.load.loading.value)), h('span', { class: 'message' }, this.load.message.value)]);
  },
});

describe('useAsync, the one place for loading, errors and an expired session', () => {
  it('sends someone whose session ended to sign-in with the way back', async () => {
    mockFetch([
      { path: '/api/session', body: session('viewer') },
      { path: '/api/orgs/org1/keys', ...problem(401, 'unauthenticated', 'Sign in to continue.') },
    ]);
    const { wrapper, router } = await mountAt(Probe, '/o/org1/keys?tab=1');
    const probe = wrapper.vm as unknown as { load: { run: () => Promise<unknown> } };
    await probe.load.run();
    await flushPromises();
    expect(router.currentRoute.value.name).toBe('sign-in');
    expect(router.currentRoute.value.query.next).toBe('/o/org1/keys?tab=1');
    const s = useSessionStore();
    expect(s.user).toBeNull();
    expect(s.expired).toBe(true);
    wrapper.unmount();
  });

  it('keeps other failures on the page as a readable message', async () => {
    mockFetch([
      { path: '/api/session', body: session('viewer') },
      { path: '/api/orgs/org1/keys', ...problem(403, 'forbidden', 'Viewers may not do that.') },
    ]);
    const { wrapper, router } = await mountAt(Probe, '/o/org1/keys');
    const probe = wrapper.vm as unknown as { load: { run: () => Promise<unknown> } };
    await expect(probe.load.run()).resolves.toBeUndefined();
    await flushPromises();
    expect(router.currentRoute.value.name).toBe('keys');
    expect(wrapper.find('.message').text()).toBe('Viewers may not do that.');
    expect(wrapper.find('.loading').text()).toBe('false');
    wrapper.unmount();
  });
});

describe('the router guard', () => {
  it('sends signed-out people to sign-in, remembering where they wanted to go', async () => {
    mockFetch([{ path: '/api/session', body: session(null) }]);
    const { router, wrapper } = await mountAt(Probe, '/o/org1/usage');
    expect(router.currentRoute.value.name).toBe('sign-in');
    expect(router.currentRoute.value.query.next).toBe('/o/org1/usage');
    wrapper.unmount();
  });

  it('treats an organization the person does not belong to as not found', async () => {
    mockFetch([{ path: '/api/session', body: session('owner') }]);
    const { router, wrapper } = await mountAt(Probe, '/o/someone-else/keys');
    expect(router.currentRoute.value.name).toBe('not-found');
    wrapper.unmount();
  });
});
