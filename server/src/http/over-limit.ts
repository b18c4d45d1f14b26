/**
 * Over-limit requests are refused first. Once a key has spent its per-minute budget (the /v1
 * limiter says so), the rest of that window is known: every further request of the key answers
 * 429. This gate answers them at the front of the app, before the request logger, the router,
 * origin checks, the limiter and the problem handler, so a key flooding the server cannot slow
 * the others (docs/security.md, "Floods"). Refusals are counted and logged as one line per key a
 * minute, not one line a request.
 *
 * The gate is a small interface: this in-memory one serves one process; several processes that
 * share their limits elsewhere can share or replace it (the decision it caches ends with the
 * window, so each process may also keep its own).
 */
import type { RequestHandler } from 'express';
import { LRUCache } from 'lru-cache';
import type { Logger } from 'pino';
import type { AppContext } from '../context.ts';
import { PROBLEM_TYPE_BASE, PROBLEM_TYPES } from './problem.ts';

export interface OverLimit {
  /** Until when (Unix ms) the key is over its limit. */
  untilMs: number;
  limitPerMin: number;
  lastFour: string;
}

export interface OverLimitGate {
  /** The key's block, when it is over its limit now. */
  blocked(keyId: string, nowMs: number): OverLimit | undefined;
  /** The limiter refused this key until `untilMs`. */
  block(keyId: string, block: OverLimit): void;
  /** Count one refusal answered by the gate. */
  refused(keyId: string): void;
}

/** One process's gate: blocks by key id (bounded), refusals counted for the minute's log line. */
export class MemoryOverLimitGate implements OverLimitGate {
  private readonly blocks = new LRUCache<string, OverLimit>({ max: 10_000 });
  private readonly counts = new Map<string, { n: number; lastFour: string }>();

  blocked(keyId: string, nowMs: number): OverLimit | undefined {
    const b = this.blocks.get(keyId);
    if (!b) return undefined;
    if (b.untilMs <= nowMs) {
      this.blocks.delete(keyId);
      return undefined;
    }
    return b;
  }

  block(keyId: string, block: OverLimit): void {
    this.blocks.set(keyId, block);
  }

  refused(keyId: string): void {
    const c = this.counts.get(keyId);
    if (c) c.n++;
    else this.counts.set(keyId, { n: 1, lastFour: this.blocks.get(keyId)?.lastFour ?? '????' });
  }

  /** Refusals since the last call, per key id (then reset). */
  drainCounts(): Array<{ keyId: string; lastFour: string; refused: number }> {
    const out = [...this.counts].map(([keyId, c]) => ({ keyId, lastFour: c.lastFour, refused: c.n }));
    this.counts.clear();
    return out;
  }
}

/** The credential text of a /v1 request, read cheaply: a Bearer header, or `key=` in the query. */
function credentialText(authorization: string | undefined, url: string): string | undefined {
  if (authorization) {
    const m = /^Bearer\s+(\S+)\s*$/i.exec(authorization);
    return m?.[1];
  }
  const q = url.indexOf('?');
  if (q < 0) return undefined;
  const m = /[?&]key=([^&#]*)/.exec(url.slice(q));
  if (!m?.[1]) return undefined;
  try {
    return decodeURIComponent(m[1]);
  } catch {
    return undefined;
  }
}

const RATE_LIMITED = PROBLEM_TYPES['rate-limited'];
const EXPOSED = 'RateLimit, RateLimit-Policy, Retry-After, ETag, Location';

/**
 * Refuse /v1 requests of a key that is over its limit, before anything else runs. `keyIdOf`
 * maps a credential text to the id of a working key already known to this process (no hashing,
 * no database), or undefined: then the request goes on as usual.
 */
export function overLimitFront(gate: OverLimitGate, keyIdOf: (text: string) => string | undefined): RequestHandler {
  const checked = new WeakSet<object>();
  return (req, res, next) => {
    // Called twice per request when the server calls it before Express: check once.
    if (checked.has(req)) return next();
    checked.add(req);
    if (!req.url.startsWith('/v1/') || req.method === 'OPTIONS') return next();
    const text = credentialText(req.headers.authorization, req.url);
    const keyId = text === undefined ? undefined : keyIdOf(text);
    if (keyId === undefined) return next();
    const now = Date.now();
    const block = gate.blocked(keyId, now);
    if (!block) return next();
    gate.refused(keyId);
    const retry = Math.max(1, Math.ceil((block.untilMs - now) / 1000));
    const q = req.url.indexOf('?');
    const body = JSON.stringify({
      type: `${PROBLEM_TYPE_BASE}rate-limited`,
      title: RATE_LIMITED.title,
      status: RATE_LIMITED.status,
      detail: `This key allows ${block.limitPerMin} requests per minute; wait ${retry} s before the next one.`,
      code: 'rate-limited',
      instance: q < 0 ? req.url : req.url.slice(0, q),
      limitPerMin: block.limitPerMin,
    });
    const origin = req.headers.origin;
    if (origin) {
      res.setHeader('Access-Control-Allow-Origin', origin);
      res.setHeader('Access-Control-Expose-Headers', EXPOSED);
    }
    res.setHeader('Vary', 'Origin');
    res.setHeader('Cache-Control', 'no-store');
    res.setHeader('Retry-After', String(retry));
    res.setHeader('RateLimit', `limit=${block.limitPerMin}, remaining=0, reset=${retry}`);
    res.setHeader('RateLimit-Policy', `${block.limitPerMin};w=60`);
    res.setHeader('Content-Type', 'application/problem+json; charset=utf-8');
    res.setHeader('Content-Length', Buffer.byteLength(body));
    res.statusCode = RATE_LIMITED.status;
    res.end(body);
  };
}

/** Log the gate's refusals once a minute, one line per key (never the key text). */
export function logRefusals(gate: MemoryOverLimitGate, logger: Logger, everyMs = 60_000): () => void {
  const flush = () => {
    for (const c of gate.drainCounts()) logger.warn({ keyId: c.keyId, refused: c.refused }, `refused ${c.refused} requests of key …${c.lastFour} over its rate limit`);
  };
  const timer = setInterval(flush, everyMs);
  timer.unref();
  return () => {
    clearInterval(timer);
    flush();
  };
}

declare module '../context.ts' {
  interface AppServices {
    /** Set by getOverLimitGate (app.ts calls it at start-up). */
    overLimit?: MemoryOverLimitGate;
  }
}

/** The app's over-limit gate, created on first use; its refusals are logged a minute at a time. */
export function getOverLimitGate(ctx: AppContext): MemoryOverLimitGate {
  if (!ctx.services.overLimit) {
    const gate = new MemoryOverLimitGate();
    ctx.services.overLimit = gate;
    ctx.onClose(logRefusals(gate, ctx.logger));
  }
  return ctx.services.overLimit;
}
