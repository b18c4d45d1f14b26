/**
 * In-process cache for the /v1 hot path: a satellite's row and its current element set, parsed
 * and initialised for SGP4 once (a satrec), so a position or track request reads no database.
 *
 * Exported API:
 *   class OrbitCache
 *     get(satelliteId) -> Promise<CachedSatellite | null>   (null: no such satellite)
 *     peek(satelliteId) -> CachedSatellite | null | undefined (no wait; undefined: not cached)
 *     invalidate(satelliteId)                               (after an upload, edit or delete)
 *     clear()
 *   CachedSatellite = { satellite: SatelliteRecord, current: CurrentSet | null }
 *   CurrentSet = { record: ElementSetRecord-like, elementSet: ElementSet, satrec: SatRec }
 *
 * Entries live ORBIT_CACHE_TTL_MS so that several processes on one database converge; within one
 * process every change goes through SatelliteService, which invalidates at once.
 */
import { toSatrec, type ElementSet } from '@nadirline/shared';
import { LRUCache } from 'lru-cache';
import type { SatRec } from 'satellite.js';
import { ElementSetRecord, Satellite } from '../models/index.ts';

export const ORBIT_CACHE_TTL_MS = 60_000;
const MAX_ENTRIES = 20_000;

export interface SatelliteRecord {
  id: string;
  organizationId: string;
  name: string;
  catalogNumber: string | null;
  description: string;
  currentElementSetId: string | null;
  createdAt: Date;
  updatedAt: Date;
}

export interface ElementSetRow {
  id: string;
  satelliteId: string;
  source: string;
  epoch: Date;
  createdAt: Date;
  uploadedByUserId: string | null;
  uploadedByKeyId: string | null;
  continuity: object | string | null;
  awaitingConfirmation: boolean;
}

export interface CurrentSet {
  record: ElementSetRow;
  elementSet: ElementSet;
  satrec: SatRec;
}

export interface CachedSatellite {
  satellite: SatelliteRecord;
  current: CurrentSet | null;
}

/**
 * One usable stored set of a satellite's history (sets waiting for an editor's confirmation are
 * left out): its epoch, and its parse and satrec made on first use.
 */
export interface HistoryEntry {
  id: string;
  epochMs: number;
  /** The parsed set and satrec (read and made once, on first use). */
  set(): Promise<CurrentSet>;
}

export function satelliteRecord(s: Satellite): SatelliteRecord {
  return {
    id: s.id,
    organizationId: s.organizationId,
    name: s.name,
    catalogNumber: s.catalogNumber,
    description: s.description ?? '',
    currentElementSetId: s.currentElementSetId,
    createdAt: new Date(s.createdAt),
    updatedAt: new Date(s.updatedAt),
  };
}

export function elementSetRow(r: ElementSetRecord): ElementSetRow {
  return {
    id: r.id,
    satelliteId: r.satelliteId,
    source: r.source,
    epoch: new Date(r.epoch),
    createdAt: new Date(r.createdAt),
    uploadedByUserId: r.uploadedByUserId,
    uploadedByKeyId: r.uploadedByKeyId,
    continuity: r.continuity ?? null,
    awaitingConfirmation: Boolean(r.awaitingConfirmation),
  };
}

/** The stored ElementSet JSON of a record (SQLite may hand JSON columns back as text). */
export function parsedOf(r: ElementSetRecord): ElementSet {
  const p = r.parsed as unknown;
  return (typeof p === 'string' ? JSON.parse(p) : p) as ElementSet;
}

/** Parse + SGP4 initialisation of a stored element set. */
export function currentSetOf(r: ElementSetRecord): CurrentSet {
  const elementSet = parsedOf(r);
  return { record: elementSetRow(r), elementSet, satrec: toSatrec(elementSet) };
}

export class OrbitCache {
  /** Satellites by id (least recently used go first); unknown ids in their own small cache, so guessed ids cannot evict real ones. */
  private readonly entries = new LRUCache<string, { value: CachedSatellite; at: number }>({ max: MAX_ENTRIES });
  private readonly missing = new LRUCache<string, true>({ max: 1_000, ttl: 5_000 });
  private readonly loading = new Map<string, Promise<CachedSatellite | null>>();
  private readonly histories = new Map<string, { value: Promise<HistoryEntry[]>; at: number }>();

  /** The cached entry without waiting: undefined when it must be loaded (call get). */
  peek(satelliteId: string): CachedSatellite | null | undefined {
    const hit = this.entries.get(satelliteId);
    if (hit && Date.now() - hit.at < ORBIT_CACHE_TTL_MS) return hit.value;
    if (this.missing.has(satelliteId)) return null;
    return undefined;
  }

  async get(satelliteId: string): Promise<CachedSatellite | null> {
    const known = this.peek(satelliteId);
    if (known !== undefined) return known;
    let p = this.loading.get(satelliteId);
    if (!p) {
      p = this.load(satelliteId).finally(() => this.loading.delete(satelliteId));
      this.loading.set(satelliteId, p);
    }
    return p;
  }

  invalidate(satelliteId: string): void {
    this.entries.delete(satelliteId);
    this.histories.delete(satelliteId);
    this.missing.delete(satelliteId);
  }

  clear(): void {
    this.entries.clear();
    this.histories.clear();
    this.missing.clear();
  }

  /**
   * The satellite's usable sets, earliest epoch first (for times before the current set's
   * epoch). Rows are read once per ORBIT_CACHE_TTL_MS; each set is parsed on first use.
   */
  history(satelliteId: string): Promise<HistoryEntry[]> {
    const hit = this.histories.get(satelliteId);
    if (hit && Date.now() - hit.at < ORBIT_CACHE_TTL_MS) return hit.value;
    const value = ElementSetRecord.findAll({
      where: { satelliteId, awaitingConfirmation: false },
      attributes: ['id', 'epoch'],
      order: [['epoch', 'ASC'], ['createdAt', 'ASC']],
    }).then((rows) =>
      rows.map((row) => {
        let made: Promise<CurrentSet> | undefined;
        return {
          id: row.id,
          epochMs: new Date(row.epoch).getTime(),
          set() {
            made ??= ElementSetRecord.findByPk(row.id).then((r) => {
              if (!r) throw new Error(`element set ${row.id} vanished`);
              return currentSetOf(r);
            });
            return made;
          },
        };
      }),
    );
    value.catch(() => this.histories.delete(satelliteId));
    if (this.histories.size >= MAX_ENTRIES) this.histories.clear();
    this.histories.set(satelliteId, { value, at: Date.now() });
    return value;
  }

  private async load(satelliteId: string): Promise<CachedSatellite | null> {
    if (satelliteId.length > 40) return null;
    const sat = await Satellite.findByPk(satelliteId);
    let value: CachedSatellite | null = null;
    if (sat) {
      let current: CurrentSet | null = null;
      if (sat.currentElementSetId) {
        const r = await ElementSetRecord.findByPk(sat.currentElementSetId);
        if (r) current = currentSetOf(r);
      }
      value = { satellite: satelliteRecord(sat), current };
    }
    if (value) this.entries.set(satelliteId, { value, at: Date.now() });
    else this.missing.set(satelliteId, true);
    return value;
  }
}
