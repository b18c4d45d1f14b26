import { describe, expect, it } from 'vitest';
import { actionFor, backoffMs, noticeFor, sayNotice, WIDGET_CODES } from './messages.ts';
import { translator } from './words.ts';

describe('noticeFor', () => {
  it('tells the site owner what to do about a key Nadirline does not accept, and stops', () => {
    const n = noticeFor({ code: 'invalid-key', status: 401 });
    expect(n.heading).toBe('Map key not accepted');
    expect(n.text).toMatch(/api-key attribute/);
    expect(n.fatal).toBe(true);
    expect(n.retryMs).toBeUndefined();
  });

  it('names the page origin when the key is not allowed there', () => {
    const n = noticeFor({ code: 'origin-not-allowed', status: 403 }, { origin: 'https://hall.example' });
    expect(n.text).toContain('https://hall.example');
    expect(n.fatal).toBe(true);
  });

  it('waits for Retry-After when the quota is used up', () => {
    const n = noticeFor({ code: 'quota-exceeded', status: 429, retryAfterS: 120 });
    expect(n.retryMs).toBe(120_000);
    expect(n.text).toMatch(/try again in 2 minutes/);
  });

  it('names the missing satellite and keeps the others going', () => {
    const n = noticeFor({ code: 'not-found', status: 404 }, { satellite: 'Kestrel-9' });
    expect(n.text).toContain('“Kestrel-9”');
    expect(n.fatal).toBe(false);
  });

  it('gives the age of a stale element set in days', () => {
    const n = noticeFor({ code: 'stale-element-set', status: 200 }, { satellite: 'Old-4', ageDays: 23.5 });
    expect(n.text).toContain('24 days old');
    expect(n.severity).toBe('warning');
  });

  it('says a decayed satellite is no longer in orbit, with the data age', () => {
    const n = noticeFor({ code: 'decayed', status: 410 }, { satellite: 'Ember', ageDays: 3.25 });
    expect(n.heading).toBe('No longer in orbit');
    expect(n.text).toContain('3.3 days old');
  });

  it('keeps the last data on a network failure, says when it is from, and backs off', () => {
    const first = noticeFor({ code: 'network', status: 0 }, { attempt: 1, dataTime: '14:02' });
    const third = noticeFor({ code: 'network', status: 0 }, { attempt: 3, dataTime: '14:02' });
    expect(first.text).toContain('Showing what was known at 14:02, marked as out of date');
    expect(first.retryMs).toBe(2000);
    expect(third.retryMs).toBe(8000);
    expect(third.text).toMatch(/Trying again in 8 seconds/);
  });

  it('honours Retry-After on a rate limit and falls back to backoff without it', () => {
    expect(noticeFor({ code: 'rate-limited', status: 429, retryAfterS: 5 }).retryMs).toBe(5000);
    expect(noticeFor({ code: 'rate-limited', status: 429 }, { attempt: 2 }).retryMs).toBe(4000);
  });

  it('shows an unknown server-side problem code in words with a retry rather than nothing', () => {
    const n = noticeFor({ code: 'overheated', status: 502 });
    expect(n.text).toContain('overheated, 502');
    expect(n.retryMs).toBeGreaterThan(0);
  });

  it('does not retry an unknown 4xx answer, which would only get the same answer again', () => {
    const n = noticeFor({ code: 'teapot', status: 418 }, { satellite: 'Kestrel-9' });
    expect(n.text).toContain('teapot, 418');
    expect(n.fatal).toBe(false);
    expect(n.retryMs).toBeUndefined();
    const refused = noticeFor({ code: 'something-new', status: 401 });
    expect(refused.fatal).toBe(true);
    expect(refused.retryMs).toBeUndefined();
  });

  it('tells the page owner which attribute to set when the map has no key', () => {
    const n = noticeFor({ code: 'no-key', status: 0 });
    expect(n.heading).toBe('This map has no key');
    expect(n.text).toMatch(/api-key attribute/);
    expect(n.text).toMatch(/embed attribute/);
    expect(n.fatal).toBe(true);
    expect(n.retryMs).toBeUndefined();
  });

  it.each(['unauthenticated', 'key-expired', 'key-revoked', 'key-rotated'])('stops the map without retrying on %s', (code) => {
    const n = noticeFor({ code, status: 401 });
    expect(n).toMatchObject({ code, fatal: true, severity: 'error' });
    expect(n.retryMs).toBeUndefined();
    expect(n.heading).not.toBe('Something went wrong');
  });

  it('uses the API code for a satellite without an element set', () => {
    expect(noticeFor({ code: 'no-element-set', status: 422 }, { satellite: 'Kite' })).toMatchObject({ heading: 'No orbit data yet', fatal: false });
  });
});

describe('actionFor', () => {
  it('decides by status: 401 and 403 stop the map, 429 waits, other 4xx stop one satellite, the rest retry', () => {
    expect(actionFor({ code: 'invalid-key', status: 401 })).toBe('stop-map');
    expect(actionFor({ code: 'forbidden', status: 403 })).toBe('stop-map');
    expect(actionFor({ code: 'no-key', status: 0 })).toBe('stop-map');
    expect(actionFor({ code: 'quota-exceeded', status: 429 })).toBe('wait');
    expect(actionFor({ code: 'rate-limited', status: 429 })).toBe('wait');
    expect(actionFor({ code: 'not-found', status: 404 })).toBe('stop-satellite');
    expect(actionFor({ code: 'decayed', status: 422 })).toBe('stop-satellite');
    expect(actionFor({ code: 'unavailable', status: 503 })).toBe('retry');
    expect(actionFor({ code: 'network', status: 0 })).toBe('retry');
  });

  it('lists the widget’s own codes, none of which the API uses', () => {
    expect([...WIDGET_CODES]).toEqual(['no-key', 'no-satellites', 'stale-element-set', 'network', 'server', 'bad-answer', 'widget']);
  });
});

describe('backoffMs', () => {
  it('doubles from two seconds and stops growing at two minutes', () => {
    expect([1, 2, 3, 4].map(backoffMs)).toEqual([2000, 4000, 8000, 16000]);
    expect(backoffMs(30)).toBe(120_000);
  });
});

describe('a saved embed that is gone', () => {
  it('says the map is not found, stops the map, and says so again in the reader’s language', () => {
    const n = noticeFor({ code: 'not-found', status: 404 }, { embed: true });
    expect(n).toMatchObject({ heading: 'Map not found', fatal: true });
    expect(n.retryMs).toBeUndefined();
    expect(n.text).toMatch(/saved map no longer exists/);
    const de = sayNotice(n, translator('de', { mapNotFoundHead: 'Karte nicht gefunden', notFoundHead: 'Satellit nicht gefunden' }));
    expect(de.heading).toBe('Karte nicht gefunden');
    expect(noticeFor({ code: 'not-found', status: 404 }, { satellite: 'Wren' }).heading).toBe('Satellite not found');
  });
});
