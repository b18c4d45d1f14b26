import { describe, expect, it } from 'vitest';
import type { Pass } from './api.ts';
import { ageWords, compassWord, latWords, lonWords, passRow, zoneWords } from './format.ts';

describe('compassWord', () => {
  it('turns azimuths into eight compass words', () => {
    expect([0, 44, 46, 90, 135, 180, 225, 270, 315, 359, 360, -90].map(compassWord)).toEqual([
      'north',
      'north-east',
      'north-east',
      'east',
      'south-east',
      'south',
      'south-west',
      'west',
      'north-west',
      'north',
      'north',
      'west',
    ]);
  });
});

describe('latitude and longitude in words', () => {
  it('reads hemispheres out', () => {
    expect(latWords(-51.62)).toBe('51.6 degrees south');
    expect(lonWords(-20.31)).toBe('20.3 degrees west');
    expect(latWords(0.01)).toBe('the equator');
  });
});

const pass = (rise: string, top: string, set: string, visible = true): Pass => ({
  rise: { t: rise, azimuth: 225 },
  culmination: { t: top, azimuth: 150, elevation: 54.4, rangeKm: 520 },
  set: { t: set, azimuth: 60 },
  visible,
});

describe('passRow', () => {
  const now = Date.parse('2026-03-04T12:00:00Z');

  it('formats rise, highest and set in the given time zone and locale', () => {
    const r = passRow(pass('2026-03-04T18:42:10Z', '2026-03-04T18:47:40Z', '2026-03-04T18:53:05Z'), now, {
      timeZone: 'Europe/Berlin',
      locale: 'de-DE',
    });
    expect(r.rise).toBe('19:42');
    expect(r.highest).toBe('19:47');
    expect(r.set).toBe('19:53');
    expect(r.day).toBe('');
    expect(r.riseDir).toBe('south-west');
    expect(r.elevation).toBe('54°');
  });

  it('shows the same pass at another wall-clock time in another zone', () => {
    const r = passRow(pass('2026-03-04T18:42:10Z', '2026-03-04T18:47:40Z', '2026-03-04T18:53:05Z'), now, {
      timeZone: 'America/New_York',
      locale: 'en-GB',
    });
    expect(r.rise).toBe('13:42');
  });

  it('labels a pass on another calendar day of the zone with its weekday', () => {
    // 23:30 UTC on 4 March is already 5 March in Tokyo
    const r = passRow(pass('2026-03-04T23:30:00Z', '2026-03-04T23:35:00Z', '2026-03-04T23:40:00Z'), now, {
      timeZone: 'Asia/Tokyo',
      locale: 'en-GB',
    });
    expect(r.day).toBe('Thu');
    expect(r.rise).toBe('08:30');
  });

  it('writes one sentence for screen readers that says the times are at the elevation mask and whether the pass is visible', () => {
    const r = passRow(pass('2026-03-04T18:42:10Z', '2026-03-04T18:47:40Z', '2026-03-04T18:53:05Z', false), now, { timeZone: 'UTC', locale: 'en-GB' }, 10);
    expect(r.sentence).toBe(
      'climbs above 10 degrees at 18:42 in the south-west, highest at 18:47, 54 degrees up in the south-east, sinks below 10 degrees at 18:53 in the north-east, not visible to the eye',
    );
  });

  it('says a pass cut off by the end of the forecast is still up then, instead of a set equal to its highest point', () => {
    const cut = { ...pass('2026-03-06T12:00:00Z', '2026-03-06T12:00:00Z', '2026-03-06T12:00:00Z'), inProgressAtEnd: true };
    cut.rise.t = '2026-03-06T11:57:30Z';
    const r = passRow(cut, now, { timeZone: 'UTC', locale: 'en-GB' }, 10);
    expect(r.open).toBe(true);
    expect(r.elevation).toBe('54° so far');
    expect(r.sentence).toContain('still up at 12:00 when the forecast ends');
    expect(r.sentence).not.toContain('sinks below');
  });

  it('falls back to the reader’s own zone when the configured zone is unknown', () => {
    expect(() => passRow(pass('2026-03-04T18:42:10Z', '2026-03-04T18:47:40Z', '2026-03-04T18:53:05Z'), now, { timeZone: 'Mars/Olympus' })).not.toThrow();
  });
});

describe('ageWords', () => {
  it('uses hours under a day and days after', () => {
    expect(ageWords(0.25)).toBe('6 hours');
    expect(ageWords(1 / 24)).toBe('1 hour');
    expect(ageWords(2.04)).toBe('2.0 days');
    expect(ageWords(23.5)).toBe('24 days');
  });
});

describe('zoneWords', () => {
  const jan = Date.UTC(2026, 0, 15, 12);
  it('names a zone as people say it, in the reader’s language, not by its id', () => {
    expect(zoneWords('America/New_York', 'en', jan)).toBe('Eastern Time');
    expect(zoneWords('Europe/Berlin', 'de', jan)).toBe('Mitteleuropäische Zeit');
    expect(zoneWords('Europe/Berlin', 'fr', jan)).toBe('heure d’Europe centrale');
    expect(zoneWords('Europe/Berlin', 'es', jan)).toBe('hora de Europa central');
    expect(zoneWords('America/New_York', 'en', jan)).not.toContain('/');
  });
  it('reads UTC by its long name rather than as an offset', () => {
    expect(zoneWords('UTC', 'en', jan)).toBe('Coordinated Universal Time');
  });
  it('falls back to the words of the id for a zone the engine does not know, and to the given words without a zone', () => {
    expect(zoneWords('Nowhere/Far_Away', 'en', jan)).toBe('Far Away');
    expect(zoneWords('', 'en', jan, 'local time')).not.toBe('');
  });
});
