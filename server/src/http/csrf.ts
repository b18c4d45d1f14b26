/**
 * CSRF protection for cookie-authenticated writes: a synchronizer token kept in the session.
 * GET /api/session (and sign-in) hand it out as `csrfToken`; every non-GET/HEAD/OPTIONS /api
 * request must send it back in the `X-CSRF-Token` header, else 403 `csrf-failed`.
 * A new token is issued whenever the session is regenerated (sign-in).
 */
import crypto from 'node:crypto';
import type { Request, RequestHandler } from 'express';
import { HttpError } from './problem.ts';

export const CSRF_HEADER = 'x-csrf-token';
const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

/** The session's token, created (and the session saved) on first use. */
export function csrfToken(req: Request): string {
  if (!req.session.csrfToken) req.session.csrfToken = crypto.randomBytes(32).toString('base64url');
  return req.session.csrfToken;
}

/** Replaces the token (after sign-in). */
export function renewCsrfToken(req: Request): string {
  req.session.csrfToken = crypto.randomBytes(32).toString('base64url');
  return req.session.csrfToken;
}

function sameToken(a: string, b: string): boolean {
  const ba = Buffer.from(a);
  const bb = Buffer.from(b);
  return ba.length === bb.length && crypto.timingSafeEqual(ba, bb);
}

export const csrfProtection: RequestHandler = (req, _res, next) => {
  if (SAFE_METHODS.has(req.method)) return next();
  const sent = req.get(CSRF_HEADER);
  const expected = req.session?.csrfToken;
  if (!expected) {
    throw new HttpError('csrf-failed', 'No CSRF token in this session yet: GET /api/session first, then send its csrfToken in the X-CSRF-Token header.');
  }
  if (!sent || !sameToken(sent, expected)) {
    throw new HttpError('csrf-failed', 'The X-CSRF-Token header is missing or does not match this session (tokens change at sign-in: fetch GET /api/session again).');
  }
  next();
};
