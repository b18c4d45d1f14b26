/**
 * Satellites and their element sets: registration, uploads (TLE, OMM KVN / XML / JSON, files
 * holding many sets, Keplerian form entry), the current set (latest epoch), summaries and the
 * derived elements. The parsed current set is cached with its satrec (OrbitCache).
 *
 * Exported API (ctx.services.satellites is a SatelliteService; getSatelliteService(ctx)):
 *   listSatellites(orgId) -> Promise<Satellite[]>
 *   getSatellite(orgId, id) -> Promise<Satellite>                                  (404 not-found)
 *   createSatellite(orgId, { name, description?, elementsText? }, actor)
 *       -> Promise<{ satellite: Satellite, upload: UploadResult | null }>
 *          (with elementsText: 422 unprocessable-element-set, nothing created, when no set is usable)
 *   updateSatellite(orgId, id, { name?, description? }) / deleteSatellite(orgId, id)
 *   addElementSets(satellite, { text?, format?, files?: [{ name, text }], kepler? }, actor)
 *       -> Promise<UploadResult>  = { report: ReportEntry[], accepted, rejected, created: ElementSetRecord[] }
 *          ReportEntry = { index, line, ok, elementSetId?, code?, field?, message?, column?, file? }
 *          (never throws for bad sets; the caller answers 422 when accepted === 0)
 *   listElementSets(satelliteId) -> Promise<ElementSetRecord[]>                     (newest epoch first)
 *   getElementSet(orgId, esId) -> Promise<ElementSetRecord>
 *   exportElementSet(record, 'tle' | 'omm-kvn' | 'omm-xml' | 'omm-json') -> { text, filename, contentType }
 *   current(satelliteId) -> Promise<CachedSatellite | null>                        (cached, with satrec)
 *   summary(record, now?, uploaders?) -> ElementSetSummary
 *   derived(elementSet, now?) -> DerivedElements
 *   view(satellite, now?) -> Promise<SatelliteView>  ({ id, name, catalogNumber, description, current, derived })
 *   uploaderNames(records) -> Promise<Map<id, name>>   (for summaries in the console)
 *   Actor = { userId?: string | null, keyId?: string | null }
 */
import { nanoid } from 'nanoid';
import { UniqueConstraintError } from 'sequelize';
import {
  checkContinuity,
  deriveElements,
  piecewiseWindows,
  fromKeplerian,
  propagateAt,
  readElementSets,
  stalenessOf,
  toOmmJson,
  toOmmKvn,
  toOmmXml,
  toSatrec,
  toTle,
  type DerivedElements,
  type ElementSet,
  type ElementSetSource,
  type ParsedEntry,
  type WindowPart,
} from '@nadirline/shared';
import type { AppContext } from '../context.ts';
import { HttpError } from '../http/problem.ts';
import { ApiKey, ElementSetRecord, Organization, Satellite, User } from '../models/index.ts';
import { OrbitCache, parsedOf, type CachedSatellite, type CurrentSet } from './orbit-cache.ts';
import { invalidationBus } from './shared.ts';
import type { Continuity, V1ElementSetSummary, V1Satellite } from '@nadirline/shared/contract';
import { emitEvent } from './webhooks.ts';

export const MAX_ELEMENT_TEXT_CHARS = 2_000_000;
export const MAX_SETS_PER_UPLOAD = 500;

export interface Actor {
  userId?: string | null;
  keyId?: string | null;
}

export type ElementFormat = 'tle' | 'omm-kvn' | 'omm-xml' | 'omm-json';
export const EXPORT_FORMATS: readonly ElementFormat[] = ['tle', 'omm-kvn', 'omm-xml', 'omm-json'];

export interface ReportEntry {
  /** 1-based index of the entry in its text or file. */
  index: number;
  /** 1-based first line of the entry. */
  line: number;
  ok: boolean;
  elementSetId?: string;
  /** Set when the same satellite already has an element set with this epoch (it is kept, not duplicated). */
  duplicate?: boolean;
  code?: string;
  field?: string;
  message?: string;
  column?: number;
  file?: string;
  /** The continuity check of a newly stored set (null: the satellite had no earlier set). */
  continuity?: Continuity | null;
  /** The set is held until an editor confirms it (organization setting). */
  awaitingConfirmation?: boolean;
}

const r3 = (v: number) => Math.round(v * 1000) / 1000;
const r4 = (v: number) => Math.round(v * 10_000) / 10_000;

/**
 * Compare the set before `next` (by epoch) with it: the previous set's prediction at next's epoch.
 * The one mapping from the engine's ContinuityReport to the contract's `Continuity` (figures
 * rounded, the previous set named by id, `not-checked` when the engine could not compare).
 */
export function continuityOf(previous: { id: string; elementSet: ElementSet }, next: ElementSet): Continuity {
  const base = { previousElementSetId: previous.id, previousEpoch: previous.elementSet.epochIso, spanDays: r4((next.epochMs - previous.elementSet.epochMs) / DAY_MS) };
  const r = checkContinuity({ elementSet: previous.elementSet, satrec: toSatrec(previous.elementSet) }, { elementSet: next, satrec: toSatrec(next) });
  if (!r.ok) return { classification: 'not-checked', summary: 'not checked', reason: `The previous set could not be carried to this epoch: ${r.message}.`, ...base };
  return {
    classification: r.classification,
    summary: r.summary,
    reason: r.reason,
    ...base,
    positionDifferenceKm: r3(r.positionDifferenceKm),
    radialKm: r3(r.radialKm),
    alongTrackKm: r3(r.alongTrackKm),
    crossTrackKm: r3(r.crossTrackKm),
    alongTrackTimingS: Math.round(r.alongTrackTimingS * 100) / 100,
    semiMajorAxisChangeKm: r3(r.semiMajorAxisChangeKm),
    eccentricityChange: Math.round(r.eccentricityChange * 1e7) / 1e7,
    inclinationChangeDeg: r4(r.inclinationChangeDeg),
    raanChangeDeg: r4(r.raanChangeDeg),
    catalogNumberChanged: r.catalogNumberChanged,
  };
}

/** Suspicious: the check found a manoeuvre or a set that does not continue the orbit. */
export const isSuspicious = (c: Continuity | null | undefined) => c?.classification === 'manoeuvre' || c?.classification === 'does-not-continue';

export interface UploadResult {
  report: ReportEntry[];
  /** Usable entries: newly stored plus duplicates (an epoch this satellite already has). */
  accepted: number;
  /** Usable entries whose epoch was stored already (nothing new was written for them). */
  duplicates: number;
  rejected: number;
  /** The newly stored sets (accepted - duplicates of them). */
  created: ElementSetRecord[];
}

/** A set's summary as /v1 documents it (the console reads it as the contract's ElementSetSummary), continuity included. */
export type ElementSetSummary = V1ElementSetSummary;

/** The satellite as /v1 documents it and the console shows it (the contract's V1Satellite; the console reads it as SatelliteListItem). */
export type SatelliteView = V1Satellite;

export interface UploadInput {
  /** Element set text: TLE (2 or 3 lines per set), OMM KVN, OMM XML or OMM JSON. */
  text?: string | undefined;
  /** Format hint (from the Content-Type); detected from the text when absent. */
  format?: ElementFormat | undefined;
  files?: Array<{ name: string; text: string }> | undefined;
  /** Keplerian form entry, as fromKeplerian of the shared engine takes it. */
  kepler?: unknown;
}

const DAY_MS = 86_400_000;

function formatFromFileName(name: string): ElementFormat | undefined {
  const n = name.toLowerCase();
  if (n.endsWith('.xml')) return 'omm-xml';
  if (n.endsWith('.json')) return 'omm-json';
  if (n.endsWith('.kvn') || n.endsWith('.omm')) return 'omm-kvn';
  return undefined;
}

export class SatelliteService {
  readonly cache = new OrbitCache();

  constructor(private readonly ctx: AppContext) {
    invalidationBus(ctx).on((msg) => {
      if (msg.t === 'satellite') this.cache.invalidate(msg.id);
      else if (msg.t === 'org' || msg.t === 'all') this.cache.clear();
    });
  }

  /** Drop the cached satellite and current set here and in every other process. */
  private changed(satelliteId: string): void {
    this.cache.invalidate(satelliteId);
    invalidationBus(this.ctx).publish({ t: 'satellite', id: satelliteId });
  }

  listSatellites(orgId: string): Promise<Satellite[]> {
    return Satellite.findAll({ where: { organizationId: orgId }, order: [['name', 'ASC']] });
  }

  async getSatellite(orgId: string, id: string): Promise<Satellite> {
    const s = await Satellite.findOne({ where: { id, organizationId: orgId } });
    if (!s) throw new HttpError('not-found', `Satellite ${id} does not exist in this organization.`);
    return s;
  }

  async createSatellite(
    orgId: string,
    input: { name: string; description?: string | undefined; elementsText?: string | undefined; format?: ElementFormat | undefined },
    actor: Actor,
  ): Promise<{ satellite: Satellite; upload: UploadResult | null }> {
    const name = input.name.trim();
    if (!name || name.length > 200) {
      throw new HttpError('validation-failed', 'A satellite needs a name of 1 to 200 characters.', {
        errors: [{ where: 'name', field: 'name', message: '1 to 200 characters' }],
      });
    }
    let entries: ParsedEntry[] | null = null;
    if (input.elementsText !== undefined && input.elementsText.trim() !== '') {
      entries = this.parseText(input.elementsText, input.format, MAX_SETS_PER_UPLOAD);
      const usable = entries.filter((e) => e.result.ok);
      if (usable.length === 0) throw unprocessable(entries.map((e) => reportOf(e)), 'None of the submitted element sets could be used; the satellite was not created.');
    }
    const satellite = await Satellite.create({
      id: `sat_${nanoid(12)}`,
      organizationId: orgId,
      name,
      catalogNumber: null,
      description: (input.description ?? '').slice(0, 5000),
      currentElementSetId: null,
    });
    const upload = entries ? await this.storeEntries(satellite, withRawText(input.elementsText ?? '', entries), actor) : null;
    return { satellite, upload };
  }

  async updateSatellite(orgId: string, id: string, input: { name?: string | undefined; description?: string | undefined }): Promise<Satellite> {
    const s = await this.getSatellite(orgId, id);
    const patch: { name?: string; description?: string } = {};
    if (input.name !== undefined) {
      const name = input.name.trim();
      if (!name || name.length > 200) {
        throw new HttpError('validation-failed', 'A satellite needs a name of 1 to 200 characters.', {
          errors: [{ where: 'name', field: 'name', message: '1 to 200 characters' }],
        });
      }
      patch.name = name;
    }
    if (input.description !== undefined) patch.description = input.description.slice(0, 5000);
    await s.update(patch);
    this.changed(id);
    return s;
  }

  async deleteSatellite(orgId: string, id: string): Promise<void> {
    const s = await this.getSatellite(orgId, id);
    await this.ctx.sequelize.transaction(async (transaction) => {
      await ElementSetRecord.destroy({ where: { satelliteId: id }, transaction });
      await s.destroy({ transaction });
    });
    this.changed(id);
  }

  /** Parse and store element sets for a satellite; bad entries are reported, good ones kept. */
  async addElementSets(satellite: Satellite, input: UploadInput, actor: Actor): Promise<UploadResult> {
    // One cap for the whole upload (text and every file), enforced while each text is read.
    const batch: BatchItem[] = [];
    if (input.text !== undefined) batch.push(...withRawText(input.text, this.parseText(input.text, input.format, MAX_SETS_PER_UPLOAD)));
    for (const f of input.files ?? []) {
      batch.push(...withRawText(f.text, this.parseText(f.text, formatFromFileName(f.name), MAX_SETS_PER_UPLOAD - batch.length, f.name), f.name));
    }
    if (input.kepler !== undefined) {
      const result = fromKeplerian(input.kepler as Parameters<typeof fromKeplerian>[0]);
      batch.push({ entry: { index: 1, line: 1, result }, raw: JSON.stringify(input.kepler) });
    }
    if (batch.length === 0) {
      throw new HttpError('validation-failed', 'Send element sets as text, as files, or as Keplerian elements.', {
        errors: [{ where: '(body)', message: 'no element set given' }],
      });
    }
    if (batch.length > MAX_SETS_PER_UPLOAD) {
      throw new HttpError('payload-too-large', `At most ${MAX_SETS_PER_UPLOAD} element sets per upload; this one holds ${batch.length}.`);
    }
    return this.storeEntries(satellite, batch, actor);
  }

  listElementSets(satelliteId: string): Promise<ElementSetRecord[]> {
    return ElementSetRecord.findAll({ where: { satelliteId }, order: [['epoch', 'DESC'], ['createdAt', 'DESC']] });
  }

  async getElementSet(orgId: string, esId: string): Promise<ElementSetRecord> {
    const r = await ElementSetRecord.findByPk(esId, { include: [{ model: Satellite, as: 'satellite', attributes: ['organizationId'] }] });
    const owner = (r as (ElementSetRecord & { satellite?: Satellite }) | null)?.satellite?.organizationId;
    if (!r || owner !== orgId) throw new HttpError('not-found', `Element set ${esId} does not exist in this organization.`);
    return r;
  }

  exportElementSet(record: ElementSetRecord, format: ElementFormat): { text: string; filename: string; contentType: string } {
    const es = parsedOf(record);
    const base = `${(es.name || `object-${es.catalogNumber}`).replace(/[^A-Za-z0-9._-]+/g, '-')}-${es.epochIso.slice(0, 19).replace(/[:]/g, '')}`;
    switch (format) {
      case 'tle':
        return { text: toTle(es).text, filename: `${base}.tle`, contentType: 'text/plain; charset=utf-8' };
      case 'omm-kvn':
        return { text: toOmmKvn(es), filename: `${base}.kvn`, contentType: 'text/plain; charset=utf-8' };
      case 'omm-xml':
        return { text: toOmmXml(es), filename: `${base}.xml`, contentType: 'application/xml; charset=utf-8' };
      case 'omm-json':
        return { text: `${JSON.stringify(toOmmJson(es), null, 2)}\n`, filename: `${base}.json`, contentType: 'application/json; charset=utf-8' };
    }
  }

  current(satelliteId: string): Promise<CachedSatellite | null> {
    return this.cache.get(satelliteId);
  }

  summary(
    record: Pick<ElementSetRecord, 'id' | 'source' | 'epoch' | 'createdAt' | 'uploadedByUserId' | 'uploadedByKeyId'> & {
      parsed?: object;
      continuity?: object | string | null;
      awaitingConfirmation?: boolean | null;
    },
    es: ElementSet,
    now: Date = new Date(),
    uploaders?: Map<string, string>,
  ): ElementSetSummary {
    const ageDays = (now.getTime() - es.epochMs) / DAY_MS;
    const by = record.uploadedByUserId ?? record.uploadedByKeyId;
    return {
      id: record.id,
      // stored sets carry the engine's source names (addElementSets writes them)
      source: record.source as ElementSetSource,
      epoch: es.epochIso,
      ageDays: Math.round(ageDays * 1000) / 1000,
      staleness: stalenessOf(ageDays),
      uploadedBy: by && uploaders ? (uploaders.get(by) ?? null) : null,
      createdAt: new Date(record.createdAt).toISOString(),
      catalogNumber: es.catalogNumber,
      name: es.name,
      continuity: continuityJson(record.continuity),
      awaitingConfirmation: Boolean(record.awaitingConfirmation),
    };
  }

  /**
   * The sets in force over [startMs, endMs], one part per set (piecewiseWindows of the engine).
   * Times at or after the current set's epoch need no database read.
   */
  async setsInForce(c: CachedSatellite, startMs: number, endMs: number): Promise<WindowPart<CurrentSet>[]> {
    const cur = c.current;
    if (!cur) return [];
    if (startMs >= cur.elementSet.epochMs) return [{ set: cur, startMs, endMs }];
    const history = await this.cache.history(c.satellite.id);
    const parts = piecewiseWindows(history, startMs, endMs);
    return Promise.all(parts.map(async (p) => ({ set: p.set.id === cur.record.id ? cur : await p.set.set(), startMs: p.startMs, endMs: p.endMs })));
  }

  /** The set in force at tMs (latest epoch at or before it, else the earliest), or null without sets. */
  async setAt(c: CachedSatellite, tMs: number): Promise<CurrentSet | null> {
    const parts = await this.setsInForce(c, tMs, tMs);
    return parts[0]?.set ?? null;
  }

  /** Make a held set usable (an editor confirmed it); it becomes current when its epoch is the latest. */
  async confirmElementSet(orgId: string, esId: string, userId: string): Promise<ElementSetRecord> {
    const record = await this.getElementSet(orgId, esId);
    if (!record.awaitingConfirmation) {
      throw new HttpError('conflict', 'This element set is not waiting for confirmation; it is in use already.');
    }
    await this.ctx.sequelize.transaction(async (transaction) => {
      await record.update({ awaitingConfirmation: false, confirmedAt: new Date(), confirmedByUserId: userId }, { transaction });
      const latest = await ElementSetRecord.findOne({ where: { satelliteId: record.satelliteId, awaitingConfirmation: false }, order: [['epoch', 'DESC']], attributes: ['id'], transaction });
      await Satellite.update({ currentElementSetId: latest?.id ?? null }, { where: { id: record.satelliteId }, transaction });
      const sat = await Satellite.findByPk(record.satelliteId, { attributes: ['id', 'name', 'catalogNumber'], transaction });
      await emitEvent(
        this.ctx,
        {
          organizationId: orgId,
          type: 'element-set.accepted',
          data: {
            satellite: { id: record.satelliteId, name: sat?.name ?? null, catalogNumber: sat?.catalogNumber ?? null },
            elementSets: [{ id: record.id, epoch: new Date(record.epoch).toISOString(), source: record.source, continuity: record.continuityClass ?? null, awaitingConfirmation: false, confirmedBy: { userId } }],
            currentElementSetId: latest?.id ?? null,
            uploadedBy: record.uploadedByKeyId ? { keyId: record.uploadedByKeyId } : record.uploadedByUserId ? { userId: record.uploadedByUserId } : null,
          },
        },
        { transaction },
      );
    });
    this.cache.invalidate(record.satelliteId);
    return record;
  }

  derived(es: ElementSet, now: Date = new Date()): DerivedElements {
    return deriveElements(es, now.getTime());
  }

  /** The satellite as /v1 and the console show it. */
  async view(satellite: Satellite | CachedSatellite['satellite'], now: Date = new Date(), uploaders?: Map<string, string>): Promise<SatelliteView> {
    const cached = await this.cache.get(satellite.id);
    const cur = cached?.current ?? null;
    return {
      id: satellite.id,
      name: satellite.name,
      catalogNumber: satellite.catalogNumber,
      description: satellite.description ?? '',
      current: cur ? this.summary(cur.record, cur.elementSet, now, uploaders) : null,
      derived: cur ? this.derived(cur.elementSet, now) : null,
    };
  }

  /**
   * Who uploaded, as the console and /v1 both show it (`uploadedBy`): a member by name, a key as
   * "key <name>" (no key text, not even its last four characters, since /v1 answers pages).
   */
  async uploaderNames(records: ReadonlyArray<Pick<ElementSetRecord, 'uploadedByUserId' | 'uploadedByKeyId'>>): Promise<Map<string, string>> {
    const userIds = [...new Set(records.map((r) => r.uploadedByUserId).filter((x): x is string => !!x))];
    const keyIds = [...new Set(records.map((r) => r.uploadedByKeyId).filter((x): x is string => !!x))];
    const names = new Map<string, string>();
    if (userIds.length) for (const u of await User.findAll({ where: { id: userIds }, attributes: ['id', 'name'] })) names.set(u.id, u.name);
    if (keyIds.length) for (const k of await ApiKey.findAll({ where: { id: keyIds }, attributes: ['id', 'name'] })) names.set(k.id, `key ${k.name}`);
    return names;
  }

  /** view() of several satellites with `current.uploadedBy` filled in (one lookup for all). */
  async viewsWithUploaders(satellites: ReadonlyArray<Satellite | CachedSatellite['satellite']>, now: Date = new Date()): Promise<SatelliteView[]> {
    const cached = await Promise.all(satellites.map((s) => this.cache.get(s.id)));
    const records = cached.flatMap((c) => (c?.current ? [c.current.record] : []));
    const uploaders = records.length ? await this.uploaderNames(records) : undefined;
    return Promise.all(satellites.map((s) => this.view(s, now, uploaders)));
  }

  /**
   * The entries of one text, at most `room` of them: reading stops at the first entry over the
   * upload's cap (413, with where that entry starts), so a text of a million lines costs no more
   * than one of five hundred sets.
   */
  private parseText(text: string, format: ElementFormat | undefined, room: number, file?: string): ParsedEntry[] {
    if (text.length > MAX_ELEMENT_TEXT_CHARS) {
      throw new HttpError('payload-too-large', `Element set text is limited to ${MAX_ELEMENT_TEXT_CHARS.toLocaleString('en')} characters.`);
    }
    const read = readElementSets(text, { hint: format, maxEntries: Math.max(0, room) });
    if (!read.ok) {
      const where = `line ${read.line}${file !== undefined ? ` of ${file}` : ''}`;
      throw new HttpError(
        'payload-too-large',
        `At most ${MAX_SETS_PER_UPLOAD} element sets per upload; this one holds more (set ${MAX_SETS_PER_UPLOAD + 1} starts at ${where}). Send the rest in another upload.`,
        { limitSets: MAX_SETS_PER_UPLOAD, line: read.line, ...(file !== undefined ? { file } : {}) },
      );
    }
    return read.entries;
  }

  /**
   * Store the usable entries of a batch in one transaction. The epochs already stored are read
   * inside it, after the satellite's row is locked (PostgreSQL: FOR UPDATE; SQLite: the
   * transaction is IMMEDIATE and queued, see db/write-lock.ts), so two uploads of one epoch cannot
   * both miss each other. The unique (satelliteId, epoch) index is the backstop: should it still
   * refuse a row, the whole batch runs again and finds that epoch stored.
   */
  private async storeEntries(satellite: Satellite, batch: BatchItem[], actor: Actor): Promise<UploadResult> {
    for (let attempt = 1; ; attempt++) {
      try {
        return await this.storeEntriesOnce(satellite, batch, actor);
      } catch (err) {
        if (!(err instanceof UniqueConstraintError) || attempt >= 3) throw err;
      }
    }
  }

  private async storeEntriesOnce(satellite: Satellite, batch: BatchItem[], actor: Actor): Promise<UploadResult> {
    const report: ReportEntry[] = [];
    const created: ElementSetRecord[] = [];
    const org = await Organization.findByPk(satellite.organizationId, { attributes: ['id', 'confirmSuspiciousSets'] });
    const holdSuspicious = Boolean(org?.confirmSuspiciousSets);
    let catalog = satellite.catalogNumber;
    await this.ctx.sequelize.transaction(async (transaction) => {
      const locked = await Satellite.findByPk(satellite.id, { transaction, lock: transaction.LOCK.UPDATE, attributes: ['id', 'catalogNumber'] });
      if (!locked) throw new HttpError('not-found', 'The satellite was deleted meanwhile.');
      catalog = locked.catalogNumber;
      const existing = await ElementSetRecord.findAll({ where: { satelliteId: satellite.id }, attributes: ['id', 'epoch', 'awaitingConfirmation'], transaction });
      const byEpoch = new Map(existing.map((r) => [new Date(r.epoch).getTime(), r.id]));
      // Usable sets by epoch, for the continuity check of each new one against the set before it.
      const usable = existing.filter((r) => !r.awaitingConfirmation).map((r) => ({ id: r.id, epochMs: new Date(r.epoch).getTime(), elementSet: undefined as ElementSet | undefined }));
      const previousOf = async (epochMs: number) => {
        let best: (typeof usable)[number] | undefined;
        for (const u of usable) if (u.epochMs < epochMs && (!best || u.epochMs > best.epochMs)) best = u;
        if (!best) return undefined;
        if (!best.elementSet) {
          const row = await ElementSetRecord.findByPk(best.id, { attributes: ['id', 'parsed'], transaction });
          if (!row) return undefined;
          best.elementSet = parsedOf(row);
        }
        return { id: best.id, elementSet: best.elementSet };
      };
      for (const { entry, file, raw } of batch) {
        const base = reportOf(entry, file);
        if (!entry.result.ok) {
          report.push(base);
          continue;
        }
        const es = entry.result.elementSet;
        if (catalog && es.catalogNumber && es.catalogNumber !== catalog && !(es.source === 'kepler')) {
          report.push({
            ...base,
            ok: false,
            code: 'catalog-mismatch',
            field: 'catalogNumber',
            message: `This set is for catalog number ${es.catalogNumber}, but the satellite ${satellite.name} is catalog number ${catalog}.`,
          });
          continue;
        }
        const check = checkPropagates(es);
        if (check) {
          report.push({ ...base, ok: false, ...check });
          continue;
        }
        const epochMs = Math.floor(es.epochMs);
        const dup = byEpoch.get(epochMs);
        if (dup) {
          report.push({ ...base, ok: true, elementSetId: dup, duplicate: true });
          continue;
        }
        const previous = await previousOf(epochMs);
        const continuity = previous ? continuityOf(previous, es) : null;
        const hold = holdSuspicious && isSuspicious(continuity);
        const record = await ElementSetRecord.create(
          {
            id: `es_${nanoid(14)}`,
            continuity: continuity as object | null,
            continuityClass: continuity?.classification ?? null,
            awaitingConfirmation: hold,
            satelliteId: satellite.id,
            source: es.source,
            rawText: raw,
            parsed: es as unknown as object,
            epoch: new Date(epochMs),
            uploadedByUserId: actor.userId ?? null,
            uploadedByKeyId: actor.keyId ?? null,
          },
          { transaction },
        );
        byEpoch.set(epochMs, record.id);
        if (!hold) usable.push({ id: record.id, epochMs, elementSet: es });
        created.push(record);
        if (!catalog && es.catalogNumber && es.source !== 'kepler') catalog = es.catalogNumber;
        report.push({ ...base, ok: true, elementSetId: record.id, continuity, ...(hold ? { awaitingConfirmation: true } : {}) });
      }
      if (created.length > 0) {
        const latest = await ElementSetRecord.findOne({ where: { satelliteId: satellite.id, awaitingConfirmation: false }, order: [['epoch', 'DESC']], attributes: ['id'], transaction });
        await satellite.update({ currentElementSetId: latest?.id ?? null, catalogNumber: catalog }, { transaction });
        // Webhooks out (the outbox): written with the sets, so the event exists exactly when they do.
        await emitEvent(
          this.ctx,
          {
            organizationId: satellite.organizationId,
            type: 'element-set.accepted',
            data: {
              satellite: { id: satellite.id, name: satellite.name, catalogNumber: catalog ?? null },
              elementSets: created.map((r) => ({
                id: r.id,
                epoch: new Date(r.epoch).toISOString(),
                source: r.source,
                continuity: r.continuityClass ?? null,
                awaitingConfirmation: Boolean(r.awaitingConfirmation),
              })),
              currentElementSetId: latest?.id ?? null,
              uploadedBy: actor.keyId ? { keyId: actor.keyId } : actor.userId ? { userId: actor.userId } : null,
            },
          },
          { transaction },
        );
      }
    });
    this.changed(satellite.id);
    const accepted = report.filter((r) => r.ok).length;
    const duplicates = report.filter((r) => r.ok && r.duplicate).length;
    return { report, accepted, duplicates, rejected: report.length - accepted, created };
  }
}

/** Stored continuity JSON (SQLite may hand JSON columns back as text). */
function continuityJson(v: object | string | null | undefined): Continuity | null {
  if (v === null || v === undefined) return null;
  return (typeof v === 'string' ? JSON.parse(v) : v) as Continuity;
}

export interface BatchItem {
  entry: ParsedEntry;
  /** The entry's own text as submitted (kept with the stored set). */
  raw: string;
  file?: string;
}

/**
 * Each entry with its slice of the submitted text: from its first line to the next entry's.
 * One pass: the start lines are sorted once and each slice is cut once (entries that start on
 * the same line share it).
 */
export function withRawText(text: string, entries: ParsedEntry[], file?: string): BatchItem[] {
  const starts = [...new Set(entries.map((e) => e.line))].sort((a, b) => a - b);
  const extra = file !== undefined ? { file } : {};
  if (starts.length <= 1) return entries.map((entry) => ({ entry, raw: text, ...extra }));
  const lines = text.split(/\r\n|\n|\r/);
  const slices = new Map<number, string>();
  starts.forEach((line, i) => slices.set(line, lines.slice(line - 1, (starts[i + 1] ?? lines.length + 1) - 1).join('\n').trim()));
  return entries.map((entry) => ({ entry, raw: slices.get(entry.line) ?? text, ...extra }));
}

/**
 * The parser's reason alone: its messages read "field: line L column C: reason", and the report
 * entry carries field, line and column already, so they are not repeated in the message.
 * XML well-formedness errors are put in plain words.
 */
export function bareReason(field: string | undefined, message: string): string {
  let m = message.trim();
  if (field && m.toLowerCase().startsWith(`${field.toLowerCase()}: `)) m = m.slice(field.length + 2);
  m = m.replace(/^line \d+(?:,? column \d+)?: /, '');
  return xmlReason(m);
}

const tagList = (names: string[]) => (names.length <= 1 ? (names[0] ?? '') : `${names.slice(0, -1).join(', ')} and ${names[names.length - 1] ?? ''}`);

/** "not well-formed XML: Unclosed tag 'omm'." -> "the XML is not well-formed: <omm> is opened but never closed". */
function xmlReason(m: string): string {
  const x = /^not well-formed XML: (.*)$/s.exec(m);
  if (!x) return m;
  const r = (x[1] ?? '').trim();
  let g: RegExpExecArray | null;
  let words: string;
  if ((g = /^Invalid '\[(.*)\]' found\.?$/s.exec(r))) {
    const names = [...(g[1] ?? '').matchAll(/"([^"]*)"/g)].map((a) => `<${a[1] ?? ''}>`);
    words = names.length ? `${tagList(names)} ${names.length === 1 ? 'is' : 'are'} opened but never closed` : 'some elements are opened but never closed';
  } else if ((g = /^Unclosed tag '([^']*)'\.?$/.exec(r))) {
    words = `<${g[1]}> is opened but never closed`;
  } else if ((g = /^Expected closing tag '([^']*)' \(opened in line (\d+), col (\d+)\) instead of closing tag '([^']*)'\.?$/.exec(r))) {
    words = `</${g[4]}> comes where </${g[1]}> was expected (<${g[1]}> was opened at line ${g[2]}, column ${g[3]})`;
  } else if ((g = /^Closing tag '([^']*)' has not been opened\.?$/.exec(r))) {
    words = `</${g[1]}> closes an element that was never opened`;
  } else if ((g = /^char '(.)' is not expected\.?$/s.exec(r))) {
    words = g[1] === '&' ? 'a bare & is not allowed; write &amp;' : `the character '${g[1]}' is not allowed here`;
  } else if ((g = /^Attribute '([^']*)' is without value\.?$/.exec(r))) {
    words = `the attribute ${g[1]} has no value; write ${g[1]}="\u2026"`;
  } else if ((g = /^Attribute '([^']*)' is repeated\.?$/.exec(r))) {
    words = `the attribute ${g[1]} appears twice`;
  } else if (/^Start tag expected\.?$/.test(r)) {
    words = 'no element was found';
  } else if (/^Multiple possible root nodes found\.?$/.test(r)) {
    words = 'there is more than one top-level element; put several <omm> inside one <ndm>';
  } else {
    words = r.replace(/\.$/, '');
  }
  return `the XML is not well-formed: ${words}`;
}

function reportOf(entry: ParsedEntry, file?: string): ReportEntry {
  const r = entry.result;
  const base: ReportEntry = { index: entry.index, line: entry.line, ok: r.ok, ...(file !== undefined ? { file } : {}) };
  if (r.ok) return base;
  return {
    ...base,
    code: r.code,
    field: r.field,
    message: bareReason(r.field, r.message),
    ...(r.line !== undefined ? { line: r.line } : {}),
    ...(r.column !== undefined ? { column: r.column } : {}),
  };
}

/** SGP4 must initialise and answer at the epoch; otherwise the set is useless for every route. */
function checkPropagates(es: ElementSet): { code: string; field: string; message: string } | null {
  try {
    const satrec = toSatrec(es);
    const p = propagateAt(satrec, es.epochMs);
    if (!p.ok) return { code: `sgp4-${p.code}`, field: 'elements', message: `SGP4 cannot use this set: ${p.message}.` };
    return null;
  } catch (err) {
    return { code: 'sgp4-init', field: 'elements', message: `SGP4 cannot use this set: ${(err as Error).message}` };
  }
}

/** "line 3, column 5" opens a sentence as "Line 3, column 5"; a file name stays as written. */
const capitalLine = (w: string) => (w.startsWith('line ') ? `L${w.slice(1)}` : w);

/** Parser field names that only repeat the format ("text", "xml"): not worth naming in a detail. */
const GENERIC_FIELDS = new Set(['text', 'xml', 'json', 'kvn', 'omm', 'elements']);

/** A 422 problem for uploads where nothing was usable: every rejected entry with line and column. */
export function unprocessable(report: ReportEntry[], detail?: string): HttpError {
  const bad = report.filter((r) => !r.ok);
  const first = bad[0];
  const where = (r: ReportEntry) => `${r.file ? `${r.file}, ` : ''}line ${r.line}${r.column !== undefined ? `, column ${r.column}` : ''}`;
  // The field goes with the place when it says something the reason does not ("checksum: expected 4, found 5").
  const field = (r: ReportEntry) => (r.field && !GENERIC_FIELDS.has(r.field) ? ` (${r.field})` : '');
  const more = bad.length > 1 ? ` ${bad.length - 1} more ${bad.length === 2 ? 'entry was' : 'entries were'} refused too; \`errors\` lists each.` : '';
  return new HttpError(
    'unprocessable-element-set',
    detail ?? (first ? `${capitalLine(where(first))}${field(first)}: ${(first.message ?? first.code ?? 'not usable').replace(/\.$/, '')}.${more}` : 'No element set could be used.'),
    {
      errors: bad.map((r) => ({
        where: where(r),
        message: r.message ?? r.code ?? 'not usable',
        line: r.line,
        ...(r.column !== undefined ? { column: r.column } : {}),
        ...(r.field !== undefined ? { field: r.field } : {}),
        ...(r.code !== undefined ? { reason: r.code } : {}),
        ...(r.file !== undefined ? { file: r.file } : {}),
      })),
      report,
    },
  );
}

declare module '../context.ts' {
  interface AppServices {
    /** Set by getSatelliteService (app.ts calls it at start-up). */
    satellites?: SatelliteService;
  }
}

/** The app's SatelliteService, created on first use. */
export function getSatelliteService(ctx: AppContext): SatelliteService {
  ctx.services.satellites ??= new SatelliteService(ctx);
  return ctx.services.satellites;
}
