import { describe, expect, it } from 'vitest';
import { PREVIEW_TOKEN_TTL_MS, isPreviewTokenText, issuePreviewToken, verifyPreviewToken } from './preview-token.ts';

const SECRET = 'a test secret of enough length';
const T0 = Date.parse('2025-06-01T12:00:00Z');

function tamperLastSignatureChar(token: string): string {
  const last = token.at(-1);
  return token.slice(0, -1) + (last === 'A' ? 'B' : 'A');
}

describe('console preview tokens', () => {
  it('issues an nlp_ token for the organization that expires fifteen minutes later', () => {
    const { token, expiresAt } = issuePreviewToken(SECRET, 'org_1', T0);
    expect(token).toMatch(/^nlp_[A-Za-z0-9_-]+\.[A-Za-z0-9_-]+$/);
    expect(isPreviewTokenText(token)).toBe(true);
    expect(expiresAt.getTime()).toBe(T0 + PREVIEW_TOKEN_TTL_MS);
    expect(verifyPreviewToken(SECRET, token, T0 + 60_000)).toEqual({ ok: true, claims: { org: 'org_1', exp: (T0 + PREVIEW_TOKEN_TTL_MS) / 1000 } });
  });

  it('refuses the token from its expiry on, naming the organization it was for', () => {
    const { token, expiresAt } = issuePreviewToken(SECRET, 'org_1', T0);
    expect(verifyPreviewToken(SECRET, token, expiresAt.getTime() - 1).ok).toBe(true);
    expect(verifyPreviewToken(SECRET, token, expiresAt.getTime())).toMatchObject({ ok: false, reason: 'expired', claims: { org: 'org_1' } });
  });

  it('refuses a token signed with another secret or with a changed signature', () => {
    const { token } = issuePreviewToken(SECRET, 'org_1', T0);
    expect(verifyPreviewToken('another secret of enough length', token, T0)).toEqual({ ok: false, reason: 'signature' });
    expect(verifyPreviewToken(SECRET, tamperLastSignatureChar(token), T0)).toEqual({ ok: false, reason: 'signature' });
  });

  it('refuses a payload rewritten to another organization or a later expiry under the old signature', () => {
    const { token } = issuePreviewToken(SECRET, 'org_1', T0);
    const signature = token.split('.')[1];
    const forged = (claims: object) => `nlp_${Buffer.from(JSON.stringify(claims)).toString('base64url')}.${signature}`;
    expect(verifyPreviewToken(SECRET, forged({ org: 'org_2', exp: (T0 + PREVIEW_TOKEN_TTL_MS) / 1000 }), T0)).toEqual({ ok: false, reason: 'signature' });
    expect(verifyPreviewToken(SECRET, forged({ org: 'org_1', exp: T0 / 1000 + 86_400 }), T0)).toEqual({ ok: false, reason: 'signature' });
  });

  it('calls texts that are not tokens malformed', () => {
    for (const text of ['nlp_', 'nlp_abc', 'nlp_a.b.c', 'nlp_a b.c', 'nlb_abc.def', `nlp_${'a'.repeat(600)}.b`]) {
      expect(verifyPreviewToken(SECRET, text, T0)).toEqual({ ok: false, reason: 'malformed' });
    }
  });

  it('calls a correctly signed payload without an organization or expiry malformed', async () => {
    const crypto = await import('node:crypto');
    const key = crypto.createHmac('sha256', SECRET).update('nadirline console preview token v1').digest();
    const payload = Buffer.from(JSON.stringify({ org: 'org_1' })).toString('base64url');
    const sig = crypto.createHmac('sha256', key).update(payload).digest('base64url');
    expect(verifyPreviewToken(SECRET, `nlp_${payload}.${sig}`, T0)).toEqual({ ok: false, reason: 'malformed' });
  });

  it('refuses a correctly signed token whose expiry lies further out than the fifteen minutes tokens are issued for', () => {
    const yearAhead = issuePreviewToken(SECRET, 'org_1', T0 + 365 * 86_400_000).token;
    expect(verifyPreviewToken(SECRET, yearAhead, T0)).toMatchObject({ ok: false, reason: 'too-long' });
    const hourAhead = issuePreviewToken(SECRET, 'org_1', T0 + 3_600_000).token;
    expect(verifyPreviewToken(SECRET, hourAhead, T0)).toMatchObject({ ok: false, reason: 'too-long' });
    // A clock of the issuing process up to a minute ahead is tolerated.
    const skewed = issuePreviewToken(SECRET, 'org_1', T0 + 50_000).token;
    expect(verifyPreviewToken(SECRET, skewed, T0).ok).toBe(true);
  });
});
