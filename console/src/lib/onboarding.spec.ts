import { describe, expect, it } from 'vitest';
import type { Embed, SatelliteListItem } from '../api/types.ts';
import { key } from '../testing/fixtures.ts';
import { onboardingDone } from './onboarding.ts';

const bare: SatelliteListItem = { id: 's1', name: 'Wren', catalogNumber: null, description: null, current: null, derived: null };
const withSet: SatelliteListItem = {
  ...bare,
  current: { id: 'es1', source: 'tle', epoch: '2031-01-01T00:00:00Z', ageDays: 1, staleness: 'fresh', uploadedBy: null, createdAt: '2031-01-01T00:00:00Z', catalogNumber: '99901', name: 'WREN', continuity: null, awaitingConfirmation: false },
};
const embed = { id: 'e1', name: 'Lobby' } as Embed;
const SELF = 'https://console.nadirline.test';

describe('the onboarding checklist', () => {
  it('ticks nothing for a new organization', () => {
    expect(Object.values(onboardingDone({ satellites: [], keys: [], embeds: [], selfOrigin: SELF })).some(Boolean)).toBe(false);
  });

  it('ticks each step from what the organization holds', () => {
    const d = onboardingDone({ satellites: [bare], keys: [key({ kind: 'server' })], embeds: [], selfOrigin: SELF });
    expect(d).toEqual({ satellite: true, elements: false, key: false, embed: false, pasted: false });
    const e = onboardingDone({ satellites: [withSet], keys: [key()], embeds: [embed], selfOrigin: SELF });
    expect(e).toEqual({ satellite: true, elements: true, key: true, embed: true, pasted: false });
  });

  it('counts as pasted only calls from a page other than the console itself', () => {
    const previewOnly = key({ use: { embeds: [], origins: [{ origin: SELF, count: 40, lastDay: '2031-01-02' }], originsSince: '2030-12-27' } });
    expect(onboardingDone({ satellites: [withSet], keys: [previewOnly], embeds: [embed], selfOrigin: SELF }).pasted).toBe(false);
    const live = key({ use: { embeds: [], origins: [{ origin: 'https://www.kestrel.example', count: 3, lastDay: '2031-01-02' }], originsSince: '2030-12-27' } });
    expect(onboardingDone({ satellites: [withSet], keys: [live], embeds: [embed], selfOrigin: SELF }).pasted).toBe(true);
  });
});
