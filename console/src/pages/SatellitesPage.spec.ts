import { flushPromises } from '@vue/test-utils';
import { afterEach, describe, expect, it, vi } from 'vitest';
import type { SatelliteListItem } from '../api/types.ts';
import { forgetPreviewTokens } from '../composables/usePreviewToken.ts';
import { useNoticesStore } from '../stores/notices.ts';
import { mockFetch } from '../testing/fetch-mock.ts';
import { session } from '../testing/fixtures.ts';
import { mountAt } from '../testing/mount.ts';
import SatellitesPage from './SatellitesPage.vue';

afterEach(() => {
  forgetPreviewTokens();
  vi.unstubAllGlobals();
  document.body.innerHTML = '';
});

function sat(id: string, name: string, catalogNumber: string, staleness: 'fresh' | 'aging' | 'stale'): SatelliteListItem {
  return {
    id,
    name,
    catalogNumber,
    description: null,
    current: { id: `es-${id}`, source: 'tle', epoch: '2031-01-01T00:00:00Z', ageDays: 5, staleness, uploadedBy: null, createdAt: '2031-01-01T00:00:00Z', catalogNumber, name, continuity: null, awaitingConfirmation: false },
    derived: null,
  };
}

const list = [sat('s1', 'Kite-2', '99993', 'fresh'), sat('s2', 'Old Lark', '99990', 'stale'), sat('s3', 'Wren', '99901', 'aging')];
const TLE = ['KITE-2 AGAIN', '1 99993U 26001A   26335.50000000  .00000000  00000-0  00000-0 0  9990', '2 99993  97.4000  41.2000 0010000  90.0000 270.0000 15.20000000    10'].join('\n');

function serve(positions: unknown[]) {
  return mockFetch([
    { path: '/api/session', body: session('editor') },
    { path: '/api/orgs/org1/satellites', body: { satellites: list } },
    { method: 'POST', path: '/api/orgs/org1/preview-token', body: { token: 'nlp_test.sig', expiresAt: '2031-01-01T00:15:00Z', expiresIn: 900 } },
    { path: '/v1/positions', body: { t: '2031-01-01T00:00:00Z', positions } },
  ]);
}

describe('the satellites page', () => {
  it('marks a satellite decayed when its position answers decayed, and spells aging as the API does', async () => {
    const { calls } = serve([
      { id: 's1', name: 'Kite-2', lat: 1, lon: 2, altKm: 500 },
      { id: 's2', name: 'Old Lark', error: { code: 'decayed', detail: 'Old Lark: the object has decayed.' } },
      { id: 's3', name: 'Wren', lat: 3, lon: 4, altKm: 520 },
    ]);
    const { wrapper } = await mountAt(SatellitesPage, '/o/org1/satellites', { org: 'org1' });
    await flushPromises();
    const read = calls.find((c) => c.url.startsWith('/v1/positions'))!;
    expect(read.headers.authorization).toBe('Bearer nlp_test.sig');
    expect(decodeURIComponent(read.url)).toContain('ids=s1,s2,s3');
    const rows = wrapper.findAll('tbody tr');
    expect(rows[1]!.find('.badge').text()).toContain('Decayed');
    expect(rows[1]!.find('.badge').classes()).toContain('gone');
    expect(rows[2]!.find('.badge').text()).toContain('Aging');
    const legend = wrapper.find('.summary').text();
    expect(legend).toContain('1 decayed');
    expect(legend).toContain('1 aging');
    expect(legend).toContain('0 stale');
    expect(wrapper.text()).not.toMatch(/ageing/i);
    wrapper.unmount();
  });

  it('claims nothing about decay when the positions read fails', async () => {
    mockFetch([
      { path: '/api/session', body: session('viewer') },
      { path: '/api/orgs/org1/satellites', body: { satellites: list } },
      { method: 'POST', path: '/api/orgs/org1/preview-token', body: { token: 'nlp_test.sig', expiresAt: '2031-01-01T00:15:00Z', expiresIn: 900 } },
    ]);
    const { wrapper } = await mountAt(SatellitesPage, '/o/org1/satellites', { org: 'org1' });
    await flushPromises();
    expect(wrapper.text()).not.toContain('Decayed');
    expect(wrapper.findAll('tbody tr')[1]!.find('.badge').text()).toContain('Stale');
    wrapper.unmount();
  });

  it('warns before registering a catalog number the organization already has', async () => {
    serve([]);
    const { wrapper } = await mountAt(SatellitesPage, '/o/org1/satellites', { org: 'org1' });
    await wrapper.findAll('button').find((b) => b.text() === 'Register a satellite')!.trigger('click');
    await flushPromises();
    const area = document.body.querySelector<HTMLTextAreaElement>('[role="dialog"] textarea')!;
    area.value = TLE;
    area.dispatchEvent(new Event('input'));
    await flushPromises();
    const warning = document.body.querySelector('[data-test="catalog-clash"]');
    expect(warning?.textContent).toContain('Catalog number 99993 is already registered here as “Kite-2”');
    area.value = TLE.replaceAll('99993', '99994');
    area.dispatchEvent(new Event('input'));
    await flushPromises();
    expect(document.body.querySelector('[data-test="catalog-clash"]')).toBeNull();
    wrapper.unmount();
  });

  it('says after registering that the catalog number was already held', async () => {
    const { fn } = serve([]);
    const fake = fn.getMockImplementation()!;
    fn.mockImplementation(async (input, init) =>
      init?.method === 'POST' && String(input) === '/api/orgs/org1/satellites'
        ? new Response(JSON.stringify({ satellite: { id: 's9', name: 'Kite-2 again', catalogNumber: '99993', description: null }, report: [{ index: 1, line: 1, ok: true }] }), {
            status: 201,
            headers: { 'content-type': 'application/json' },
          })
        : fake(input, init),
    );
    const { wrapper } = await mountAt(SatellitesPage, '/o/org1/satellites', { org: 'org1' });
    await wrapper.findAll('button').find((b) => b.text() === 'Register a satellite')!.trigger('click');
    await flushPromises();
    const name = document.body.querySelector<HTMLInputElement>('[role="dialog"] input[type="text"]')!;
    name.value = 'Kite-2 again';
    name.dispatchEvent(new Event('input'));
    await flushPromises();
    document.body.querySelector<HTMLFormElement>('[role="dialog"] form')!.dispatchEvent(new Event('submit'));
    await flushPromises();
    await vi.waitFor(() => expect(useNoticesStore().notices).toHaveLength(1));
    const said = useNoticesStore().notices.map((n) => n.text);
    expect(said).toEqual([expect.stringMatching(/^Satellite registered\. Catalog number 99993 is already registered here as “Kite-2”\./)]);
    wrapper.unmount();
  });
});
