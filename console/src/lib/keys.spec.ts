import { describe, expect, it } from 'vitest';
import { key } from '../testing/fixtures.ts';
import { formatQuiet, keyUseSummary, originLine, stillCalling } from './keys.ts';

describe('key words', () => {
  it('writes a quiet spell in the largest whole unit', () => {
    expect(formatQuiet(0)).toBe('at once');
    expect(formatQuiet(90)).toBe('90 minutes');
    expect(formatQuiet(60)).toBe('1 hour');
    expect(formatQuiet(360)).toBe('6 hours');
    expect(formatQuiet(1440)).toBe('1 day');
    expect(formatQuiet(3 * 1440)).toBe('3 days');
  });

  it('says what uses a key: embeds and the origins of the last seven days', () => {
    const origins = [
      { origin: 'https://www.kestrel.example', count: 1204, lastDay: '2031-01-05' },
      { origin: '', count: 3, lastDay: '2031-01-02' },
    ];
    const embeds = [{ id: 'e1', name: 'Front page' }, { id: 'e2', name: 'Kiosk' }, { id: 'e3', name: 'Blog' }];
    expect(keyUseSummary(key({ use: { embeds, origins, originsSince: '2030-12-30' } }))).toBe('Used by 3 embeds; seen from these 2 origins in the last 7 days');
    expect(keyUseSummary(key())).toBe('Used by no embed; not called in the last 7 days');
    expect(originLine(origins[0]!)).toBe('https://www.kestrel.example: 1,204 requests, last on 05 Jan 2031');
    expect(originLine(origins[1]!)).toMatch(/^no origin \(a backend/);
  });

  it('lists as still calling only the origins seen since the replacement', () => {
    const origins = [
      { origin: 'https://a.kestrel.example', count: 10, lastDay: '2031-01-05' },
      { origin: 'https://b.kestrel.example', count: 4, lastDay: '2031-01-03' },
    ];
    const replaced = key({ replacedAt: '2031-01-04T09:00:00Z', use: { embeds: [], origins, originsSince: '2030-12-30' } });
    expect(stillCalling(replaced).map((o) => o.origin)).toEqual(['https://a.kestrel.example']);
    expect(stillCalling(key())).toEqual([]);
  });
});
