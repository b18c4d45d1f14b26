/**
 * Embeds: saved widget configurations. An embed is also a read credential: `?embed=<id>` on a
 * /v1 GET is resolved to the embed's browser key (origins, rate limit, quota, usage of that key)
 * and limits reads to the embed's satellites.
 *
 * Exported API (ctx.services.embeds is an EmbedService):
 *   listEmbeds(orgId) -> Promise<Embed[]>
 *   getEmbed(orgId, id) -> Promise<Embed>                        (404 not-found)
 *   createEmbed(orgId, { name, satelliteIds, options?, apiKeyId }) -> Promise<Embed>   (400 validation-failed)
 *   updateEmbed(orgId, id, { name?, satelliteIds?, options?, apiKeyId? }) -> Promise<Embed>
 *   deleteEmbed(orgId, id) -> Promise<void>
 *   serializeEmbed(embed) -> { id, name, satelliteIds, options, apiKeyId, updatedAt }
 *   publicEmbed(embed) -> { id, name, satellites, options }      (the GET /v1/embeds/{id} answer)
 *   resolveForRead(id) -> Promise<{ embed: EmbedRecord, key: KeyRecord }>   (cached; the key is the current successor
 *                         of the embed's key when that was replaced; invalid-key / key problems;
 *                         an unknown id: invalid-key with reason EMBED_NOT_FOUND)
 *   resolveForReadCached(id) -> the same or undefined, without waiting (request fast path)
 *   embedOptionsSchema, embedInputSchema (zod)
 */
import { LRUCache } from 'lru-cache';
import { customAlphabet } from 'nanoid';
import { z } from 'zod';
import type { AppContext } from '../context.ts';
import { HttpError } from '../http/problem.ts';
import { ApiKey, Embed, Satellite } from '../models/index.ts';
import { invalidationBus } from './shared.ts';
import { assertKeyWorks, getKeyService, type KeyRecord, type KeyService } from './keys.ts';
import type { SavedEmbed, V1Embed } from '@nadirline/shared/contract';

/** Embed ids: 12 characters, letters and digits only (safe in URLs and attributes). */
export const newEmbedId = customAlphabet('23456789abcdefghijkmnpqrstuvwxyz', 12);
export const EMBED_CACHE_TTL_MS = 30_000;
export const MAX_EMBED_SATELLITES = 50;
/** `reason` of the invalid-key problem for an embed id that names no embed (GET /v1/embeds/{id} answers 404 instead). */
export const EMBED_NOT_FOUND = 'embed-not-found';

const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)$/;

/**
 * Problems with an observer text as the widget takes it ("lat,lon[,altM]" in degrees and metres,
 * "auto", or empty for none); an empty list when it is fine.
 */
export function observerProblems(text: string): string[] {
  const t = text.trim();
  if (t === '' || t === 'auto') return [];
  const parts = t.split(',').map((p) => p.trim());
  if (parts.length < 2 || parts.length > 3) return [`"${t}" is not an observer: give latitude,longitude[,altitude in metres], e.g. 51.48,-0.01,45, or auto`];
  const [lat = '', lon = '', alt] = parts;
  const out: string[] = [];
  if (!NUMBER.test(lat) || Math.abs(Number(lat)) > 90) out.push(`latitude "${lat}" is not a number from -90 to 90`);
  if (!NUMBER.test(lon) || Math.abs(Number(lon)) > 180) out.push(`longitude "${lon}" is not a number from -180 to 180 (east positive)`);
  if (alt !== undefined && (!NUMBER.test(alt) || Number(alt) < -500 || Number(alt) > 10_000)) out.push(`altitude "${alt}" is not a number of metres from -500 to 10000`);
  return out;
}

export const embedOptionsSchema = z
  .looseObject({
    projection: z.enum(['equal-earth', 'globe']).optional(),
    orbitsBehind: z.number().min(0).max(10).optional(),
    orbitsAhead: z.number().min(0).max(10).optional(),
    observer: z.string().max(100).optional(),
    layers: z.array(z.string().max(40)).max(20).optional(),
    theme: z.enum(['light', 'dark', 'auto']).optional(),
    timeZone: z.string().max(60).optional(),
    locale: z.string().max(35).optional(),
    width: z.string().max(40).optional(),
    height: z.string().max(40).optional(),
  })
  .refine((o) => JSON.stringify(o).length <= 8_000, { message: 'options are too large (8 000 characters of JSON at most)' })
  .superRefine((o, ctx) => {
    for (const message of observerProblems(o.observer ?? '')) ctx.addIssue({ code: 'custom', path: ['observer'], message });
    if (o.layers?.includes('passes') && !(o.observer ?? '').trim()) {
      ctx.addIssue({ code: 'custom', path: ['observer'], message: 'the passes layer needs an observer: a fixed place (latitude,longitude) or auto; or turn passes off' });
    }
  });

export const embedInputSchema = z.object({
  name: z.string().trim().min(1).max(200),
  satelliteIds: z.array(z.string().min(1).max(40)).min(1).max(MAX_EMBED_SATELLITES),
  options: embedOptionsSchema.default({}),
  apiKeyId: z.string().min(1).max(40),
});
export const embedUpdateSchema = z.object({
  name: embedInputSchema.shape.name.optional(),
  satelliteIds: embedInputSchema.shape.satelliteIds.optional(),
  options: embedOptionsSchema.optional(),
  apiKeyId: embedInputSchema.shape.apiKeyId.optional(),
});

export interface EmbedRecord {
  id: string;
  organizationId: string;
  name: string;
  satelliteIds: string[];
  options: Record<string, unknown>;
  apiKeyId: string | null;
  updatedAt: Date;
}

function invalid(error: z.ZodError): HttpError {
  return new HttpError('validation-failed', `The embed is not valid: ${error.issues.map((i) => `${i.path.join('.') || '(body)'}: ${i.message}`).join('; ')}`, {
    errors: error.issues.map((i) => ({ where: i.path.join('.') || '(body)', field: i.path.slice(0, 2).join('.'), message: i.message })),
  });
}

function toRecord(e: Embed): EmbedRecord {
  return {
    id: e.id,
    organizationId: e.organizationId,
    name: e.name,
    satelliteIds: [...e.satelliteIds],
    options: { ...e.options },
    apiKeyId: e.apiKeyId,
    updatedAt: new Date(e.updatedAt),
  };
}

export function serializeEmbed(e: Embed | EmbedRecord): SavedEmbed {
  return {
    id: e.id,
    name: e.name,
    satelliteIds: [...e.satelliteIds],
    options: { ...e.options },
    apiKeyId: e.apiKeyId,
    updatedAt: new Date(e.updatedAt).toISOString(),
  };
}

export function publicEmbed(e: Embed | EmbedRecord): V1Embed {
  return { id: e.id, name: e.name, satellites: [...e.satelliteIds], options: { ...e.options } };
}

export class EmbedService {
  /** Embeds by id (least recently used go first); unknown ids in their own small cache, so guessed ids cannot evict real ones. */
  private readonly cache = new LRUCache<string, { record: EmbedRecord; at: number }>({ max: 10_000 });
  private readonly unknown = new LRUCache<string, true>({ max: 1_000, ttl: 5_000 });

  constructor(
    private readonly ctx: AppContext,
    private readonly keys: KeyService,
  ) {
    invalidationBus(ctx).on((msg) => {
      if (msg.t === 'embed') this.cache.delete(msg.id);
      else if (msg.t === 'org') {
        for (const [id, e] of this.cache) if (e.record?.organizationId === msg.orgId) this.cache.delete(id);
      } else if (msg.t === 'all') this.cache.clear();
    });
  }

  listEmbeds(orgId: string): Promise<Embed[]> {
    return Embed.findAll({ where: { organizationId: orgId }, order: [['updatedAt', 'DESC']] });
  }

  async getEmbed(orgId: string, id: string): Promise<Embed> {
    const e = await Embed.findOne({ where: { id, organizationId: orgId } });
    if (!e) throw new HttpError('not-found', `Embed ${id} does not exist in this organization.`);
    return e;
  }

  async createEmbed(orgId: string, input: unknown): Promise<Embed> {
    const parsed = embedInputSchema.safeParse(input);
    if (!parsed.success) throw invalid(parsed.error);
    const v = parsed.data;
    await this.checkRefs(orgId, v.satelliteIds, v.apiKeyId);
    const e = await Embed.create({
      id: newEmbedId(),
      organizationId: orgId,
      name: v.name,
      satelliteIds: [...new Set(v.satelliteIds)],
      options: v.options,
      apiKeyId: v.apiKeyId,
    });
    this.invalidate(e.id);
    return e;
  }

  async updateEmbed(orgId: string, id: string, input: unknown): Promise<Embed> {
    const parsed = embedUpdateSchema.safeParse(input);
    if (!parsed.success) throw invalid(parsed.error);
    const v = parsed.data;
    const e = await this.getEmbed(orgId, id);
    await this.checkRefs(orgId, v.satelliteIds, v.apiKeyId);
    await e.update({
      ...(v.name !== undefined ? { name: v.name } : {}),
      ...(v.satelliteIds !== undefined ? { satelliteIds: [...new Set(v.satelliteIds)] } : {}),
      ...(v.options !== undefined ? { options: v.options } : {}),
      ...(v.apiKeyId !== undefined ? { apiKeyId: v.apiKeyId } : {}),
    });
    this.invalidate(id);
    return e;
  }

  async deleteEmbed(orgId: string, id: string): Promise<void> {
    const e = await this.getEmbed(orgId, id);
    await e.destroy();
    this.invalidate(id);
  }

  /** The embed (cached), or null. */
  async findEmbed(id: string): Promise<EmbedRecord | null> {
    if (!/^[0-9a-z_-]{1,40}$/i.test(id)) return null;
    const hit = this.cache.get(id);
    if (hit && Date.now() - hit.at < EMBED_CACHE_TTL_MS) return hit.record;
    if (this.unknown.has(id)) return null;
    const row = await Embed.findByPk(id);
    if (!row) {
      this.unknown.set(id, true);
      return null;
    }
    const record = toRecord(row);
    this.cache.set(id, { record, at: Date.now() });
    return record;
  }

  /** Resolve `?embed=<id>` to the embed and its working browser key; throws the matching problem. */
  async resolveForRead(id: string, now: Date = new Date()): Promise<{ embed: EmbedRecord; key: KeyRecord }> {
    const embed = await this.findEmbed(id);
    if (!embed) throw new HttpError('invalid-key', `No embed ${id} exists; it may have been deleted.`, { reason: EMBED_NOT_FOUND });
    if (!embed.apiKeyId) throw new HttpError('invalid-key', `Embed ${id} has no key attached; choose a browser key for it in the console.`);
    // A replaced key hands its embeds to its successor at once (the rotation also moves the row).
    const key = await this.keys.currentSuccessor(embed.apiKeyId);
    if (!key) throw new HttpError('invalid-key', `The key of embed ${id} no longer exists; choose another browser key in the console.`);
    assertKeyWorks(key, now);
    return { embed, key };
  }

  /** resolveForRead from the caches only: undefined when something must be loaded first. */
  resolveForReadCached(id: string, now: Date = new Date()): { embed: EmbedRecord; key: KeyRecord } | undefined {
    const hit = this.cache.get(id);
    if (!hit?.record?.apiKeyId || Date.now() - hit.at >= EMBED_CACHE_TTL_MS) return undefined;
    const key = this.keys.cachedSuccessor(hit.record.apiKeyId);
    if (!key) return undefined;
    assertKeyWorks(key, now);
    return { embed: hit.record, key };
  }

  /** Drop the cached embed here and in every other process. */
  invalidate(id: string): void {
    this.cache.delete(id);
    this.unknown.delete(id);
    invalidationBus(this.ctx).publish({ t: 'embed', id });
  }

  /** Drop every cached embed (after a rotation moved embeds to a new key). */
  invalidateAll(): void {
    this.cache.clear();
  }

  private async checkRefs(orgId: string, satelliteIds: string[] | undefined, apiKeyId: string | undefined): Promise<void> {
    if (satelliteIds) {
      const found = await Satellite.findAll({ where: { id: satelliteIds, organizationId: orgId }, attributes: ['id'] });
      const have = new Set(found.map((s) => s.id));
      const missing = satelliteIds.filter((s) => !have.has(s));
      if (missing.length > 0) {
        throw new HttpError('validation-failed', `Unknown satellites for this organization: ${missing.join(', ')}.`, {
          errors: [{ where: 'satelliteIds', field: 'satelliteIds', message: `unknown: ${missing.join(', ')}` }],
        });
      }
    }
    if (apiKeyId) {
      const key = await ApiKey.findOne({ where: { id: apiKeyId, organizationId: orgId, deletedAt: null } });
      if (!key || key.kind !== 'browser') {
        throw new HttpError('validation-failed', 'An embed reads with one of this organization\u2019s browser keys; apiKeyId names none.', {
          errors: [{ where: 'apiKeyId', field: 'apiKeyId', message: 'must be a browser key of this organization' }],
        });
      }
    }
  }
}

declare module '../context.ts' {
  interface AppServices {
    /** Set by getEmbedService (app.ts calls it at start-up). */
    embeds?: EmbedService;
  }
}

/** The app's EmbedService, created on first use. */
export function getEmbedService(ctx: AppContext): EmbedService {
  ctx.services.embeds ??= new EmbedService(ctx, getKeyService(ctx));
  return ctx.services.embeds;
}
