import { describe, expect, it } from 'vitest';
import { assertKeyWorks, hashKeyText, keyState, retiresAt, kindOfKeyText, normalizeOrigin, originAllowed, serializeKey, type KeyRecord } from './keys.ts';
import { HttpError } from '../http/problem.ts';

const base: KeyRecord = {
  id: 'key_1',
  organizationId: 'org_1',
  kind: 'browser',
  name: 'Site',
  hash: hashKeyText('nlb_x'),
  lastFour: 'abcd',
  origins: ['https://www.example.org'],
  scopes: ['read'],
  rateLimitPerMin: 60,
  expiresAt: null,
  revokedAt: null,
  replacedById: null,
  graceUntil: null,
  replacedAt: null,
  retireQuietMinutes: null,
  lastUsedAt: null,
  createdByUserId: null,
  deletedAt: null,
  createdAt: new Date('2025-01-01T00:00:00Z'),
};
const now = new Date('2025-06-01T12:00:00Z');
const codeOf = (fn: () => void): string | null => {
  try {
    fn();
    return null;
  } catch (err) {
    return err instanceof HttpError ? err.code : 'other';
  }
};

describe('origins', () => {
  it.each([
    ['https://WWW.Example.org/', 'https://www.example.org'],
    ['http://localhost:8080', 'http://localhost:8080'],
    ['https://example.org:443', 'https://example.org'],
    ['https://*.example.org', 'https://*.example.org'],
    ['http://[::1]:3000', 'http://[::1]:3000'],
  ])('normalizes %s to %s', (input, expected) => {
    expect(normalizeOrigin(input)).toBe(expected);
  });

  it.each(['example.org', 'ftp://example.org', 'https://example.org/path', 'https://*.org', 'https://a.*.example.org', 'https://example.org:0', '*'])(
    'refuses %s as an allowed origin',
    (input) => {
      expect(normalizeOrigin(input)).toBeNull();
    },
  );

  it('matches an exact origin and nothing else', () => {
    expect(originAllowed(['https://www.example.org'], 'https://www.example.org')).toBe(true);
    expect(originAllowed(['https://www.example.org'], 'http://www.example.org')).toBe(false);
    expect(originAllowed(['https://www.example.org'], 'https://www.example.org:8443')).toBe(false);
    expect(originAllowed(['https://www.example.org'], 'https://evil.example.org')).toBe(false);
  });

  it('matches subdomains of a wildcard origin at any depth but not the apex or a look-alike', () => {
    const allowed = ['https://*.example.org'];
    expect(originAllowed(allowed, 'https://a.example.org')).toBe(true);
    expect(originAllowed(allowed, 'https://b.a.example.org')).toBe(true);
    expect(originAllowed(allowed, 'https://example.org')).toBe(false);
    expect(originAllowed(allowed, 'https://badexample.org')).toBe(false);
    expect(originAllowed(allowed, 'http://a.example.org')).toBe(false);
    expect(originAllowed(allowed, 'https://a.example.org.evil.net')).toBe(false);
    expect(originAllowed(allowed, 'https://a.example.org:8443')).toBe(false);
  });

  it('never matches the opaque origin "null"', () => {
    expect(originAllowed(['https://www.example.org'], 'null')).toBe(false);
  });
});

describe('key states', () => {
  it('tells the kind of a key from its prefix', () => {
    expect(kindOfKeyText('nlb_abc')).toBe('browser');
    expect(kindOfKeyText('nls_abc')).toBe('server');
    expect(kindOfKeyText('sk_abc')).toBeNull();
  });

  it('is active until it expires, then expired', () => {
    expect(keyState({ ...base, expiresAt: new Date('2025-06-02T00:00:00Z') }, now)).toBe('active');
    expect(keyState({ ...base, expiresAt: new Date('2025-06-01T11:59:59Z') }, now)).toBe('expired');
    expect(codeOf(() => assertKeyWorks({ ...base, expiresAt: new Date('2025-06-01T11:00:00Z') }, now))).toBe('key-expired');
  });

  it('keeps a replaced key without a quiet rule answering until its retire-by date, then answers key-rotated', () => {
    const rotated = { ...base, replacedById: 'key_2', graceUntil: new Date('2025-06-01T13:00:00Z') };
    expect(keyState(rotated, now)).toBe('retiring');
    expect(codeOf(() => assertKeyWorks(rotated, now))).toBeNull();
    const later = new Date('2025-06-01T13:00:01Z');
    expect(keyState(rotated, later)).toBe('retired');
    expect(codeOf(() => assertKeyWorks(rotated, later))).toBe('key-rotated');
  });

  it('retires a replaced key once it has been quiet for the chosen spell', () => {
    // Replaced at 10:00 with a 60-minute quiet spell and a retire-by date a week away.
    const rotated = { ...base, replacedById: 'key_2', replacedAt: new Date('2025-06-01T10:00:00Z'), retireQuietMinutes: 60, graceUntil: new Date('2025-06-08T10:00:00Z') };
    // Not used since the rotation: quiet from 10:00, so retired at 11:00 (before now, 12:00).
    expect(retiresAt(rotated, null)?.toISOString()).toBe('2025-06-01T11:00:00.000Z');
    expect(keyState(rotated, now, null)).toBe('retired');
    // Still called at 11:30: it keeps answering until 12:30.
    const used = new Date('2025-06-01T11:30:00Z');
    expect(keyState(rotated, now, used)).toBe('retiring');
    expect(codeOf(() => assertKeyWorks(rotated, now, used))).toBeNull();
    expect(codeOf(() => assertKeyWorks(rotated, new Date('2025-06-01T12:30:01Z'), used))).toBe('key-rotated');
    // A use before the rotation does not extend it past rotation + quiet spell.
    expect(retiresAt(rotated, new Date('2025-06-01T09:00:00Z'))?.toISOString()).toBe('2025-06-01T11:00:00.000Z');
  });

  it('retires a replaced key at its retire-by date even while it is still called', () => {
    const rotated = { ...base, replacedById: 'key_2', replacedAt: new Date('2025-06-01T10:00:00Z'), retireQuietMinutes: 24 * 60, graceUntil: new Date('2025-06-01T11:59:00Z') };
    const usedJustNow = new Date('2025-06-01T11:58:00Z');
    expect(keyState(rotated, now, usedJustNow)).toBe('retired');
    expect(codeOf(() => assertKeyWorks(rotated, now, usedJustNow))).toBe('key-rotated');
  });

  it('retires at once with a quiet spell of zero', () => {
    const rotated = { ...base, replacedById: 'key_2', replacedAt: now, retireQuietMinutes: 0, graceUntil: new Date('2025-06-08T10:00:00Z') };
    expect(keyState(rotated, now, null)).toBe('retired');
  });

  it('names when a replaced key retired', () => {
    const rotated = { ...base, replacedById: 'key_2', graceUntil: new Date('2025-06-01T10:00:00Z') };
    try {
      assertKeyWorks(rotated, now);
      expect.unreachable();
    } catch (err) {
      expect((err as HttpError).detail).toContain('2025-06-01T10:00:00.000Z');
    }
  });

  it('reports revocation before anything else', () => {
    const revoked = { ...base, revokedAt: new Date('2025-05-01T00:00:00Z'), replacedById: 'key_2', graceUntil: new Date('2025-07-01T00:00:00Z') };
    expect(keyState(revoked, now)).toBe('revoked');
    expect(codeOf(() => assertKeyWorks(revoked, now))).toBe('key-revoked');
  });

  it('refuses a deleted key whatever else it is, saying it was deleted', () => {
    const deleted = { ...base, revokedAt: new Date('2025-05-01T00:00:00Z'), deletedAt: new Date('2025-05-20T00:00:00Z') };
    expect(codeOf(() => assertKeyWorks(deleted, now))).toBe('invalid-key');
    expect(codeOf(() => assertKeyWorks({ ...base, deletedAt: new Date('2025-05-20T00:00:00Z') }, now))).toBe('invalid-key');
    try {
      assertKeyWorks(deleted, now);
      expect.unreachable();
    } catch (err) {
      expect((err as HttpError).detail).toMatch(/…abcd was deleted on 2025-05-20/);
    }
    expect(() => assertKeyWorks(base, now)).not.toThrow();
  });

  it('serializes without the hash and with pending last use', () => {
    const json = serializeKey(base, now, new Date('2025-06-01T11:59:00Z'));
    expect(json).not.toHaveProperty('hash');
    expect(json.lastUsedAt).toBe('2025-06-01T11:59:00.000Z');
    expect(json.state).toBe('active');
  });
});
