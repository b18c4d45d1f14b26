/**
 * CSRF protection for cookie-authenticated writes: a synchronizer token.
 * GET /api/session (and sign-in) hand it out as `csrfToken`; every non-GET/HEAD/OPTIONS /api
 * request must send it back in the `X-CSRF-Token` header, else 403 `csrf-failed`.
 *
 * A signed-in session keeps its token in the session (a new one at every sign-in). A visitor who
 * is not signed in gets no session row at all: their token is an HMAC, under a key derived from
 * SESSION_SECRET, of a random value in the httpOnly cookie `nadir.csrf` (SameSite=Lax, path /api),
 * so a page elsewhere can neither read nor compute it.
 */
import crypto from 'node:crypto';
import type { Request, RequestHandler, Response } from 'express';
import type { Config } from '../config.ts';
import { HttpError } from './problem.ts';

export const CSRF_HEADER = 'x-csrf-token';
export const ANON_CSRF_COOKIE = 'nadir.csrf';
const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);
const SEED = /^[A-Za-z0-9_-]{43}$/;
const KEY_LABEL = 'nadirline anonymous csrf v1';

function readCookie(req: Request, name: string): string | undefined {
  const header = req.headers.cookie;
  if (!header) return undefined;
  for (const part of header.split(';')) {
    const eq = part.indexOf('=');
    if (eq !== -1 && part.slice(0, eq).trim() === name) return part.slice(eq + 1).trim();
  }
  return undefined;
}

function anonymousToken(secret: string, seed: string): string {
  const key = crypto.createHmac('sha256', secret).update(KEY_LABEL).digest();
  return crypto.createHmac('sha256', key).update(seed).digest('base64url');
}

/**
 * The token for this request: the session's when signed in (created on first use), else the
 * anonymous token of the `nadir.csrf` cookie (set now when missing). Anonymous visitors never
 * modify their session, so express-session stores nothing for them.
 */
export function csrfToken(req: Request, res: Response, config: Pick<Config, 'sessionSecret' | 'isProduction'>): string {
  if (req.session?.userId) {
    if (!req.session.csrfToken) req.session.csrfToken = crypto.randomBytes(32).toString('base64url');
    return req.session.csrfToken;
  }
  if (req.session?.csrfToken) return req.session.csrfToken;
  let seed = readCookie(req, ANON_CSRF_COOKIE);
  if (!seed || !SEED.test(seed)) {
    seed = crypto.randomBytes(32).toString('base64url');
    res.cookie(ANON_CSRF_COOKIE, seed, { httpOnly: true, sameSite: 'lax', secure: config.isProduction, path: '/api' });
  }
  return anonymousToken(config.sessionSecret, seed);
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

export function csrfProtection(config: Pick<Config, 'sessionSecret'>): RequestHandler {
  return (req, _res, next) => {
    if (SAFE_METHODS.has(req.method)) return next();
    const sent = req.get(CSRF_HEADER);
    let expected = req.session?.csrfToken;
    if (!expected && !req.session?.userId) {
      const seed = readCookie(req, ANON_CSRF_COOKIE);
      if (seed && SEED.test(seed)) expected = anonymousToken(config.sessionSecret, seed);
    }
    if (!expected) {
      throw new HttpError('csrf-failed', 'No CSRF token for this browser yet: GET /api/session first, then send its csrfToken in the X-CSRF-Token header.');
    }
    if (!sent || !sameToken(sent, expected)) {
      throw new HttpError('csrf-failed', 'The X-CSRF-Token header is missing or does not match this session (tokens change at sign-in: fetch GET /api/session again).');
    }
    next();
  };
}
