import { afterEach, describe, expect, it, vi } from 'vitest';
import { mockFetch } from '../testing/fetch-mock.ts';
import { key, session } from '../testing/fixtures.ts';
import { mountAt } from '../testing/mount.ts';
import ActivityPage from './ActivityPage.vue';

afterEach(() => {
  vi.unstubAllGlobals();
  document.body.innerHTML = '';
});

const events = [
  {
    id: 'ev2',
    action: 'embed.create',
    actor: { name: 'Cato Lindqvist', email: 'cato@kestrel.example' },
    targetType: 'embed',
    targetId: 'emb1',
    detail: { name: 'Lobby map', satelliteIds: ['s1'], apiKeyId: 'k1' },
    createdAt: '2031-01-02T10:00:00Z',
  },
  {
    id: 'ev1',
    action: 'key.create',
    actor: { name: 'Ada Quill', email: 'ada@kestrel.example' },
    targetType: 'key',
    targetId: 'k1',
    detail: { name: 'Public website', kind: 'browser', lastFour: 'x7Qa', origins: ['https://www.kestrel.example'], scopes: ['read'], rateLimitPerMin: 600, graceUntil: '2031-01-03T22:43:39.757Z' },
    createdAt: '2031-01-01T09:00:00Z',
  },
];

describe('the activity page', () => {
  it('shows labelled, formatted details with names instead of ids, and no raw field names or ISO times', async () => {
    mockFetch([
      { path: '/api/session', body: session('viewer') },
      { path: '/api/orgs/org1/activity', body: { events } },
      { path: '/api/orgs/org1/keys', body: { keys: [key()] } },
      { path: '/api/orgs/org1/satellites', body: { satellites: [{ id: 's1', name: 'Wren Pathfinder', catalogNumber: '99901', description: null, current: null, derived: null }] } },
      { path: '/api/orgs/org1/members', body: { members: [], invitations: [] } },
    ]);
    const { wrapper } = await mountAt(ActivityPage, '/o/org1/activity', { org: 'org1' });
    const [embed, created] = wrapper.findAll('ol.log > li');
    expect(embed!.text()).toContain('Cato Lindqvist created an embed');
    expect(embed!.text()).toContain('Wren Pathfinder');
    expect(embed!.text()).toContain('Public website (…x7Qa)');
    const pairs = created!.findAll('.pair').map((p) => `${p.find('dt').text()}: ${p.find('dd').text()}`);
    expect(pairs).toContain('Rate limit: 600 per minute');
    expect(pairs).toContain('Last four: x7Qa');
    expect(pairs).toContain('Kind: Browser key');
    const text = wrapper.text();
    expect(text).not.toMatch(/rateLimitPerMin|lastFour|apiKeyId|satelliteIds/);
    expect(text).not.toMatch(/\d{4}-\d\d-\d\dT/);
    expect(text).not.toContain('k1');
    wrapper.unmount();
  });
});
