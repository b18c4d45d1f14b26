/**
 * Credentials, origins, CORS, limits and usage for /v1.
 *
 * Credentials, in this order:
 *   - `Authorization: Bearer <key>` (any key, any method);
 *   - `?key=<browser key>` on GET / HEAD only (a plain page needs no preflight); a server key in
 *     the URL is refused, since URLs end up in logs and histories;
 *   - `?embed=<embed id>` on GET / HEAD: resolved to the embed's browser key, reads limited to the
 *     embed's satellites.
 *   - a console preview token (`nlp_...`, services/preview-token.ts) as Bearer or `?key=` on GET:
 *     signed by this server for one organization, valid 15 minutes, read-only, only from this
 *     server's own origin, outside the plan's quota and usage, rate-limited per organization.
 *
 * Origins (CORS answered per key):
 *   - browser key: the page's origin must be one the key lists (exact, or wildcard subdomain).
 *     The origin is the Origin header, else the origin of the Referer header. A request naming no
 *     origin at all (curl, a backend, or a header like Sec-Fetch-Site alone, which proves nothing)
 *     is refused: browser keys are for pages, backends use server keys. Reads from this server's
 *     own origins are also allowed (the hosted /embed/:id page, the console's live preview, the
 *     examples): only pages Nadirline itself serves run there.
 *   - console preview token: only this server's own origins (Origin, else Referer); any other
 *     origin, or none, is refused.
 *   - This server's own origins come from configuration (config.selfOrigins: PUBLIC_URL, plus the
 *     listening loopback address outside production), never from the Host header, which the
 *     client chooses (a rebound DNS name would otherwise make any page "this server").
 *   - server key: meant for backends, which send no Origin. A request that carries an Origin
 *     header (a web page) is refused unless the key lists that origin.
 *   - Every /v1 answer to a request with an Origin header reflects that origin in
 *     Access-Control-Allow-Origin, errors included, so pages can read the problem; refused
 *     requests do no work and return no data.
 *   - Preflight (OPTIONS) is answered for any origin, since a preflight carries no Authorization
 *     header; when the URL itself holds `?key=` or `?embed=`, that key's origins are checked there.
 */
import type { NextFunction, Request, RequestHandler, Response } from 'express';
import { rateLimit, type Options as RateLimitOptions } from 'express-rate-limit';
import type { AppContext } from '../../context.ts';
import { getOverLimitGate } from '../../http/over-limit.ts';
import { HttpError } from '../../http/problem.ts';
import { getEmbedService, type EmbedRecord } from '../../services/embeds.ts';
import { getKeyService, kindOfKeyText, originAllowed, type KeyRecord } from '../../services/keys.ts';
import { isPreviewTokenText, PREVIEW_RATE_LIMIT_PER_MIN, verifyPreviewToken } from '../../services/preview-token.ts';
import { getQuotaService } from '../../services/quota.ts';
import { rateLimitStore, type SharedRedis } from '../../services/shared.ts';
import { getUsageRecorder } from '../../services/usage.ts';
import type { Access } from '@nadirline/shared/contract';

export interface V1Auth {
  /** The key; for a console preview token, a stand-in record (see previewKey) that is never stored. */
  key: KeyRecord;
  /** Set when the credential was `?embed=`. */
  embed: EmbedRecord | null;
  via: 'bearer' | 'query-key' | 'embed' | 'preview';
  /** The origin the request was judged by, if any. */
  origin: string | null;
}

export function authOf(res: Response): V1Auth {
  const a = res.locals.v1auth as V1Auth | undefined;
  if (!a) throw new Error('authOf called on a route without auth');
  return a;
}

/** May this credential read this satellite's data? (org match; embeds: only their satellites) */
export function canSee(auth: V1Auth, satellite: { id: string; organizationId: string }): boolean {
  if (satellite.organizationId !== auth.key.organizationId) return false;
  return !auth.embed || auth.embed.satelliteIds.includes(satellite.id);
}

export const EXPOSED_HEADERS = 'RateLimit, RateLimit-Policy, Retry-After, ETag, Location';

/** This server's own origins, from configuration only (config.ts noteListening). */
function selfOrigins(ctx: AppContext): string[] {
  return ctx.config.selfOrigins;
}

function refererOrigin(req: Request): string | null {
  const ref = req.get('referer');
  if (!ref) return null;
  try {
    const u = new URL(ref);
    return u.protocol === 'http:' || u.protocol === 'https:' ? u.origin : null;
  } catch {
    return null;
  }
}

/** Reflect the Origin on every /v1 answer (the credential check decides what is served). */
export const corsHeaders: RequestHandler = (req, res, next) => {
  const origin = req.headers.origin;
  if (origin) {
    res.setHeader('Access-Control-Allow-Origin', origin);
    res.setHeader('Access-Control-Expose-Headers', EXPOSED_HEADERS);
  }
  // Set directly: express's res.vary() parses and merges on every call (routes add to it).
  res.setHeader('Vary', 'Origin');
  next();
};

/** The origin a page request names: Origin, else the Referer's origin, else none. */
function pageOrigin(req: Request): string | null {
  return req.headers.origin ?? refererOrigin(req);
}

function checkOrigin(ctx: AppContext, req: Request, cred: Credential): string | null {
  const { key, embed } = cred;
  const header = req.headers.origin;
  if (cred.via === 'preview') {
    const self = selfOrigins(ctx);
    const origin = pageOrigin(req);
    if (origin && self.includes(origin.toLowerCase())) return origin;
    throw new HttpError(
      'origin-not-allowed',
      origin
        ? `Console preview tokens work only in the Nadirline console on ${ctx.config.publicUrl}; this request came from ${origin}. Pages elsewhere use a browser key or an embed.`
        : 'Console preview tokens work only in the Nadirline console on this server, and this request named no origin (no Origin or Referer header).',
      origin ? { origin } : {},
    );
  }
  if (key.kind === 'server') {
    if (!header) return null;
    if (originAllowed(key.origins, header)) return header;
    throw new HttpError(
      'origin-not-allowed',
      `This is a server key, which is secret and belongs on a backend; this request came from a web page (${header}). Use a browser key in pages, and rotate this key if it was published.`,
    );
  }
  const self = selfOrigins(ctx);
  const origin = pageOrigin(req);
  if (!origin) {
    throw new HttpError(
      'origin-not-allowed',
      'Browser keys work only from web pages of the origins they list, and this request named no origin (no Origin or Referer header). From a backend or the command line, use a server key.',
    );
  }
  const o = origin.toLowerCase();
  if (o !== 'null' && (originAllowed(key.origins, o) || self.includes(o))) return origin;
  throw new HttpError(
    'origin-not-allowed',
    `The origin ${origin} is not allowed for this ${embed ? `embed's key` : 'browser key'} (…${key.lastFour}). A member of the key's organization can add it to the key's origins in the console.`,
    { origin },
  );
}

type Credential = Omit<V1Auth, 'origin'>;

const previewKeys = new Map<string, KeyRecord>();

/**
 * The stand-in key record of an organization's console previews: its id keys the per-organization
 * rate limit (PREVIEW_RATE_LIMIT_PER_MIN); it is never stored, counted or shown.
 */
export function previewKey(orgId: string): KeyRecord {
  let k = previewKeys.get(orgId);
  if (!k) {
    if (previewKeys.size > 10_000) previewKeys.clear();
    k = {
      id: `preview:${orgId}`,
      organizationId: orgId,
      kind: 'browser',
      name: 'Console preview',
      hash: '',
      lastFour: 'view',
      origins: [],
      scopes: ['read'],
      rateLimitPerMin: PREVIEW_RATE_LIMIT_PER_MIN,
      expiresAt: null,
      revokedAt: null,
      replacedById: null,
      graceUntil: null,
      replacedAt: null,
      retireQuietMinutes: null,
      lastUsedAt: null,
      createdByUserId: null,
      deletedAt: null,
      createdAt: new Date(0),
    };
    previewKeys.set(orgId, k);
  }
  return k;
}

function previewCredential(ctx: AppContext, text: string): Credential {
  const v = verifyPreviewToken(ctx.config.sessionSecret, text);
  if (v.ok) return { key: previewKey(v.claims.org), embed: null, via: 'preview' };
  if (v.reason === 'expired') {
    throw new HttpError(
      'key-expired',
      `This console preview token expired at ${new Date((v.claims?.exp ?? 0) * 1000).toISOString()}. The console fetches a new one before the old one ends; reload the page if the preview stays stopped.`,
    );
  }
  if (v.reason === 'too-long') {
    throw new HttpError('invalid-key', 'This console preview token claims to last longer than the 15 minutes preview tokens are issued for, so this server did not issue it. Reload the console page to get a new one.');
  }
  throw new HttpError('invalid-key', 'This console preview token is not valid: it was changed, or signed by another server. Reload the console page to get a new one.');
}

/**
 * Resolve the credential of a request: throws unauthenticated / invalid-key / key-* problems.
 * Answers synchronously when the key (or embed) is cached, so the hot path awaits nothing.
 */
export function resolveCredential(ctx: AppContext, req: Request, embedIdFromPath?: string, beforeLookup: () => void = () => undefined): Credential | Promise<Credential> {
  const keys = getKeyService(ctx);
  const read = req.method === 'GET' || req.method === 'HEAD' || req.method === 'OPTIONS';
  const header = req.headers.authorization;
  const byKey = (text: string, via: 'bearer' | 'query-key'): Credential | Promise<Credential> => {
    if (isPreviewTokenText(text)) return previewCredential(ctx, text);
    const hit = keys.authenticateCached(text);
    if (hit) return { key: hit, embed: null, via };
    beforeLookup();
    return keys.authenticate(text).then((key) => ({ key, embed: null, via }));
  };
  if (header) {
    const m = /^Bearer\s+(\S+)\s*$/i.exec(header);
    if (!m?.[1]) throw new HttpError('unauthenticated', 'Send the key as "Authorization: Bearer <key>".', {}, { 'WWW-Authenticate': 'Bearer' });
    return byKey(m[1], 'bearer');
  }
  const q = req.query as Record<string, unknown>;
  const keyParam = typeof q.key === 'string' ? q.key : undefined;
  if (keyParam !== undefined) {
    if (kindOfKeyText(keyParam) === 'server') {
      throw new HttpError('invalid-key', 'Server keys are secret and never go in a URL; send them as "Authorization: Bearer <key>". Rotate this key if the URL was shared or logged.');
    }
    if (!read) throw new HttpError('unauthenticated', 'Keys in the query string work only for GET requests; send "Authorization: Bearer <key>".', {}, { 'WWW-Authenticate': 'Bearer' });
    return byKey(keyParam, 'query-key');
  }
  const embedId = embedIdFromPath ?? (typeof q.embed === 'string' ? q.embed : undefined);
  if (embedId !== undefined) {
    if (!read) throw new HttpError('browser-key-read-only', 'An embed reads only; writes need a server key with the element-sets:write scope.');
    const embeds = getEmbedService(ctx);
    const hit = embeds.resolveForReadCached(embedId);
    if (hit) return { key: hit.key, embed: hit.embed, via: 'embed' };
    beforeLookup();
    return embeds.resolveForRead(embedId).then(({ embed, key }) => ({ key, embed, via: 'embed' as const }));
  }
  throw new HttpError(
    'unauthenticated',
    'This route needs a key: "Authorization: Bearer <key>", or ?key=<browser key> on GET from a page of one of its origins.',
    {},
    { 'WWW-Authenticate': 'Bearer' },
  );
}

/** Credential + origin + scope for one route. */
export function authenticate(ctx: AppContext, access: Exclude<Access, 'public'>, opts: { embedFromPath?: string; guard?: FailedAuthGuard } = {}): RequestHandler {
  const finish = (req: Request, res: Response, next: NextFunction, cred: Credential) => {
    const origin = checkOrigin(ctx, req, cred);
    if (access === 'write') {
      if (cred.via === 'preview') {
        throw new HttpError('browser-key-read-only', 'Console preview tokens only read: they draw the previews in the console. Upload element sets in the console, or from a backend with a server key that has the element-sets:write scope.');
      }
      if (cred.key.kind === 'browser' || cred.via === 'embed') {
        throw new HttpError('browser-key-read-only', 'Browser keys and embeds are read-only (they sit in page source). Use a server key with the element-sets:write scope from your backend.');
      }
      if (!cred.key.scopes.includes('element-sets:write')) {
        throw new HttpError('scope-missing', `This server key (…${cred.key.lastFour}) lacks the element-sets:write scope. An admin can add it in the console.`, { scope: 'element-sets:write' });
      }
    }
    res.locals.v1auth = { key: cred.key, embed: cred.embed, via: cred.via, origin } satisfies V1Auth;
    next();
  };
  const guard = opts.guard ?? new FailedAuthGuard();
  const failed = (req: Request, err: unknown) => {
    if (err instanceof HttpError && err.status === 401) guard.failed(req.ip ?? 'unknown');
    throw err;
  };
  return (req: Request, res: Response, next: NextFunction) => {
    const embedId = opts.embedFromPath ? String(req.params[opts.embedFromPath] ?? '') : undefined;
    let cred: Credential | Promise<Credential>;
    try {
      cred = resolveCredential(ctx, req, embedId, () => guard.check(req.ip ?? 'unknown'));
    } catch (err) {
      return failed(req, err);
    }
    if (cred instanceof Promise) {
      return cred.then(
        (c) => finish(req, res, next, c),
        (err: unknown) => failed(req, err),
      );
    }
    finish(req, res, next, cred);
    return undefined;
  };
}

/**
 * Per-key rate limit (limit from the key record), standard RateLimit headers, 429 problem. The
 * counters live in Redis when REDIS_URL is set (one window per key across all processes). A key
 * found over its limit is handed to the over-limit gate, which refuses the rest of its window at
 * the front of the app (http/over-limit.ts).
 */
export function keyRateLimit(ctx: AppContext): RequestHandler {
  const gate = getOverLimitGate(ctx);
  const options: Partial<RateLimitOptions> = {
    ...rateLimitStore(ctx, 'key'),
    windowMs: 60_000,
    limit: (_req: Request, res: Response) => authOf(res).key.rateLimitPerMin,
    keyGenerator: (_req: Request, res: Response) => authOf(res).key.id,
    // IETF "RateLimit header fields for HTTP", draft 7: `RateLimit: limit=, remaining=, reset=` and
    // `RateLimit-Policy: N;w=60`. Draft 8 adds a partition key that costs a SHA-256 per request;
    // measured side by side, draft 7 served about 9 % more keyed /position requests a second.
    standardHeaders: 'draft-7',
    legacyHeaders: false,
    identifier: 'per-key',
    validate: false,
    handler: (req, res, next, opts) => {
      const retry = res.getHeader('Retry-After');
      const reset = (req as Request & { rateLimit?: { resetTime?: Date } }).rateLimit?.resetTime;
      const { key } = authOf(res);
      if (gate && reset && authOf(res).via !== 'preview') gate.block(key.id, { untilMs: reset.getTime(), limitPerMin: key.rateLimitPerMin, lastFour: key.lastFour });
      const who = authOf(res).via === 'preview' ? `The console previews of this organization allow` : 'This key allows';
      next(
        new HttpError(
          'rate-limited',
          `${who} ${authOf(res).key.rateLimitPerMin} requests per minute; wait ${retry ?? Math.ceil(opts.windowMs / 1000)} s before the next one.`,
          { limitPerMin: authOf(res).key.rateLimitPerMin },
        ),
      );
    },
  };
  return rateLimit(options);
}

/** Failed credentials (401) allowed per client address per minute before unknown keys get 429. */
export const FAILED_AUTH_LIMIT_PER_MIN = 300;

/**
 * Guessing keys costs a database read per unknown key. Each client address may have
 * FAILED_AUTH_LIMIT_PER_MIN failed credentials a minute; past that, credentials that are not
 * already cached answer 429 until the minute is over. Working (cached) keys are never slowed, so
 * many readers behind one address are not punished for one bad page.
 *
 * With Redis, every failure is also counted there (one counter per address and minute for all
 * processes), and the count Redis answers becomes this process's count: a guesser spread over
 * several processes by a load balancer meets the same limit. check() stays synchronous (no
 * round trip before a key lookup).
 */
export class FailedAuthGuard {
  private readonly counts = new Map<string, { n: number; since: number }>();

  constructor(private readonly redis: SharedRedis | null = null) {}

  check(ip: string, now = Date.now()): void {
    const c = this.counts.get(ip);
    if (c && now - c.since < 60_000 && c.n >= FAILED_AUTH_LIMIT_PER_MIN) {
      const retry = Math.max(1, Math.ceil((c.since + 60_000 - now) / 1000));
      throw new HttpError('rate-limited', `Too many requests with unknown or unusable keys from this address; wait ${retry} s.`, {}, { 'Retry-After': String(retry) });
    }
  }

  failed(ip: string, now = Date.now()): void {
    let c = this.counts.get(ip);
    if (!c || now - c.since >= 60_000) {
      if (this.counts.size > 50_000) this.counts.clear();
      c = { n: 1, since: now };
      this.counts.set(ip, c);
    } else c.n++;
    if (this.redis) {
      const key = this.redis.key(`fa:${ip}`);
      const entry = c;
      this.redis.client
        .multi()
        .incr(key)
        .pExpire(key, 60_000, 'NX')
        .pTTL(key)
        .exec()
        .then((r) => {
          const n = Number(r[0]);
          const ttl = Number(r[2]);
          if (n > entry.n) entry.n = n;
          if (ttl > 0) entry.since = Math.min(entry.since, Date.now() - (60_000 - ttl));
        })
        .catch(() => undefined);
    }
  }
}

/** Monthly quota, then count the request (memory, or Redis with REDIS_URL) and note the key's last use. Console previews are neither. */
export function quotaAndUsage(ctx: AppContext, template: string): RequestHandler {
  const quota = getQuotaService(ctx);
  const usage = getUsageRecorder(ctx);
  const keys = getKeyService(ctx);
  const count = (res: Response, key: KeyRecord, origin: string | null, now: number) => {
    usage.record(key.organizationId, key.id, template, now);
    keys.touch(key.id, now);
    countOutcome(res, key, origin, now);
  };
  const countOutcome = (res: Response, key: KeyRecord, origin: string | null, now: number) => {
    // The answer's status (errors count against the quota too, so the console shows them) and
    // the calling origin, once the answer is sent or the connection closes.
    let done = false;
    const outcome = () => {
      if (done) return;
      done = true;
      usage.recordOutcome(key.organizationId, key.id, template, now, res.statusCode, origin);
    };
    res.once('finish', outcome);
    res.once('close', outcome);
  };
  if (usage.shared) {
    // Several processes: the month counter and the count are in Redis, checked and added in one
    // script before the answer is sent (a process killed afterwards has lost nothing).
    return (_req, res, next) => {
      const { key, via, origin } = authOf(res);
      if (via === 'preview') {
        next();
        return;
      }
      const now = Date.now();
      return quota.countOrRefuse(key.organizationId, key.id, template, now).then(() => {
        keys.touch(key.id, now);
        // Answers per hour and status and the calling origin are this process's counts, as without Redis.
        countOutcome(res, key, origin, now);
        next();
      });
    };
  }
  return (_req, res, next) => {
    const { key, via, origin } = authOf(res);
    if (via === 'preview') {
      next();
      return;
    }
    const now = Date.now();
    const under = quota.underQuota(key.organizationId, now);
    if (under === true) {
      count(res, key, origin, now);
      next();
      return;
    }
    // Not cached yet, or spent: the full check reads what it needs and throws quota-exceeded.
    return quota.check(key.organizationId, new Date(now)).then(() => {
      count(res, key, origin, now);
      next();
    });
  };
}

/** OPTIONS: preflight for any origin, or checked against `?key=` / `?embed=` (or a preview token) when the URL holds one. */
export function preflight(ctx: AppContext): RequestHandler {
  return async (req, res) => {
    const origin = req.get('origin');
    const q = req.query as Record<string, unknown>;
    if (origin && (typeof q.key === 'string' || typeof q.embed === 'string')) {
      const cred = await resolveCredential(ctx, req);
      checkOrigin(ctx, req, cred);
    }
    if (origin) {
      res.setHeader('Access-Control-Allow-Methods', 'GET, HEAD, POST, OPTIONS');
      res.setHeader('Access-Control-Allow-Headers', req.get('access-control-request-headers') ?? 'Authorization, Content-Type, If-None-Match');
      res.setHeader('Access-Control-Max-Age', '600');
    }
    res.status(204).end();
  };
}
