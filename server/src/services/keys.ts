/**
 * API keys: browser keys (`nlb_…`, origin-locked, read-only) and server keys (`nls_…`, secret,
 * may carry `element-sets:write`). Only the SHA-256 of the text is stored, with its last four
 * characters; the full text is returned once by createKey / rotateKey.
 *
 * Exported API (ctx.services.keys is a KeyService):
 *   createKey({ organizationId, kind, name, origins?, scopes?, rateLimitPerMin?, expiresAt?, createdByUserId? })
 *       -> Promise<{ key: ApiKey, secret: string }>          (400 validation-failed on bad input)
 *   rotateKey(id, { name?, quietMinutes?, retireBy? }) -> Promise<{ key, secret, previous }>
 *       the new key works at once and the old one retires when quiet: it answers until no request
 *       has used it for quietMinutes (default 24 h; 0 = at once), and at the latest at retireBy
 *       (default in 14 days). Embeds that used the old key are moved to the new one.
 *   revokeKey(id) -> Promise<ApiKey>                           (immediate)
 *   deleteKey(id) -> Promise<{ key, stateBefore, lastUse }>    (409 key-in-use while an embed reads with it; the row stays,
 *                                                              marked deletedAt, so usage and activity keep its name)
 *   embedsReadingWith(id) -> Promise<Array<{ id, name }>>      (embeds on the key or on a key it replaced)
 *   updateKey(id, { name?, origins?, scopes?, rateLimitPerMin?, expiresAt? }) -> Promise<ApiKey>
 *   keyState(key, now?, lastUse?) -> 'active' | 'retiring' | 'retired' | 'expired' | 'revoked'
 *   retiresAt(key, lastUse?) -> Date | null                    (when a replaced key retires if no one calls it again)
 *   serializeKey(key, now?) -> KeyJson (the console's key object; lastUsedAt includes unflushed use)
 *   authenticate(text, now?) -> Promise<KeyRecord>             (throws HttpError invalid-key / key-*)
 *   findById(id) -> Promise<KeyRecord | null>                  (cached)
 *   originAllowed(record, origin) / normalizeOrigin(text)      (module functions)
 *
 * Records are cached in-process by hash and by id (KEY_CACHE_TTL_MS, least recently used evicted
 * first; unknown keys in a separate small cache, so guessed keys cannot evict working ones);
 * create, rotate, revoke and update drop the cached entries at once, here and (over the
 * invalidation channel, services/shared.ts) in every other process. lastUsedAt is kept in memory
 * and written in one batch every flush interval and on close: no database write on the request
 * path. The write only moves it forward, so processes flushing in any order never set it back.
 *
 * A key is rotated at most once: the replacement is stored only if the old key's row still has
 * no replacement when it is updated (a conditional UPDATE in the same transaction), so two
 * rotations at the same moment, on one process or two, give one new key and one 409.
 */
import crypto from 'node:crypto';
import { LRUCache } from 'lru-cache';
import { nanoid } from 'nanoid';
import { Op } from 'sequelize';
import { z } from 'zod';
import type { AppContext } from '../context.ts';
import { HttpError } from '../http/problem.ts';
import { ApiKey, Embed, KEY_KINDS, KEY_SCOPES, Organization, type KeyKind, type KeyScope } from '../models/index.ts';
import { planOf } from './quota.ts';
import { invalidationBus } from './shared.ts';
import type { ApiKey as ApiKeyJson, KeyInUseProblem, KeyState as KeyStateOfContract } from '@nadirline/shared/contract';

export const KEY_PREFIX: Record<KeyKind, string> = { browser: 'nlb_', server: 'nls_' };
/** Length of the random part of a key text (nanoid alphabet, ~190 bits). */
export const KEY_RANDOM_LENGTH = 32;
export const KEY_CACHE_TTL_MS = 30_000;
export const MAX_ORIGINS = 50;
/** A replaced key retires after this long without a request unless the owner picks another spell. */
export const DEFAULT_QUIET_MINUTES = 24 * 60;
export const MAX_QUIET_MINUTES = 30 * 24 * 60;
/** The latest retire-by date, unless the owner picks another, is this many days after the rotation. */
export const DEFAULT_RETIRE_BY_DAYS = 14;
export const MAX_RETIRE_BY_DAYS = 90;

export type KeyState = KeyStateOfContract;

/** Plain, immutable copy of an ApiKey row, as cached for the request path. */
export interface KeyRecord {
  id: string;
  organizationId: string;
  kind: KeyKind;
  name: string;
  hash: string;
  lastFour: string;
  origins: string[];
  scopes: KeyScope[];
  rateLimitPerMin: number;
  expiresAt: Date | null;
  revokedAt: Date | null;
  replacedById: string | null;
  /** Retire-by date of a replaced key (column graceUntil). */
  graceUntil: Date | null;
  replacedAt: Date | null;
  retireQuietMinutes: number | null;
  lastUsedAt: Date | null;
  createdByUserId: string | null;
  /** Deleted keys authenticate nothing (invalid-key). */
  deletedAt: Date | null;
  createdAt: Date;
}

/** The console's key object (GET /api/orgs/:org/keys) without `use`, which the key routes add: the contract's ApiKey. */
export type KeyJson = Omit<ApiKeyJson, 'use'>;

export function hashKeyText(text: string): string {
  return crypto.createHash('sha256').update(text, 'utf8').digest('hex');
}

export function kindOfKeyText(text: string): KeyKind | null {
  if (text.startsWith(KEY_PREFIX.browser)) return 'browser';
  if (text.startsWith(KEY_PREFIX.server)) return 'server';
  return null;
}

// ---------------------------------------------------------------------------------------------
// Origins: exact (`https://app.example.org`, `http://localhost:8080`) or wildcard subdomain
// (`https://*.example.org`, which matches any subdomain at any depth but not the apex itself).

const ORIGIN_RE = /^(https?):\/\/(\*\.)?([a-z0-9-]+(?:\.[a-z0-9-]+)*|\[[0-9a-f:.]+\])(?::(\d{1,5}))?$/;

/** Lower-cases and checks an allowed-origin entry; returns null when it is not an origin. */
export function normalizeOrigin(text: string): string | null {
  const t = text.trim().toLowerCase().replace(/\/$/, '');
  const m = ORIGIN_RE.exec(t);
  if (!m) return null;
  const [, scheme, wildcard, host, port] = m;
  if (port !== undefined && (Number(port) < 1 || Number(port) > 65535)) return null;
  if (wildcard && (host ?? '').split('.').length < 2) return null; // no `https://*.org`
  const defaultPort = scheme === 'https' ? '443' : '80';
  return `${scheme}://${wildcard ?? ''}${host}${port && port !== defaultPort ? `:${port}` : ''}`;
}

/** Does `origin` (from the request's Origin header) match one of the key's origins? */
export function originAllowed(allowed: readonly string[], origin: string): boolean {
  const o = normalizeOrigin(origin);
  if (!o || o.includes('*')) return false;
  for (const entry of allowed) {
    if (entry === o) return true;
    const star = entry.indexOf('://*.');
    if (star >= 0) {
      const scheme = entry.slice(0, star);
      const suffix = entry.slice(star + 4); // ".example.org[:port]"
      if (o.startsWith(`${scheme}://`) && o.endsWith(suffix) && o.length > scheme.length + 3 + suffix.length) return true;
    }
  }
  return false;
}

// ---------------------------------------------------------------------------------------------
// Input validation (the console route and the seed share it).

const originList = z
  .array(z.string().max(300))
  .max(MAX_ORIGINS)
  .transform((list, ctx) => {
    const out: string[] = [];
    list.forEach((entry, i) => {
      const n = normalizeOrigin(entry);
      if (!n) {
        ctx.addIssue({
          code: 'custom',
          path: [i],
          message: `"${entry}" is not an origin: use scheme://host[:port], e.g. https://www.example.org or https://*.example.org`,
        });
      } else if (!out.includes(n)) out.push(n);
    });
    return out;
  });

export const keyInputSchema = z.object({
  kind: z.enum(KEY_KINDS),
  name: z.string().trim().min(1).max(200),
  origins: originList.optional(),
  scopes: z.array(z.enum(KEY_SCOPES)).max(KEY_SCOPES.length).optional(),
  rateLimitPerMin: z.number().int().min(1).max(100_000).optional(),
  expiresAt: z.coerce
    .date({ message: 'Give a date and time, e.g. 2026-12-31T23:59:00Z.' })
    .refine((d) => d.getTime() > Date.now(), { message: 'Choose a time in the future: a key that has already expired would refuse every request.' })
    .nullable()
    .optional(),
});
export const keyUpdateSchema = keyInputSchema.omit({ kind: true }).partial();

export interface CreateKeyInput {
  organizationId: string;
  kind: KeyKind;
  name: string;
  origins?: string[] | undefined;
  scopes?: KeyScope[] | undefined;
  rateLimitPerMin?: number | undefined;
  expiresAt?: Date | string | null | undefined;
  createdByUserId?: string | null | undefined;
}
export type UpdateKeyInput = Partial<Pick<CreateKeyInput, 'name' | 'origins' | 'scopes' | 'rateLimitPerMin' | 'expiresAt'>>;

function validationError(error: z.ZodError, what: string): HttpError {
  return new HttpError('validation-failed', `The ${what} is not valid: ${error.issues.map((i) => `${i.path.join('.') || '(body)'}: ${i.message}`).join('; ')}`, {
    errors: error.issues.map((i) => ({ where: i.path.join('.') || '(body)', field: String(i.path[0] ?? ''), message: i.message })),
  });
}

/** Scope rules: every key reads; only server keys may write element sets. */
function checkScopes(kind: KeyKind, scopes: KeyScope[]): KeyScope[] {
  const set = new Set<KeyScope>(['read', ...scopes]);
  if (kind === 'browser' && set.has('element-sets:write')) {
    throw new HttpError('validation-failed', 'Browser keys are read-only: the element-sets:write scope needs a server key.', {
      errors: [{ where: 'scopes', field: 'scopes', message: 'browser keys cannot carry element-sets:write' }],
    });
  }
  return KEY_SCOPES.filter((s) => set.has(s));
}

function checkBrowserOrigins(kind: KeyKind, origins: string[]): void {
  if (kind === 'browser' && origins.length === 0) {
    throw new HttpError('validation-failed', 'A browser key needs at least one allowed origin (e.g. https://www.example.org).', {
      errors: [{ where: 'origins', field: 'origins', message: 'at least one origin is required for a browser key' }],
    });
  }
}

export function toRecord(k: ApiKey): KeyRecord {
  return {
    id: k.id,
    organizationId: k.organizationId,
    kind: k.kind,
    name: k.name,
    hash: k.hash,
    lastFour: k.lastFour,
    origins: [...(k.origins ?? [])],
    scopes: [...(k.scopes ?? [])],
    rateLimitPerMin: k.rateLimitPerMin,
    expiresAt: k.expiresAt ? new Date(k.expiresAt) : null,
    revokedAt: k.revokedAt ? new Date(k.revokedAt) : null,
    replacedById: k.replacedById,
    graceUntil: k.graceUntil ? new Date(k.graceUntil) : null,
    replacedAt: k.replacedAt ? new Date(k.replacedAt) : null,
    retireQuietMinutes: k.retireQuietMinutes ?? null,
    lastUsedAt: k.lastUsedAt ? new Date(k.lastUsedAt) : null,
    createdByUserId: k.createdByUserId,
    deletedAt: k.deletedAt ? new Date(k.deletedAt) : null,
    createdAt: new Date(k.createdAt),
  };
}

type KeyLike = Pick<KeyRecord, 'revokedAt' | 'expiresAt' | 'replacedById' | 'graceUntil' | 'createdAt' | 'lastUsedAt'> &
  Partial<Pick<KeyRecord, 'replacedAt' | 'retireQuietMinutes'>>;

const ms = (d: Date | string | null | undefined): number | null => (d ? new Date(d).getTime() : null);

/**
 * When a replaced key retires if nothing calls it again: `retireQuietMinutes` after its last use
 * (or after the replacement, when it was not used since), and at the latest at its retire-by
 * date. A request refused after that does not count as use, so the answer cannot move back.
 * Null for a key that was not replaced.
 */
export function retiresAt(key: KeyLike, lastUse: Date | null = key.lastUsedAt ? new Date(key.lastUsedAt) : null): Date | null {
  if (!key.replacedById) return null;
  const replaced = ms(key.replacedAt) ?? ms(key.createdAt) ?? 0;
  const quiet = key.retireQuietMinutes;
  const quietEnd = quiet === null || quiet === undefined ? Number.POSITIVE_INFINITY : Math.max(replaced, ms(lastUse) ?? 0) + quiet * 60_000;
  const by = ms(key.graceUntil) ?? Number.POSITIVE_INFINITY;
  const end = Math.min(quietEnd, by);
  return new Date(Number.isFinite(end) ? end : replaced);
}

/** State of a key at `now`; `lastUse` (default the stored lastUsedAt) decides when a replaced key is quiet. */
export function keyState(key: KeyLike, now: Date = new Date(), lastUse?: Date | null): KeyState {
  const t = now.getTime();
  if (key.revokedAt) return 'revoked';
  if (key.expiresAt && new Date(key.expiresAt).getTime() <= t) return 'expired';
  if (key.replacedById) {
    const end = retiresAt(key, lastUse === undefined ? undefined : lastUse);
    return end && end.getTime() > t ? 'retiring' : 'retired';
  }
  return 'active';
}

function quietText(minutes: number): string {
  if (minutes === 0) return 'at once';
  if (minutes % 1440 === 0) return `after ${minutes / 1440} ${minutes === 1440 ? 'day' : 'days'} without use`;
  if (minutes % 60 === 0) return `after ${minutes / 60} ${minutes === 60 ? 'hour' : 'hours'} without use`;
  return `after ${minutes} minutes without use`;
}

/** Throws the problem a key in a non-working state answers with; returns when it works. */
export function assertKeyWorks(key: KeyRecord, now: Date = new Date(), lastUse?: Date | null): void {
  const t = now.getTime();
  if (key.deletedAt) {
    throw new HttpError('invalid-key', `The key ending in …${key.lastFour} was deleted on ${key.deletedAt.toISOString()}; use a current key from the console.`);
  }
  if (key.revokedAt) {
    throw new HttpError('key-revoked', `This key (…${key.lastFour}) was revoked on ${key.revokedAt.toISOString()}.`);
  }
  if (key.expiresAt && key.expiresAt.getTime() <= t) {
    throw new HttpError('key-expired', `This key (…${key.lastFour}) expired on ${key.expiresAt.toISOString()}.`, {
      expiredAt: key.expiresAt.toISOString(),
    });
  }
  if (key.replacedById) {
    const end = retiresAt(key, lastUse === undefined ? undefined : lastUse);
    if (end && end.getTime() <= t) {
      const by = key.graceUntil && key.graceUntil.getTime() === end.getTime();
      const how = by || key.retireQuietMinutes === null ? 'on its retire-by date' : quietText(key.retireQuietMinutes);
      throw new HttpError(
        'key-rotated',
        `This key (…${key.lastFour}) was replaced by a new key and retired ${how}, on ${end.toISOString()}. Use the key that replaced it; the console's key list shows which one.`,
        { stoppedAt: end.toISOString() },
      );
    }
  }
}

export const rotateInputSchema = z.object({
  name: z.string().trim().min(1).max(200).optional(),
  quietMinutes: z
    .number({ message: 'Give the quiet spell in whole minutes.' })
    .int({ message: 'Give the quiet spell in whole minutes.' })
    .min(0, { message: 'The quiet spell cannot be negative (0 retires the old key at once).' })
    .max(MAX_QUIET_MINUTES, { message: `The quiet spell is at most ${MAX_QUIET_MINUTES / 1440} days.` })
    .optional(),
  retireBy: z.coerce
    .date({ message: 'Give a date and time, e.g. 2026-12-31T23:59:00Z.' })
    .refine((d) => d.getTime() > Date.now(), { message: 'Choose a retire-by time in the future.' })
    .refine((d) => d.getTime() <= Date.now() + MAX_RETIRE_BY_DAYS * 86_400_000 + 60_000, { message: `Choose a retire-by time at most ${MAX_RETIRE_BY_DAYS} days ahead.` })
    .optional(),
});
export type RotateKeyInput = z.input<typeof rotateInputSchema>;

const iso = (d: Date | null): string | null => (d ? new Date(d).toISOString() : null);

interface CacheEntry {
  record: KeyRecord | null;
  at: number;
}

/** Key records cached, and key texts whose hash is kept: the working keys of many sites. */
export const KEY_CACHE_MAX = 10_000;
/** Unknown key hashes remembered (for UNKNOWN_KEY_TTL_MS), apart from the working keys. */
export const UNKNOWN_KEY_CACHE_MAX = 1_000;
export const UNKNOWN_KEY_TTL_MS = 5_000;

export class KeyService {
  /**
   * Working keys by hash and by id (least recently used go first). Unknown keys live in their own
   * small cache, so a flood of guessed keys can neither evict a working key nor grow memory.
   */
  private readonly byHash = new LRUCache<string, CacheEntry>({ max: KEY_CACHE_MAX });
  private readonly byId = new LRUCache<string, CacheEntry>({ max: KEY_CACHE_MAX });
  private readonly unknown = new LRUCache<string, true>({ max: UNKNOWN_KEY_CACHE_MAX, ttl: UNKNOWN_KEY_TTL_MS, ttlAutopurge: false });
  /** SHA-256 of working key texts (hashing is a tenth of a cached request's CPU time); unknown texts are hashed each time. */
  private readonly hashes = new LRUCache<string, string>({ max: KEY_CACHE_MAX });
  /** lastUsedAt not yet written, by key id. */
  private readonly pendingUse = new Map<string, number>();
  private timer: NodeJS.Timeout | undefined;

  constructor(private readonly ctx: AppContext) {
    invalidationBus(ctx).on((msg) => {
      if (msg.t === 'key') this.forget(msg);
      else if (msg.t === 'org') this.forgetOrganization(msg.orgId);
      else if (msg.t === 'all') {
        this.byHash.clear();
        this.byId.clear();
        this.unknown.clear();
      }
    });
    this.timer = setInterval(() => void this.flushLastUsed(), ctx.config.USAGE_FLUSH_MS);
    this.timer.unref();
    ctx.onClose(async () => {
      clearInterval(this.timer);
      this.timer = undefined;
      await this.flushLastUsed();
    });
  }

  async createKey(input: CreateKeyInput): Promise<{ key: ApiKey; secret: string }> {
    const parsed = keyInputSchema.safeParse({
      kind: input.kind,
      name: input.name,
      origins: input.origins,
      scopes: input.scopes,
      rateLimitPerMin: input.rateLimitPerMin,
      expiresAt: input.expiresAt,
    });
    if (!parsed.success) throw validationError(parsed.error, 'key');
    const v = parsed.data;
    const origins = v.origins ?? [];
    checkBrowserOrigins(v.kind, origins);
    const scopes = checkScopes(v.kind, v.scopes ?? ['read']);
    let rate = v.rateLimitPerMin;
    if (rate === undefined) {
      const org = await Organization.findByPk(input.organizationId);
      if (!org) throw new HttpError('not-found', `Organization ${input.organizationId} does not exist.`);
      rate = planOf(org.plan).defaultRateLimitPerMin;
    }
    const secret = `${KEY_PREFIX[v.kind]}${nanoid(KEY_RANDOM_LENGTH)}`;
    const key = await ApiKey.create({
      id: `key_${nanoid(16)}`,
      organizationId: input.organizationId,
      kind: v.kind,
      name: v.name,
      hash: hashKeyText(secret),
      lastFour: secret.slice(-4),
      origins,
      scopes,
      rateLimitPerMin: rate,
      expiresAt: v.expiresAt ?? null,
      revokedAt: null,
      replacedById: null,
      graceUntil: null,
      replacedAt: null,
      retireQuietMinutes: null,
      lastUsedAt: null,
      createdByUserId: input.createdByUserId ?? null,
    });
    this.invalidate(key);
    return { key, secret };
  }

  /**
   * New secret with the same settings and a name of its own; the old key retires when quiet.
   * Embeds that read with the old key read with the new one from now on.
   */
  async rotateKey(id: string, input: RotateKeyInput = {}, createdByUserId: string | null = null): Promise<{ key: ApiKey; secret: string; previous: ApiKey; embedsMoved: number }> {
    const parsed = rotateInputSchema.safeParse(input);
    if (!parsed.success) throw validationError(parsed.error, 'rotation');
    const old = await ApiKey.findByPk(id);
    if (!old) throw new HttpError('not-found', `Key ${id} does not exist.`);
    const state = keyState(old, new Date(), this.lastUse(old));
    if (state === 'revoked') throw new HttpError('conflict', 'A revoked key cannot be rotated; create a new key instead.');
    if (old.replacedById) throw new HttpError('conflict', `This key was already replaced; rotate its replacement (${old.replacedById}) instead.`);
    if (state === 'expired') throw new HttpError('conflict', 'An expired key cannot be rotated; create a new key instead.');
    const name = parsed.data.name ?? `${old.name} (new)`;
    if (name === old.name) {
      throw new HttpError('validation-failed', 'Give the new key a name of its own, so the two keys can be told apart while the old one retires.', {
        errors: [{ where: 'name', field: 'name', message: 'must differ from the name of the key it replaces' }],
      });
    }
    const now = Date.now();
    const quietMinutes = parsed.data.quietMinutes ?? DEFAULT_QUIET_MINUTES;
    const retireBy = parsed.data.retireBy ?? new Date(now + DEFAULT_RETIRE_BY_DAYS * 86_400_000);
    const secret = `${KEY_PREFIX[old.kind]}${nanoid(KEY_RANDOM_LENGTH)}`;
    const { key, embedsMoved } = await this.ctx.sequelize.transaction(async (transaction) => {
      const created = await ApiKey.create(
        {
          id: `key_${nanoid(16)}`,
          organizationId: old.organizationId,
          kind: old.kind,
          name,
          hash: hashKeyText(secret),
          lastFour: secret.slice(-4),
          origins: [...old.origins],
          scopes: [...old.scopes],
          rateLimitPerMin: old.rateLimitPerMin,
          expiresAt: old.expiresAt,
          revokedAt: null,
          replacedById: null,
          graceUntil: null,
          replacedAt: null,
          retireQuietMinutes: null,
          lastUsedAt: null,
          createdByUserId: createdByUserId ?? old.createdByUserId,
        },
        { transaction },
      );
      // Only if no other rotation got there first (this process or another): at most one replacement.
      const [changed] = await ApiKey.update(
        { replacedById: created.id, replacedAt: new Date(now), retireQuietMinutes: quietMinutes, graceUntil: retireBy },
        { where: { id: old.id, replacedById: null, revokedAt: null }, transaction },
      );
      if (changed !== 1) throw new HttpError('conflict', 'This key was rotated or revoked meanwhile; reload the key list to see its replacement.');
      await old.reload({ transaction });
      const [moved] = await Embed.update({ apiKeyId: created.id }, { where: { apiKeyId: old.id, organizationId: old.organizationId }, transaction });
      return { key: created, embedsMoved: moved };
    });
    this.invalidate(old);
    this.invalidate(key);
    return { key, secret, previous: old, embedsMoved };
  }

  /** Last use of a key, counting use not yet written. */
  lastUse(key: { id: string; lastUsedAt: Date | null }): Date | null {
    const pending = this.pendingUse.get(key.id);
    const stored = key.lastUsedAt ? new Date(key.lastUsedAt).getTime() : null;
    const t = Math.max(pending ?? 0, stored ?? 0);
    return t > 0 ? new Date(t) : null;
  }

  /**
   * The key an embed reads with: its own key, or the current successor when that key was replaced
   * (embeds follow a rotation at once, even before their row is moved or their cache is fresh).
   */
  async currentSuccessor(id: string): Promise<KeyRecord | null> {
    let record = await this.findById(id);
    for (let hops = 0; record?.replacedById && hops < 20; hops++) {
      const next = await this.findById(record.replacedById);
      if (!next) break;
      record = next;
    }
    return record;
  }

  /** currentSuccessor from the cache only; undefined when something is not cached. */
  cachedSuccessor(id: string): KeyRecord | undefined {
    let record = this.cachedById(id);
    for (let hops = 0; record?.replacedById && hops < 20; hops++) {
      record = this.cachedById(record.replacedById);
    }
    return record;
  }

  async revokeKey(id: string): Promise<ApiKey> {
    const key = await ApiKey.findByPk(id);
    if (!key) throw new HttpError('not-found', `Key ${id} does not exist.`);
    if (!key.revokedAt) {
      await ApiKey.update({ revokedAt: new Date() }, { where: { id, revokedAt: null } });
      await key.reload();
    }
    this.invalidate(key);
    return key;
  }

  /**
   * The embeds that read with a key: those on the key itself and those on a key it replaced
   * (an embed follows its key's replacements), by name.
   */
  async embedsReadingWith(id: string): Promise<KeyInUseProblem['embeds']> {
    const chain = new Set([id]);
    let frontier = [id];
    for (let hops = 0; frontier.length > 0 && hops < 20; hops++) {
      const older = await ApiKey.findAll({ where: { replacedById: frontier }, attributes: ['id'] });
      frontier = older.map((k) => k.id).filter((k) => !chain.has(k));
      for (const k of frontier) chain.add(k);
    }
    const embeds = await Embed.findAll({ where: { apiKeyId: [...chain] }, attributes: ['id', 'name'], order: [['name', 'ASC']] });
    return embeds.map((e) => ({ id: e.id, name: e.name }));
  }

  /**
   * Delete a key: it stops authenticating at once and leaves the key list. Refused (409
   * key-in-use, naming the embeds) while an embed reads with it, so no embed is left without a
   * key. The row stays with `deletedAt` set, so usage reports, the activity log and uploaded
   * element sets keep the key's name; the text can never be used again.
   */
  async deleteKey(id: string, now: Date = new Date()): Promise<{ key: ApiKey; stateBefore: KeyState; lastUse: Date | null }> {
    const key = await ApiKey.findByPk(id);
    if (!key || key.deletedAt) throw new HttpError('not-found', `Key ${id} does not exist.`);
    const lastUse = this.lastUse(key);
    const stateBefore = keyState(key, now, lastUse);
    const inUse = (embeds: KeyInUseProblem['embeds']) =>
      new HttpError(
        'key-in-use',
        `“${key.name}” is the key of ${embeds.length === 1 ? 'the embed' : `${embeds.length} embeds:`} ${embeds.map((e) => `“${e.name}” (${e.id})`).join(', ')}. Choose another browser key for ${embeds.length === 1 ? 'it' : 'them'} in the embed builder first, then delete this key; an embed without a key shows nothing.`,
        { embeds } satisfies Pick<KeyInUseProblem, 'embeds'>,
      );
    const before = await this.embedsReadingWith(key.id);
    if (before.length > 0) throw inUse(before);
    await this.ctx.sequelize.transaction(async (transaction) => {
      const [changed] = await ApiKey.update({ deletedAt: now }, { where: { id: key.id, deletedAt: null }, transaction });
      if (changed !== 1) throw new HttpError('not-found', `Key ${id} does not exist.`);
      // An embed given this key meanwhile keeps it: look again inside the transaction.
      const during = await Embed.count({ where: { apiKeyId: key.id }, transaction });
      if (during > 0) throw inUse(await this.embedsReadingWith(key.id));
    });
    await key.reload();
    this.invalidate(key);
    return { key, stateBefore, lastUse };
  }

  async updateKey(id: string, input: UpdateKeyInput): Promise<ApiKey> {
    const parsed = keyUpdateSchema.safeParse(input);
    if (!parsed.success) throw validationError(parsed.error, 'key');
    const key = await ApiKey.findByPk(id);
    if (!key) throw new HttpError('not-found', `Key ${id} does not exist.`);
    const v = parsed.data;
    const patch: Partial<Pick<ApiKey, 'name' | 'origins' | 'scopes' | 'rateLimitPerMin' | 'expiresAt'>> = {};
    if (v.name !== undefined) patch.name = v.name;
    if (v.origins !== undefined) {
      checkBrowserOrigins(key.kind, v.origins);
      patch.origins = v.origins;
    }
    if (v.scopes !== undefined) patch.scopes = checkScopes(key.kind, v.scopes);
    if (v.rateLimitPerMin !== undefined) patch.rateLimitPerMin = v.rateLimitPerMin;
    if (v.expiresAt !== undefined) patch.expiresAt = v.expiresAt;
    await key.update(patch);
    this.invalidate(key);
    return key;
  }

  /** Resolve a key text for a request (cached). Throws invalid-key / key-revoked / key-rotated / key-expired. */
  async authenticate(text: string, now: Date = new Date()): Promise<KeyRecord> {
    const hit = this.authenticateCached(text, now);
    if (hit) return hit;
    const record = await this.lookup(hashKeyText(text));
    return this.checked(text, record, now);
  }

  /**
   * The request path's fast lane: the working key record from the cache, or undefined when the
   * cache does not know this text (then call authenticate). Throws the same problems.
   */
  authenticateCached(text: string, now: Date = new Date()): KeyRecord | undefined {
    if (!kindOfKeyText(text) || text.length > 100) {
      throw new HttpError('invalid-key', 'The key is not a Nadirline key: keys start with nlb_ (browser) or nls_ (server).');
    }
    const hash = this.hashes.get(text) ?? hashKeyText(text);
    const hit = this.byHash.get(hash);
    if (hit && Date.now() - hit.at < KEY_CACHE_TTL_MS) {
      if (hit.record) this.hashes.set(text, hash);
      return this.checked(text, hit.record, now);
    }
    if (this.unknown.has(hash)) return this.checked(text, null, now);
    return undefined;
  }

  private checked(text: string, record: KeyRecord | null, now: Date): KeyRecord {
    if (!record) throw new HttpError('invalid-key', `No key ending in …${text.slice(-4)} exists. Check that it was copied whole.`);
    assertKeyWorks(record, now, record.replacedById ? this.lastUse(record) : undefined);
    return record;
  }

  /** Record use of a key; written to lastUsedAt at the next flush. */
  touch(keyId: string, at: Date | number = Date.now()): void {
    this.pendingUse.set(keyId, typeof at === 'number' ? at : at.getTime());
  }

  async findById(id: string): Promise<KeyRecord | null> {
    const hit = this.byId.get(id);
    if (hit && Date.now() - hit.at < KEY_CACHE_TTL_MS) return hit.record;
    const row = await ApiKey.findByPk(id);
    const record = row ? toRecord(row) : null;
    this.byId.set(id, { record, at: Date.now() });
    if (record) this.byHash.set(record.hash, { record, at: Date.now() });
    return record;
  }

  /** The cached record of a key id, without waiting; undefined when not cached or too old. */
  cachedById(id: string): KeyRecord | undefined {
    const hit = this.byId.get(id);
    return hit?.record && Date.now() - hit.at < KEY_CACHE_TTL_MS ? hit.record : undefined;
  }

  /** Drop cached entries of a key here and in every other process (after any change to it). */
  invalidate(key: { id: string; hash: string }): void {
    this.forget(key);
    invalidationBus(this.ctx).publish({ t: 'key', id: key.id, hash: key.hash });
  }

  /** Drop this process's cached entries of a key. */
  forget(key: { id: string; hash: string }): void {
    this.byHash.delete(key.hash);
    this.byId.delete(key.id);
    this.unknown.delete(key.hash);
  }

  /** Drop every cached key of an organization (it was deleted). */
  forgetOrganization(orgId: string): void {
    for (const [hash, e] of [...this.byHash.entries()]) if (e.record?.organizationId === orgId) this.byHash.delete(hash);
    for (const [id, e] of [...this.byId.entries()]) if (e.record?.organizationId === orgId) this.byId.delete(id);
  }

  serializeKey(key: ApiKey | KeyRecord, now: Date = new Date()): KeyJson {
    return serializeKey(key, now, this.lastUse(key));
  }

  async flushLastUsed(): Promise<void> {
    if (this.pendingUse.size === 0) return;
    const batch = [...this.pendingUse];
    this.pendingUse.clear();
    try {
      for (const [id, at] of batch) {
        const when = new Date(at);
        await ApiKey.update({ lastUsedAt: when }, { where: { id, [Op.or]: [{ lastUsedAt: null }, { lastUsedAt: { [Op.lt]: when } }] }, silent: true });
      }
    } catch (err) {
      for (const [id, at] of batch) if (!this.pendingUse.has(id)) this.pendingUse.set(id, at);
      this.ctx.logger.error({ err }, 'could not write key lastUsedAt');
    }
  }

  private async lookup(hash: string): Promise<KeyRecord | null> {
    const hit = this.byHash.get(hash);
    if (hit && Date.now() - hit.at < KEY_CACHE_TTL_MS) return hit.record;
    if (this.unknown.has(hash)) return null;
    const row = await ApiKey.findOne({ where: { hash } });
    const record = row ? toRecord(row) : null;
    if (!record) {
      this.unknown.set(hash, true);
      return null;
    }
    this.byHash.set(hash, { record, at: Date.now() });
    this.byId.set(record.id, { record, at: Date.now() });
    return record;
  }

  /**
   * The id of a working key already cached for this exact text, without hashing or a database
   * read; undefined otherwise (the front of the app uses it to refuse over-limit keys early).
   */
  cachedKeyIdFor(text: string): string | undefined {
    const hash = this.hashes.get(text);
    if (hash === undefined) return undefined;
    const hit = this.byHash.get(hash);
    return hit?.record && Date.now() - hit.at < KEY_CACHE_TTL_MS ? hit.record.id : undefined;
  }

  /** How many keys each cache holds (for tests and diagnostics). */
  cacheSizes(): { known: number; unknown: number; hashes: number } {
    return { known: this.byHash.size, unknown: this.unknown.size, hashes: this.hashes.size };
  }
}

export function serializeKey(key: ApiKey | KeyRecord, now: Date = new Date(), lastUse?: Date | null): KeyJson {
  const lastUsed = lastUse ?? (key.lastUsedAt ? new Date(key.lastUsedAt) : null);
  return {
    id: key.id,
    kind: key.kind,
    name: key.name,
    lastFour: key.lastFour,
    origins: [...key.origins],
    scopes: [...key.scopes],
    rateLimitPerMin: key.rateLimitPerMin,
    expiresAt: iso(key.expiresAt),
    revokedAt: iso(key.revokedAt),
    replacedById: key.replacedById,
    replacesId: null,
    replacedAt: iso(key.replacedAt ?? null),
    retireQuietMinutes: key.replacedById ? (key.retireQuietMinutes ?? null) : null,
    retireBy: key.replacedById ? iso(key.graceUntil) : null,
    retiresAt: iso(retiresAt(key, lastUsed)),
    lastUsedAt: iso(lastUsed),
    createdAt: new Date(key.createdAt).toISOString(),
    state: keyState(key, now, lastUsed),
  };
}

declare module '../context.ts' {
  interface AppServices {
    /** Set by getKeyService (app.ts calls it at start-up). */
    keys?: KeyService;
  }
}

/** The app's KeyService, created on first use. */
export function getKeyService(ctx: AppContext): KeyService {
  ctx.services.keys ??= new KeyService(ctx);
  return ctx.services.keys;
}
