/**
 * Console preview tokens: a short-lived, read-only /v1 credential for the console's own live
 * previews (the satellite page and the embed builder), so any member of an organization, viewers
 * included, sees the widget for any satellite of it without a saved embed and without a key.
 * Key texts are never stored, so the console cannot use a real key.
 *
 *   issuePreviewToken(secret, orgId, now?)  -> { token, expiresAt }
 *   verifyPreviewToken(secret, text, now?)  -> { ok: true, claims } | { ok: false, reason }
 *   isPreviewTokenText(text)                -> boolean (the `nlp_` prefix)
 *
 * Format: `nlp_<base64url(JSON payload)>.<base64url(HMAC-SHA256)>`, payload `{ org, exp }` with
 * `exp` in seconds since the epoch; a token whose `exp` lies further out than the 15 minutes tokens
 * are issued for (plus a minute of clock skew) is refused. The HMAC key is derived from SESSION_SECRET with a fixed label,
 * so a preview signature never doubles as a session-cookie signature. Nothing is stored: a token
 * works until it expires (PREVIEW_TOKEN_TTL_MS), which bounds what a member removed meanwhile can
 * still read. What a token may do on /v1 (read only, this server's own origin, the organization's
 * satellites, no quota, a per-organization rate limit) is enforced in routes/v1/auth.ts.
 */
import crypto from 'node:crypto';

export const PREVIEW_TOKEN_PREFIX = 'nlp_';
export const PREVIEW_TOKEN_TTL_MS = 15 * 60_000;
/** Requests per minute per organization for all its preview tokens together. */
export const PREVIEW_RATE_LIMIT_PER_MIN = 600;
/** Longer texts are refused before any decoding. */
const MAX_TOKEN_CHARS = 512;
const KEY_LABEL = 'nadirline console preview token v1';

export interface PreviewClaims {
  /** Organization id. */
  org: string;
  /** Expiry, seconds since the epoch. */
  exp: number;
}

export type PreviewVerdict = { ok: true; claims: PreviewClaims } | { ok: false; reason: 'malformed' | 'signature' | 'expired' | 'too-long'; claims?: PreviewClaims };

/** Clock difference allowed between processes that issue and check tokens. */
export const PREVIEW_CLOCK_SKEW_MS = 60_000;

export function isPreviewTokenText(text: string): boolean {
  return text.startsWith(PREVIEW_TOKEN_PREFIX);
}

function signingKey(secret: string): Buffer {
  return crypto.createHmac('sha256', secret).update(KEY_LABEL).digest();
}

function sign(secret: string, payload: string): Buffer {
  return crypto.createHmac('sha256', signingKey(secret)).update(payload).digest();
}

export function issuePreviewToken(secret: string, orgId: string, now = Date.now()): { token: string; expiresAt: Date } {
  const exp = Math.floor((now + PREVIEW_TOKEN_TTL_MS) / 1000);
  const payload = Buffer.from(JSON.stringify({ org: orgId, exp } satisfies PreviewClaims)).toString('base64url');
  return { token: `${PREVIEW_TOKEN_PREFIX}${payload}.${sign(secret, payload).toString('base64url')}`, expiresAt: new Date(exp * 1000) };
}

const B64URL = /^[A-Za-z0-9_-]+$/;

export function verifyPreviewToken(secret: string, text: string, now = Date.now()): PreviewVerdict {
  if (!isPreviewTokenText(text) || text.length > MAX_TOKEN_CHARS) return { ok: false, reason: 'malformed' };
  const [payload, signature, ...rest] = text.slice(PREVIEW_TOKEN_PREFIX.length).split('.');
  if (!payload || !signature || rest.length || !B64URL.test(payload) || !B64URL.test(signature)) return { ok: false, reason: 'malformed' };
  const given = Buffer.from(signature, 'base64url');
  const expected = sign(secret, payload);
  if (given.length !== expected.length || !crypto.timingSafeEqual(given, expected)) return { ok: false, reason: 'signature' };
  let claims: unknown;
  try {
    claims = JSON.parse(Buffer.from(payload, 'base64url').toString('utf8'));
  } catch {
    return { ok: false, reason: 'malformed' };
  }
  const c = claims as Partial<PreviewClaims> | null;
  if (!c || typeof c !== 'object' || typeof c.org !== 'string' || !c.org || typeof c.exp !== 'number' || !Number.isFinite(c.exp)) {
    return { ok: false, reason: 'malformed' };
  }
  const valid = { org: c.org, exp: c.exp };
  if (now >= valid.exp * 1000) return { ok: false, reason: 'expired', claims: valid };
  // Tokens are issued for PREVIEW_TOKEN_TTL_MS; one that claims to last longer was not made here.
  if (valid.exp * 1000 > now + PREVIEW_TOKEN_TTL_MS + PREVIEW_CLOCK_SKEW_MS) return { ok: false, reason: 'too-long', claims: valid };
  return { ok: true, claims: valid };
}
