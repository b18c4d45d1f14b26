import { describe, expect, it } from 'vitest';
import { activityDetails, activityVerb, formatLocalDateTime } from './activity.ts';

const names = {
  key: (id: string) => (id === 'k1' ? 'Demo pages (…R-4U)' : undefined),
  satellite: (id: string) => ({ s1: 'Wren Pathfinder', s2: 'Orrery-1' })[id],
  member: (id: string) => (id === 'u1' ? 'Maren Ostby' : undefined),
};

describe('activity details', () => {
  it('labels a new key’s values as people read them', () => {
    const d = activityDetails({
      action: 'key.create',
      detail: { name: 'Demo pages', kind: 'browser', lastFour: 'R-4U', origins: ['http://127.0.0.1:8080'], scopes: ['read'], rateLimitPerMin: 600 },
    });
    expect(d).toEqual([
      { label: 'Name', value: 'Demo pages' },
      { label: 'Kind', value: 'Browser key' },
      { label: 'Last four', value: 'R-4U' },
      { label: 'Origins', value: 'http://127.0.0.1:8080' },
      { label: 'Scopes', value: 'read' },
      { label: 'Rate limit', value: '600 per minute' },
    ]);
  });

  it('writes dates in the reader’s locale and leaves out internal ids', () => {
    const d = activityDetails(
      { action: 'key.rotate', detail: { name: 'Demo pages', previousLastFour: 'R-4U', newKeyId: 'key_x', newLastFour: 'Zq9T', graceHours: 24, graceUntil: '2026-12-02T22:43:39.757Z' } },
      names,
      'en-GB',
    );
    expect(d.map((x) => x.label)).toEqual(['Name', 'Old key’s last four', 'New key’s last four', 'Grace period', 'Old key answers until']);
    expect(d[3]!.value).toBe('24 hours');
    expect(d[4]!.value).toBe(formatLocalDateTime('2026-12-02T22:43:39.757Z', 'en-GB'));
    expect(d[4]!.value).not.toContain('T22');
    expect(JSON.stringify(d)).not.toContain('key_x');
  });

  it('describes a replacement: the new key, the quiet spell and the retire-by date', () => {
    const d = activityDetails(
      { action: 'key.rotate', detail: { name: 'Demo pages', previousLastFour: 'R-4U', newKeyId: 'key_x', newName: 'Demo pages 2027', newLastFour: 'Zq9T', quietMinutes: 1440, retireBy: '2026-12-16T12:00:00.000Z', embedsMoved: 2 } },
      names,
      'en-GB',
    );
    expect(d).toEqual([
      { label: 'Name', value: 'Demo pages' },
      { label: 'Old key’s last four', value: 'R-4U' },
      { label: 'New key', value: 'Demo pages 2027' },
      { label: 'New key’s last four', value: 'Zq9T' },
      { label: 'Old key retires after', value: '1 day without use' },
      { label: 'Old key retires by', value: formatLocalDateTime('2026-12-16T12:00:00.000Z', 'en-GB') },
      { label: 'Embeds moved to the new key', value: '2' },
    ]);
  });

  it('describes a deletion: the key, the state it was in and its last use', () => {
    const d = activityDetails({ action: 'key.delete', detail: { name: 'Old site', kind: 'browser', lastFour: 'Qx7P', state: 'revoked', lastUsedAt: '2026-03-02T09:15:00.000Z' } }, names, 'en-GB');
    expect(activityVerb('key.delete')).toBe('deleted a key');
    expect(d).toEqual([
      { label: 'Name', value: 'Old site' },
      { label: 'Kind', value: 'Browser key' },
      { label: 'Last four', value: 'Qx7P' },
      { label: 'State when deleted', value: 'revoked' },
      { label: 'Last used', value: formatLocalDateTime('2026-03-02T09:15:00.000Z', 'en-GB') },
    ]);
    expect(activityDetails({ action: 'key.delete', detail: { name: 'Unused', lastUsedAt: null } })).toContainEqual({ label: 'Last used', value: 'never' });
  });

  it('shows only the embed options that changed, each before → after', () => {
    expect(activityDetails({ action: 'embed.update', detail: { name: 'Lobby map', changes: { theme: { from: 'light', to: 'dark' }, projection: { from: null, to: 'globe' } } } })).toEqual([
      { label: 'Name', value: 'Lobby map' },
      { label: 'Theme', value: 'light → dark' },
      { label: 'Map', value: 'default → globe' },
    ]);
  });

  it('shows a change as before → after, with role and plan names', () => {
    expect(activityDetails({ action: 'member.role', detail: { email: 'cato@kestrel.example', from: 'editor', to: 'viewer' } })).toEqual([
      { label: 'Role', value: 'Editor → Viewer' },
      { label: 'E-mail', value: 'cato@kestrel.example' },
    ]);
    expect(activityDetails({ action: 'billing.plan', detail: { from: 'starter', to: 'mission', provider: 'none' } })).toEqual([{ label: 'Plan', value: 'Starter → Mission' }]);
    expect(activityDetails({ action: 'key.update', detail: { name: 'Demo pages', lastFour: 'R-4U', changes: { rateLimitPerMin: { from: 600, to: 1200 }, expiresAt: { from: null, to: '2027-01-31T23:59:59Z' } } } }, {}, 'en-GB')).toEqual([
      { label: 'Name', value: 'Demo pages' },
      { label: 'Last four', value: 'R-4U' },
      { label: 'Rate limit', value: '600 per minute → 1,200 per minute' },
      { label: 'Expires', value: `never → ${formatLocalDateTime('2027-01-31T23:59:59Z', 'en-GB')}` },
    ]);
  });

  it('puts key, satellite and member names in place of the ids the answer carries', () => {
    expect(activityDetails({ action: 'embed.create', detail: { name: 'Lobby map', satelliteIds: ['s1', 's2', 's9'], apiKeyId: 'k1' } }, names)).toEqual([
      { label: 'Name', value: 'Lobby map' },
      { label: 'Satellites', value: 'Wren Pathfinder, Orrery-1 and 1 no longer registered' },
      { label: 'Browser key', value: 'Demo pages (…R-4U)' },
    ]);
    expect(activityDetails({ action: 'org.transfer', detail: { previousRole: 'admin', previousOwnerNowAdmin: 'u1' } }, names)).toEqual([
      { label: 'Their role before', value: 'Admin' },
      { label: 'Previous owner, now admin', value: 'Maren Ostby' },
    ]);
  });

  it('says how element sets came in, and reads unknown fields as words', () => {
    const d = activityDetails({ action: 'element-set.upload', detail: { satellite: 'Wren', how: 'files: a.tle, b.xml', accepted: 2, rejected: 1, elementSetIds: ['e1', 'e2'], someNewField: true } });
    expect(d).toEqual([
      { label: 'Satellite', value: 'Wren' },
      { label: 'From', value: 'files a.tle, b.xml' },
      { label: 'Accepted', value: '2' },
      { label: 'Rejected', value: '1' },
      { label: 'Some new field', value: 'yes' },
    ]);
    expect(activityVerb('element-set.upload')).toBe('added element sets');
  });
});
