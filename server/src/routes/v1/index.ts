/**
 * The keyed public API, /v1 (contract in brief.md; the route table, caps and answer types in @nadirline/shared/contract).
 * Each keyed route runs: CORS headers -> credential, origin and scope -> per-key rate limit ->
 * monthly quota and usage count (memory only) -> query validation -> handler.
 * Routes only: answers are written as text in ./serialize.ts, kept in ./answer-cache.ts, and
 * engine failures become problems in ./errors.ts.
 */
import crypto from 'node:crypto';
import express, { Router, type Request, type RequestHandler, type Response } from 'express';
import multer from 'multer';
import type { z } from 'zod';
import {
  findPassesAcrossSets,
  footprintRadius,
  gridCount,
  isSunlit,
  passCalendar,
  propagateAt,
  sampleTrackAcrossSets,
  skyPath,
  sunVector,
  trackToGeoJSON,
  type WindowPart,
} from '@nadirline/shared';
import type { AppContext } from '../../context.ts';
import { readMultipart, refuseNulInJson } from '../../http/input-guards.ts';
import { HttpError, withUploadLimits } from '../../http/problem.ts';
import { safeParseMarked, validationProblem } from '../../http/validate.ts';
import { Satellite } from '../../models/index.ts';
import { recordAudit } from '../../services/audit.ts';
import { EMBED_NOT_FOUND, publicEmbed } from '../../services/embeds.ts';
import { buildOpenApi } from '../../services/openapi.ts';
import { parsedOf, type CachedSatellite, type CurrentSet } from '../../services/orbit-cache.ts';
import { sharedRedis } from '../../services/shared.ts';
import { getSatelliteService, unprocessable, type ElementFormat, type SatelliteService, type UploadResult } from '../../services/satellites.ts';
import { authenticate, authOf, canSee, corsHeaders, FailedAuthGuard, keyRateLimit, preflight, quotaAndUsage, type V1Auth } from './auth.ts';
import {
  CAPS,
  createSatelliteBody,
  expressPath,
  idParam,
  passesIcsQuery,
  passesQuery,
  positionQuery,
  positionsQuery,
  routeTemplate,
  trackQuery,
  tracksQuery,
  V1_ROUTES,
  type RouteSpec,
  type V1Passes,
  type V1Position,
  type V1Positions,
  type V1SatellitePosition,
  type V1Track,
  type V1Upload,
} from '@nadirline/shared/contract';
import { sendJson, TrackAnswerCache } from './answer-cache.ts';
import { engineProblem } from './errors.ts';
import { iso, round, trackGeoJsonText, trackPointsJson } from './serialize.ts';

const MINUTE_MS = 60_000;

// ---------------------------------------------------------------------------------------------
// Small helpers.

/** The query, validated; an empty parameter (`lat=`) counts as not given. Messages: http/validate.ts. */
function parseQuery<S extends z.ZodType>(schema: S, req: Request): z.output<S> {
  const raw = req.query as Record<string, unknown>;
  let query = raw;
  for (const k in raw) {
    if (raw[k] === '') {
      query = Object.fromEntries(Object.entries(raw).filter(([, v]) => v !== ''));
      break;
    }
  }
  const r = safeParseMarked(schema, query);
  if (!r.success) throw validationProblem(schema, query, r.error.issues, 'query', 'sentence');
  return r.data;
}

function checkId(id: unknown): string {
  const r = idParam.safeParse(id);
  if (!r.success) throw new HttpError('not-found', 'No satellite has this id.');
  return r.data;
}

async function visibleSatellite(sats: SatelliteService, auth: V1Auth, rawId: unknown): Promise<CachedSatellite> {
  const id = checkId(rawId);
  return seen(auth, id, sats.cache.peek(id) ?? (await sats.current(id)));
}

/** visibleSatellite without waiting when the satellite is cached (the hot path). */
function visibleSatelliteNow(sats: SatelliteService, auth: V1Auth, rawId: unknown): CachedSatellite | Promise<CachedSatellite> {
  const id = checkId(rawId);
  const hit = sats.cache.peek(id);
  if (hit === undefined) return sats.current(id).then((c) => seen(auth, id, c));
  return seen(auth, id, hit);
}

/**
 * Satellite views for this credential. Who uploaded a set (a member's name or a key's name) is
 * for the organization itself: server keys and console previews see it; browser keys and embeds
 * answer public pages, so they get `uploadedBy: null`.
 */
function viewsFor(auth: V1Auth, sats: SatelliteService, satellites: Parameters<SatelliteService['viewsWithUploaders']>[0]) {
  if (auth.key.kind === 'server' || auth.via === 'preview') return sats.viewsWithUploaders(satellites);
  return Promise.all(satellites.map((s) => sats.view(s, new Date(), undefined)));
}

function seen(auth: V1Auth, id: string, cached: CachedSatellite | null): CachedSatellite {
  if (!cached || !canSee(auth, cached.satellite)) throw new HttpError('not-found', `No satellite ${id} is visible to this key.`);
  return cached;
}

/** A track window within the caps, else a validation problem naming the parameter to change. */
function checkWindow(start: number, end: number, stepS: number): void {
  if (end <= start) {
    throw new HttpError('validation-failed', 'end must be after start.', { errors: [{ where: 'query.end', field: 'end', message: 'must be after start' }] });
  }
  if (end - start > CAPS.trackMaxWindowS * 1000) {
    throw new HttpError('validation-failed', `The window is ${((end - start) / 3_600_000).toFixed(1)} h; at most ${CAPS.trackMaxWindowS / 3600} h per request.`, {
      errors: [{ where: 'query.end', field: 'end', message: `at most ${CAPS.trackMaxWindowS / 3600} h after start` }],
    });
  }
  const count = gridCount(start, end, stepS);
  if (count > CAPS.trackMaxPoints) {
    throw new HttpError('validation-failed', `This window and step give ${count} points; at most ${CAPS.trackMaxPoints} per request. Use a larger step or a shorter window.`, {
      errors: [{ where: 'query.step', field: 'step', message: `gives ${count} points, more than ${CAPS.trackMaxPoints}` }],
    });
  }
}

function requireSet(c: CachedSatellite): CurrentSet {
  if (!c.current) throw new HttpError('no-element-set', `${c.satellite.name} has no element set yet; upload one (TLE or OMM) first.`);
  return c.current;
}

/** `{ id, epoch, ageDays }` of the set an answer used, its age at `atMs`. */
export function elementSetRef(cur: CurrentSet, atMs: number) {
  return { id: cur.record.id, epoch: cur.elementSet.epochIso, ageDays: round((atMs - cur.elementSet.epochMs) / 86_400_000, 4) };
}

function positionOf(cur: CurrentSet, atMs: number, name: string): { ok: false; error: HttpError } | { ok: true; value: V1Position } {
  const p = propagateAt(cur.satrec, atMs);
  if (!p.ok) return { ok: false as const, error: engineProblem(p.code, p.message, name) };
  return {
    ok: true as const,
    value: {
      t: iso(atMs),
      lat: round(p.latDeg, 5),
      lon: round(p.lonDeg, 5),
      altKm: round(p.altKm, 3),
      speedKmS: round(p.speedKmS, 4),
      footprintRadiusKm: round(footprintRadius(p.altKm, 0).radiusKm, 1),
      sunlit: isSunlit(p.positionEciKm, sunVector(atMs)),
      elementSet: elementSetRef(cur, atMs),
    },
  };
}

/** Window parts as the engine's multi-set functions take them: each part's set, starting where the part starts. */
function partSets(parts: WindowPart<CurrentSet>[]) {
  return parts.map((p) => ({ epochMs: p.startMs, satrec: p.set.satrec, cur: p.set }));
}

function uploadDetail(stored: number, duplicates: number, rejected: number): string {
  const sets = (n: number) => `${n} element set${n === 1 ? '' : 's'}`;
  const parts: string[] = [];
  if (stored > 0) parts.push(`Stored ${sets(stored)}`);
  if (duplicates > 0) {
    const already = `${duplicates === 1 ? 'was' : 'were'} stored already (same epoch)`;
    parts.push(stored > 0 ? `${duplicates} ${already}` : `Nothing new was stored: ${sets(duplicates)} ${already}`);
  }
  if (rejected > 0) parts.push(`${rejected} could not be used (see report)`);
  return `${parts.join('; ')}.`;
}

// ---------------------------------------------------------------------------------------------

export async function createV1Router(ctx: AppContext): Promise<Router> {
  const router = Router();
  const sats = getSatelliteService(ctx);
  const limiter = keyRateLimit(ctx);
  const trackAnswers = new TrackAnswerCache({ maxBytes: ctx.config.TRACK_CACHE_MB * 1024 * 1024 });
  // Without PUBLIC_URL the server URL is relative: the document is right on any host and port.
  const openapi = buildOpenApi(ctx.config.PUBLIC_URL ? ctx.config.publicUrl : '/');
  const openapiText = JSON.stringify(openapi, null, 2);
  const openapiEtag = `"${crypto.createHash('sha1').update(openapiText).digest('base64url').slice(0, 20)}"`;

  router.use(corsHeaders);
  router.options('/*splat', preflight(ctx));
  const guard = new FailedAuthGuard(sharedRedis(ctx));

  /** The activity the console records for an upload, with the key as the actor. Nothing new, nothing recorded. */
  const auditUpload = async (auth: V1Auth, satellite: Satellite, result: UploadResult, how: string) => {
    if (result.created.length === 0) return;
    await recordAudit(ctx, {
      organizationId: satellite.organizationId,
      actorKeyId: auth.key.id,
      action: 'element-set.upload',
      targetType: 'satellite',
      targetId: satellite.id,
      detail: {
        satellite: satellite.name,
        how,
        accepted: result.created.length,
        ...(result.duplicates ? { duplicates: result.duplicates } : {}),
        rejected: result.rejected,
        elementSetIds: result.created.slice(0, 20).map((c) => c.id),
      },
    });
  };

  const spec = (method: RouteSpec['method'], path: string): RouteSpec => {
    const s = V1_ROUTES.find((r) => r.method === method && (r.path === path || expressPath(r.path) === path));
    if (!s) throw new Error(`no route spec for ${method} ${path}`);
    return s;
  };

  /** Mount a keyed route from the table. */
  const keyed = (method: RouteSpec['method'], path: string, ...handlers: RequestHandler[]) => {
    const s = spec(method, path);
    if (s.access === 'public') throw new Error('keyed() on a public route');
    const chain: RequestHandler[] = [authenticate(ctx, s.access, { guard }), limiter, quotaAndUsage(ctx, routeTemplate(s)), ...handlers];
    if (method === 'get') router.get(expressPath(s.path), ...chain);
    else router.post(expressPath(s.path), ...chain);
  };

  // -- satellites ------------------------------------------------------------------------------

  keyed('get', '/satellites', async (_req, res) => {
    const auth = authOf(res);
    const rows = await Satellite.findAll({ where: { organizationId: auth.key.organizationId }, order: [['name', 'ASC']] });
    const visible = rows.filter((s) => canSee(auth, s));
    res.json({ satellites: await viewsFor(auth, sats, visible) });
  });

  keyed('get', '/satellites/:id', async (req, res) => {
    const auth = authOf(res);
    const c = await visibleSatellite(sats, auth, req.params.id);
    const [view] = await viewsFor(auth, sats, [c.satellite]);
    res.json(view);
  });

  keyed('get', '/satellites/:id/elements', async (req, res) => {
    const c = await visibleSatellite(sats, authOf(res), req.params.id);
    const cur = requireSet(c);
    res.json(sats.derived(cur.elementSet));
  });

  keyed('get', '/satellites/:id/position', (req, res) => {
    const q = parseQuery(positionQuery, req);
    const send = (c: CachedSatellite, cur: CurrentSet, at: number) => {
      const p = positionOf(cur, at, c.satellite.name);
      if (!p.ok) throw p.error;
      res.setHeader('Cache-Control', q.at !== undefined ? 'private, max-age=60' : 'no-store');
      const body: V1SatellitePosition = { satelliteId: c.satellite.id, ...p.value };
      sendJson(res, body);
    };
    const answer = (c: CachedSatellite): Promise<void> | undefined => {
      const cur = requireSet(c);
      const at = q.at ?? Date.now();
      // The set in force: the current set from its epoch on (no database read), else the history.
      if (at >= cur.elementSet.epochMs) {
        send(c, cur, at);
        return undefined;
      }
      return sats.setAt(c, at).then((inForce) => send(c, inForce ?? cur, at));
    };
    const c = visibleSatelliteNow(sats, authOf(res), req.params.id);
    if (c instanceof Promise) return c.then(answer);
    return answer(c);
  });

  keyed('get', '/positions', async (req, res) => {
    const q = parseQuery(positionsQuery, req);
    const auth = authOf(res);
    const at = q.at ?? Date.now();
    const found = await Promise.all(q.ids.map((id) => sats.current(id)));
    const missing = q.ids.filter((id, i) => {
      const c = found[i];
      return !c || !canSee(auth, c.satellite);
    });
    if (missing.length > 0) throw new HttpError('not-found', `No satellite ${missing.join(', ')} is visible to this key.`, { missing });
    const positions = await Promise.all(
      (found as CachedSatellite[]).map(async (c): Promise<V1Positions['positions'][number]> => {
        const base = { id: c.satellite.id, name: c.satellite.name };
        if (!c.current) return { ...base, error: { code: 'no-element-set', detail: `${c.satellite.name} has no element set yet.` } };
        const cur = at >= c.current.elementSet.epochMs ? c.current : ((await sats.setAt(c, at)) ?? c.current);
        const p = positionOf(cur, at, c.satellite.name);
        return p.ok ? { ...base, ...p.value } : { ...base, error: { code: p.error.code, detail: p.error.detail } };
      }),
    );
    res.setHeader('Cache-Control', q.at !== undefined ? 'private, max-age=60' : 'no-store');
    const body: V1Positions = { t: iso(at), positions };
    res.json(body);
  });

  /** The window of a track request: explicit start and end, or defaults from the orbit (of the set in force at start); refused beyond the caps. */
  const trackWindow = (q: { start?: number | undefined; end?: number | undefined; step?: number | undefined }, cur: CurrentSet) => {
    const stepS = q.step ?? CAPS.trackDefaultStepS;
    const start = q.start ?? Math.floor(Date.now() / MINUTE_MS) * MINUTE_MS;
    const periodMs = (1440 / cur.elementSet.meanMotionRevPerDay) * MINUTE_MS;
    const end = q.end ?? start + Math.min(Math.ceil(periodMs / (stepS * 1000)) * stepS * 1000, CAPS.trackMaxWindowS * 1000);
    checkWindow(start, end, stepS);
    return { start, end, stepS, count: gridCount(start, end, stepS) };
  };
  /** The set in force at a track's start (its period sets the default window). */
  const startSetOf = async (c: CachedSatellite, cur: CurrentSet, start: number) => (start >= cur.elementSet.epochMs ? cur : ((await sats.setAt(c, start)) ?? cur));
  /** Cache-Control of a track answer: public for whole-minute windows asked for explicitly. */
  const trackCaching = (q: { start?: number | undefined; end?: number | undefined }, start: number, end: number) => {
    const quantum = CAPS.trackCacheQuantumS * 1000;
    const explicit = q.start !== undefined && q.end !== undefined;
    return explicit && start % quantum === 0 && end % quantum === 0 ? 'public, max-age=600, stale-while-revalidate=60' : explicit ? 'private, max-age=60' : 'private, max-age=30';
  };
  /** ETag of a track answer: the satellite, every set in force over the window, the window and the format. */
  const trackEtag = (c: CachedSatellite, parts: WindowPart<CurrentSet>[], start: number, end: number, stepS: number, format: string) =>
    `W/"${crypto.hash('sha1', `${c.satellite.id}|${parts.map((p) => p.set.record.id).join(',')}|${start}|${end}|${stepS}|${format}|${c.satellite.name}`, 'base64url').slice(0, 22)}"`;
  /** Samples of a window from the sets in force, split into parts where the set changes, with each part's description. Throws the engine's problem. */
  const trackParts = (c: CachedSatellite, windowParts: WindowPart<CurrentSet>[], start: number, end: number, stepS: number) => {
    const r = sampleTrackAcrossSets(partSets(windowParts), { startMs: start, endMs: end, stepS, maxSamples: CAPS.trackMaxPoints });
    if (!r.ok) throw engineProblem(r.code, r.message, c.satellite.name);
    const samples = r.parts.length === 1 ? (r.parts[0]?.samples ?? []) : r.parts.flatMap((p) => p.samples);
    let firstIndex = 0;
    const parts = r.parts.map((p) => {
      const first = p.samples[0]?.t ?? start;
      const part = { elementSet: elementSetRef(p.set.cur, first), start: iso(first), end: iso(p.samples[p.samples.length - 1]?.t ?? first), firstIndex, count: p.samples.length };
      firstIndex += p.samples.length;
      return part;
    });
    return { r, samples, parts };
  };
  /** The JSON text of one track answer, from the finished-answer cache or computed and kept there. Throws the engine's problem. */
  const trackJson = (c: CachedSatellite, windowParts: WindowPart<CurrentSet>[], start: number, end: number, stepS: number, etag: string, extra: Record<string, string> = {}): string | Buffer => {
    // A cached answer is its UTF-8 bytes, sent as they are when nothing is added.
    let body: string | Buffer | undefined = trackAnswers.get(etag)?.body;
    if (body === undefined) {
      const { r, samples, parts } = trackParts(c, windowParts, start, end, stepS);
      const firstSet = r.parts[0]?.set.cur ?? (windowParts[0]?.set as CurrentSet);
      const headFields: Omit<V1Track, 'points'> = {
        satelliteId: c.satellite.id,
        elementSetId: firstSet.record.id,
        elementSet: elementSetRef(firstSet, start),
        parts,
        start: iso(start),
        end: iso(samples[samples.length - 1]?.t ?? end),
        stepS,
        count: samples.length,
      };
      const head = JSON.stringify(headFields);
      body = `${head.slice(0, -1)},"points":${trackPointsJson(samples)}}`;
      trackAnswers.set(etag, body, 'application/json; charset=utf-8');
    }
    const more = Object.entries(extra);
    if (more.length === 0) return body;
    const text = typeof body === 'string' ? body : body.toString('utf8');
    return `${text.slice(0, -1)},${more.map(([k, v]) => `${JSON.stringify(k)}:${JSON.stringify(v)}`).join(',')}}`;
  };

  keyed('get', '/satellites/:id/track', async (req, res) => {
    const q = parseQuery(trackQuery, req);
    const c = await visibleSatellite(sats, authOf(res), req.params.id);
    const cur = requireSet(c);
    const startSet = await startSetOf(c, cur, q.start ?? Math.floor(Date.now() / MINUTE_MS) * MINUTE_MS);
    const { start, end, stepS } = trackWindow(q, startSet);
    const windowParts = await sats.setsInForce(c, start, end);
    const etag = trackEtag(c, windowParts, start, end, stepS, q.format);
    res.setHeader('ETag', etag);
    res.setHeader('Vary', 'Origin, Authorization');
    res.setHeader('Cache-Control', trackCaching(q, start, end));
    if (req.fresh) {
      res.status(304).end();
      return;
    }
    if (q.format === 'geojson') {
      const cachedAnswer = trackAnswers.get(etag);
      if (cachedAnswer) {
        sendJson(res, cachedAnswer.body, cachedAnswer.type);
        return;
      }
      const { r, parts } = trackParts(c, windowParts, start, end, stepS);
      // One MultiLineString feature per set in force (one feature when one set covers the window).
      const features = r.parts.flatMap((p, i) =>
        trackToGeoJSON(p.samples, {
          satelliteId: c.satellite.id,
          name: c.satellite.name,
          elementSetId: p.set.cur.record.id,
          elementSet: parts[i]?.elementSet,
          start: parts[i]?.start,
          end: i === r.parts.length - 1 ? iso(end) : parts[i]?.end,
          stepS,
        }).features,
      );
      const body = trackGeoJsonText({ type: 'FeatureCollection', features });
      trackAnswers.set(etag, body, 'application/geo+json; charset=utf-8');
      sendJson(res, body, 'application/geo+json; charset=utf-8');
      return;
    }
    sendJson(res, trackJson(c, windowParts, start, end, stepS, etag));
  });

  // One window for many satellites: each entry is the one-satellite answer (from the same cache)
  // or the problem that route would give, so one bad id never blanks the others.
  keyed('get', '/tracks', async (req, res) => {
    const q = parseQuery(tracksQuery, req);
    const auth = authOf(res);
    const stepS = q.step ?? CAPS.trackDefaultStepS;
    const start = q.start ?? Math.floor(Date.now() / MINUTE_MS) * MINUTE_MS;
    if (q.end !== undefined) checkWindow(start, q.end, stepS);
    const found = await Promise.all(q.ids.map((id) => sats.current(id)));
    const plans = await Promise.all(q.ids.map(async (id, i) => {
      const c = found[i];
      if (!c || !canSee(auth, c.satellite)) return { id, error: new HttpError('not-found', `No satellite ${id} is visible to this key.`), name: null };
      if (!c.current) return { id, error: new HttpError('no-element-set', `${c.satellite.name} has no element set yet; upload one (TLE or OMM) first.`), name: c.satellite.name };
      const startSet = await startSetOf(c, c.current, start);
      const w = trackWindow({ start, end: q.end, step: stepS }, startSet);
      const windowParts = await sats.setsInForce(c, w.start, w.end);
      return { id, c, windowParts, w, name: c.satellite.name, etag: trackEtag(c, windowParts, w.start, w.end, w.stepS, 'json') };
    }));
    const points = plans.reduce((n, p) => n + ('w' in p && p.w ? p.w.count : 0), 0);
    if (points > CAPS.tracksMaxPoints) {
      throw new HttpError('validation-failed', `These ${q.ids.length} tracks would hold ${points} points; at most ${CAPS.tracksMaxPoints} per request. Use a larger step, a shorter window or fewer ids.`, {
        errors: [{ where: 'query.ids', field: 'ids', message: `${q.ids.length} tracks of this window give ${points} points, more than ${CAPS.tracksMaxPoints}` }],
      });
    }
    const etag = `W/"${crypto.hash('sha1', plans.map((p) => ('etag' in p ? p.etag : `${p.id}:${p.error.code}`)).join('|'), 'base64url').slice(0, 22)}"`;
    res.setHeader('ETag', etag);
    res.setHeader('Vary', 'Origin, Authorization');
    res.setHeader('Cache-Control', trackCaching(q, start, q.end ?? start + 1));
    if (req.fresh) {
      res.status(304).end();
      return;
    }
    const entries = plans.map((p) => {
      const fail = (e: HttpError) => JSON.stringify({ satelliteId: p.id, name: p.name, error: { code: e.code, status: e.status, detail: e.detail } });
      if (!('c' in p) || !p.c || !p.windowParts || !p.w || !p.etag) return fail(p.error!);
      try {
        return trackJson(p.c, p.windowParts, p.w.start, p.w.end, p.w.stepS, p.etag, { name: p.c.satellite.name });
      } catch (e) {
        if (e instanceof HttpError) return fail(e);
        throw e;
      }
    });
    sendJson(res, `{"start":${JSON.stringify(iso(start))},"stepS":${stepS},"tracks":[${entries.join(',')}]}`);
  });

  /** Passes from the sets in force over the window (piecewise), or the problem to answer. */
  const passesOver = async (c: CachedSatellite, observer: { latDeg: number; lonDeg: number; altM: number }, startMs: number, days: number, minElevationDeg: number) => {
    requireSet(c);
    const windowParts = await sats.setsInForce(c, startMs, startMs + days * 86_400_000);
    const r = findPassesAcrossSets(partSets(windowParts), observer, { startMs, days, minElevationDeg });
    if (!r.ok) {
      if (r.code === 'invalid-observer' || r.code === 'invalid-window') {
        throw new HttpError('validation-failed', r.message, { errors: [{ where: 'query', message: r.message }] });
      }
      throw engineProblem(r.code, r.message, c.satellite.name);
    }
    return r;
  };

  keyed('get', '/satellites/:id/passes', async (req, res) => {
    const q = parseQuery(passesQuery, req);
    const c = await visibleSatellite(sats, authOf(res), req.params.id);
    const start = q.start ?? Date.now();
    const observer = { latDeg: q.lat, lonDeg: q.lon, altM: q.altM };
    const r = await passesOver(c, observer, start, q.days, q.minElevation);
    const passes = r.passes.map((p) => {
      const base = {
        rise: { t: iso(p.rise.t), azimuth: round(p.rise.azimuthDeg, 2) },
        culmination: {
          t: iso(p.culmination.t),
          azimuth: round(p.culmination.azimuthDeg, 2),
          elevation: round(p.culmination.elevationDeg, 2),
          rangeKm: round(p.culmination.rangeKm, 1),
        },
        set: { t: iso(p.set.t), azimuth: round(p.set.azimuthDeg, 2) },
        visible: p.visible,
        inProgressAtStart: p.inProgressAtStart,
        inProgressAtEnd: p.inProgressAtEnd,
      };
      if (!q.path) return base;
      const sky = skyPath(p.inForce.satrec, observer, p, CAPS.skyPathStepS);
      if (!sky.ok) throw engineProblem(sky.code, sky.message, c.satellite.name);
      return {
        ...base,
        path: sky.points.map((pt) => ({ t: iso(pt.t), azimuth: round(pt.azimuthDeg, 2), elevation: round(pt.elevationDeg, 2), sunlit: pt.sunlit, dark: pt.dark })),
      };
    });
    const first = r.sets[0]?.cur ?? requireSet(c);
    res.setHeader('Cache-Control', q.start !== undefined ? 'private, max-age=300' : 'private, max-age=60');
    const body: V1Passes = {
      satelliteId: c.satellite.id,
      elementSet: elementSetRef(first, start),
      elementSets: r.sets.map((s, i) => elementSetRef(s.cur, i === 0 ? start : s.epochMs)),
      observer: { lat: q.lat, lon: q.lon, altM: q.altM },
      start: iso(start),
      end: iso(start + q.days * 86_400_000),
      minElevation: q.minElevation,
      alwaysUp: r.alwaysUp,
      passes,
    };
    res.json(body);
  });

  keyed('get', '/satellites/:id/passes.ics', async (req, res) => {
    const q = parseQuery(passesIcsQuery, req);
    const c = await visibleSatellite(sats, authOf(res), req.params.id);
    // Calendars start at the current minute, so polls within a minute answer the same document.
    const now = Date.now();
    const start = Math.floor(now / MINUTE_MS) * MINUTE_MS;
    const observer = { latDeg: q.lat, lonDeg: q.lon, altM: q.altM };
    const r = await passesOver(c, observer, start, q.days, q.minElevation);
    const passes = r.passes.filter((p) => !p.inProgressAtStart && (!q.visible || p.visible));
    const text = passCalendar({ satellite: { id: c.satellite.id, name: c.satellite.name }, observer, passes, generatedMs: start, minElevationDeg: q.minElevation });
    const etag = `W/"${crypto.hash('sha1', text, 'base64url').slice(0, 22)}"`;
    res.setHeader('ETag', etag);
    res.setHeader('Cache-Control', 'private, max-age=3600');
    res.setHeader('Vary', 'Origin, Authorization');
    res.setHeader('Content-Disposition', `inline; filename="${c.satellite.name.replace(/[^A-Za-z0-9._-]+/g, '-') || 'satellite'}-passes.ics"`);
    if (req.fresh) {
      res.status(304).end();
      return;
    }
    sendJson(res, text, 'text/calendar; charset=utf-8');
  });

  keyed('get', '/satellites/:id/element-sets', async (req, res) => {
    const auth = authOf(res);
    if (auth.key.kind !== 'server' && auth.via !== 'preview') {
      throw new HttpError('forbidden', 'The element-set history is for server keys and console previews; browser keys and embeds answer public pages.');
    }
    const c = await visibleSatellite(sats, auth, req.params.id);
    const records = await sats.listElementSets(c.satellite.id);
    const uploaders = await sats.uploaderNames(records);
    const now = new Date();
    res.setHeader('Cache-Control', 'private, no-cache');
    res.json({
      satelliteId: c.satellite.id,
      currentElementSetId: c.satellite.currentElementSetId,
      elementSets: records.map((rec) => {
        const es = parsedOf(rec);
        const d = sats.derived(es, now);
        return {
          ...sats.summary(rec, es, now, uploaders),
          meanMotionRevPerDay: es.meanMotionRevPerDay,
          apogeeAltKm: round(d.apogeeAltKm, 3),
          perigeeAltKm: round(d.perigeeAltKm, 3),
          inclinationDeg: es.inclinationDeg,
        };
      }),
    });
  });

  // -- writes ----------------------------------------------------------------------------------

  const jsonBody = express.json({ limit: CAPS.uploadMaxBytes });
  keyed('post', '/satellites', jsonBody, refuseNulInJson, async (req, res) => {
    if (!req.is('application/json')) throw new HttpError('unsupported-media-type', 'Send JSON: { "name": "...", "elements": "<TLE or OMM text>" }.');
    const r = safeParseMarked(createSatelliteBody, req.body);
    if (!r.success) throw validationProblem(createSatelliteBody, req.body, r.error.issues, 'body', 'sentence');
    const auth = authOf(res);
    const { satellite, upload } = await sats.createSatellite(
      auth.key.organizationId,
      { name: r.data.name, description: r.data.description, elementsText: r.data.elements },
      { keyId: auth.key.id },
    );
    // The same activity the console records, with the key as the actor ("by key <name>").
    await recordAudit(ctx, { organizationId: satellite.organizationId, actorKeyId: auth.key.id, action: 'satellite.create', targetType: 'satellite', targetId: satellite.id, detail: { name: satellite.name } });
    if (upload) await auditUpload(auth, satellite, upload, 'text');
    await satellite.reload();
    const [view] = await sats.viewsWithUploaders([satellite]);
    res.status(201).location(`/v1/satellites/${satellite.id}`).json({ ...view, report: upload?.report ?? [] });
  });

  const textBody = express.text({ type: ['text/*', 'application/xml', 'application/json', 'application/*+xml', 'application/*+json'], limit: CAPS.uploadMaxBytes });
  const files = readMultipart(
    multer({ storage: multer.memoryStorage(), limits: { fileSize: CAPS.uploadMaxBytes, files: CAPS.uploadMaxFiles, fields: 10 } }).any(),
    (err) => withUploadLimits(err, { fileBytes: CAPS.uploadMaxBytes, files: CAPS.uploadMaxFiles }),
  );
  keyed('post', '/satellites/:id/element-sets', async (req, res, next) => {
    // Check the satellite before reading any body.
    const auth = authOf(res);
    const id = checkId(req.params.id);
    const c = await sats.current(id);
    if (!c || !canSee(auth, c.satellite)) throw new HttpError('not-found', `No satellite ${id} is visible to this key.`);
    if (req.is('multipart/form-data')) files(req, res, next);
    else if (req.is(['text/*', 'application/xml', 'application/json', 'application/*+xml', 'application/*+json'])) textBody(req, res, next);
    else throw new HttpError('unsupported-media-type', 'Send the element set as text/plain (TLE or OMM KVN), application/xml (OMM XML), application/json (OMM JSON) or multipart/form-data files.');
  }, async (req, res) => {
    const auth = authOf(res);
    const satellite = await Satellite.findByPk(String(req.params.id));
    if (!satellite) throw new HttpError('not-found', 'The satellite was deleted meanwhile.');
    let format: ElementFormat | undefined;
    let text: string | undefined;
    let upFiles: Array<{ name: string; text: string }> | undefined;
    if (req.is('multipart/form-data')) {
      const list = (req.files as Express.Multer.File[] | undefined) ?? [];
      upFiles = list.map((f) => ({ name: f.originalname || f.fieldname, text: f.buffer.toString('utf8') }));
      const bodyText = (req.body as Record<string, unknown> | undefined)?.text;
      if (typeof bodyText === 'string' && bodyText.trim()) text = bodyText;
      if (upFiles.length === 0 && text === undefined) {
        throw new HttpError('validation-failed', 'The form holds no file; send element sets as files[] (or a text field).', { errors: [{ where: 'body.files[]', field: 'files[]', message: 'files[] holds no file' }] });
      }
    } else {
      text = typeof req.body === 'string' ? req.body : '';
      if (req.is(['application/xml', 'text/xml', 'application/*+xml'])) format = 'omm-xml';
      else if (req.is(['application/json', 'application/*+json'])) format = 'omm-json';
      if (!text.trim()) throw new HttpError('validation-failed', 'The body is empty; send the element set itself.', { errors: [{ where: 'body', message: 'body is empty' }] });
    }
    const result = await sats.addElementSets(satellite, { text, format, files: upFiles }, { keyId: auth.key.id });
    if (result.accepted === 0) throw unprocessable(result.report);
    await auditUpload(auth, satellite, result, upFiles?.length ? `files: ${upFiles.map((f) => f.name).join(', ')}`.slice(0, 300) : (format ?? 'text'));
    const now = new Date();
    const uploaders = await sats.uploaderNames(result.created);
    const summaries = result.created.map((r) => sats.summary(r, parsedOf(r), now, uploaders));
    const first = result.created[0];
    const stored = result.created.length;
    // accepted counts the sets stored by this request; duplicates (epochs already stored) apart.
    const body: V1Upload = {
      detail: uploadDetail(stored, result.duplicates, result.rejected),
      elementSet: first && summaries[0] ? { ...summaries[0], elements: { ...parsedOf(first) } } : null,
      elementSets: summaries,
      accepted: stored,
      duplicates: result.duplicates,
      rejected: result.rejected,
      report: result.report,
    };
    res.status(stored > 0 ? 201 : 200).json(body);
  });

  // -- public ----------------------------------------------------------------------------------

  // An unknown embed id in the path is a missing resource (404), not a wrong credential; the
  // failed lookup still counts against the caller's failed-credential budget (auth.ts).
  const embedAuth = authenticate(ctx, 'read', { embedFromPath: 'id', guard });
  const unknownEmbed = (id: string) => (err: unknown): never => {
    if (err instanceof HttpError && err.code === 'invalid-key' && err.extras['reason'] === EMBED_NOT_FOUND) {
      throw new HttpError('not-found', `No embed ${id} exists; it may have been deleted. Ask the site that showed it for a new snippet or link.`);
    }
    throw err;
  };
  const embedByPath: RequestHandler = (req, res, next) => {
    const onError = unknownEmbed(String(req.params.id ?? ''));
    try {
      const r = embedAuth(req, res, next) as unknown;
      return r instanceof Promise ? r.catch(onError) : undefined;
    } catch (err) {
      return onError(err);
    }
  };

  router.get('/embeds/:id', embedByPath, limiter, quotaAndUsage(ctx, 'GET /v1/embeds/{id}'), async (req, res) => {
    const { embed } = authOf(res);
    if (!embed) throw new HttpError('not-found', 'No such embed.');
    res.setHeader('Cache-Control', 'private, max-age=30');
    res.json(publicEmbed(embed));
  });

  router.get('/openapi.json', (req, res) => {
    res.setHeader('Cache-Control', 'public, max-age=300');
    res.setHeader('ETag', openapiEtag);
    if (req.fresh) {
      res.status(304).end();
      return;
    }
    res.type('application/json').send(openapiText);
  });

  router.all('/*splat', (req: Request, _res: Response) => {
    const known = V1_ROUTES.filter((r) => new RegExp(`^${expressPath(r.path).replace(/:[A-Za-z]+/g, '[^/]+')}$`).test(req.path));
    if (known.length > 0) {
      throw new HttpError('method-not-allowed', `${req.method} is not allowed here; this path answers ${known.map((r) => r.method.toUpperCase()).join(', ')}.`, {}, { Allow: known.map((r) => r.method.toUpperCase()).join(', ') });
    }
    throw new HttpError('not-found', `No /v1 route ${req.path}. The routes are listed at /v1/openapi.json and /docs/api.`);
  });

  return router;
}
