/**
 * The real app in-process (supertest) over a fresh temp SQLite file, with an organization, keys
 * and satellites made through the same services the console uses.
 *
 *   const t = await startKeyedApp();
 *   await request(t.app).get('/v1/satellites').set('Authorization', `Bearer ${t.serverKey}`);
 *   t.satellites.leo.id / t.satellites.geo.id / t.satellites.empty.id (no element set)
 *   await t.close();
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fromKeplerian, toTle, type ElementSet } from '@nadirline/shared';
import { createApp, type NadirlineApp } from '@nadirline/server/app';
import { loadConfig } from '@nadirline/server/config';
import { Organization, Satellite, type Plan } from '@nadirline/server/models/index.ts';
import { getEmbedService } from '@nadirline/server/services/embeds.ts';
import { getKeyService, type CreateKeyInput } from '@nadirline/server/services/keys.ts';
import { getSatelliteService } from '@nadirline/server/services/satellites.ts';
import { testStores } from './stores.ts';

export const PAGE_ORIGIN = 'https://pages.example.org';
export const WILDCARD_ORIGIN = 'https://*.example.net';

/** A LEO element set (520 km, 97.5 deg) with its epoch `hoursAgo` before now, as TLE text. */
export function leoTle(opts: { hoursAgo?: number; catalogNumber?: string; name?: string; epochMs?: number } = {}): string {
  return toTle(leoElementSet(opts)).text;
}

export function leoElementSet(opts: { hoursAgo?: number; catalogNumber?: string; name?: string; epochMs?: number } = {}): ElementSet {
  const epochMs = opts.epochMs ?? Math.floor((Date.now() - (opts.hoursAgo ?? 2) * 3_600_000) / 60_000) * 60_000;
  const r = fromKeplerian({
    epoch: new Date(epochMs).toISOString(),
    name: opts.name ?? 'TEST LEO',
    catalogNumber: opts.catalogNumber ?? '99801',
    intlDesignator: '24801A',
    semiMajorAxisKm: 6378.137 + 520,
    eccentricity: 0.001,
    inclinationDeg: 97.5,
    raanDeg: 30,
    argPerigeeDeg: 90,
    meanAnomalyDeg: 10,
    bstar: 0.0001,
  });
  if (!r.ok) throw new Error(`fixture element set refused: ${r.message}`);
  return r.elementSet;
}

export function geoTle(): string {
  const r = fromKeplerian({
    epoch: new Date(Math.floor(Date.now() / 60_000) * 60_000 - 3_600_000).toISOString(),
    name: 'TEST GEO',
    catalogNumber: '99802',
    intlDesignator: '24802A',
    meanMotionRevPerDay: 1.00273791,
    eccentricity: 0.0002,
    inclinationDeg: 0.05,
    raanDeg: 0,
    argPerigeeDeg: 0,
    meanAnomalyDeg: 100,
  });
  if (!r.ok) throw new Error(`fixture element set refused: ${r.message}`);
  return toTle(r.elementSet).text;
}

export interface KeyedTestApp extends NadirlineApp {
  dir: string;
  sqliteFile: string;
  orgId: string;
  otherOrgId: string;
  browserKey: string;
  browserKeyId: string;
  serverKey: string;
  serverKeyId: string;
  /** Server key without the element-sets:write scope. */
  readKey: string;
  /** Server key of another organization. */
  otherKey: string;
  embedId: string;
  satellites: { leo: Satellite; geo: Satellite; empty: Satellite; other: Satellite };
  /** Make another key in the main organization. */
  makeKey(input: Partial<CreateKeyInput> & Pick<CreateKeyInput, 'kind'>): Promise<{ id: string; secret: string }>;
}

export async function startKeyedApp(env: Record<string, string> = {}, opts: { plan?: Plan } = {}): Promise<KeyedTestApp> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-v1-'));
  const sqliteFile = path.join(dir, 'test.sqlite');
  const stores = await testStores();
  const config = loadConfig({ NODE_ENV: 'test', SQLITE_FILE: sqliteFile, PUBLIC_URL: 'http://nadirline.test', LOG_LEVEL: 'silent', DEMO: 'false', ...stores.env, ...env });
  const built = await createApp(config).catch(async (err: unknown) => {
    await stores.drop();
    fs.rmSync(dir, { recursive: true, force: true });
    throw err;
  });
  const ctx = built.context;
  const keys = getKeyService(ctx);
  const sats = getSatelliteService(ctx);

  const org = await Organization.create({ id: 'org_test', name: 'Test Centre', plan: opts.plan ?? 'mission' });
  const other = await Organization.create({ id: 'org_other', name: 'Other Centre', plan: 'starter' });
  const browser = await keys.createKey({ organizationId: org.id, kind: 'browser', name: 'Pages', origins: [PAGE_ORIGIN, WILDCARD_ORIGIN], rateLimitPerMin: 1000 });
  const server = await keys.createKey({ organizationId: org.id, kind: 'server', name: 'Pipeline', scopes: ['read', 'element-sets:write'], rateLimitPerMin: 1000 });
  const read = await keys.createKey({ organizationId: org.id, kind: 'server', name: 'Reader', rateLimitPerMin: 1000 });
  const otherKey = await keys.createKey({ organizationId: other.id, kind: 'server', name: 'Theirs', scopes: ['read', 'element-sets:write'] });

  const leo = (await sats.createSatellite(org.id, { name: 'Test LEO', elementsText: leoTle() }, {})).satellite;
  const geo = (await sats.createSatellite(org.id, { name: 'Test GEO', elementsText: geoTle() }, {})).satellite;
  const empty = (await sats.createSatellite(org.id, { name: 'Not yet launched' }, {})).satellite;
  const otherSat = (await sats.createSatellite(other.id, { name: 'Their LEO', elementsText: leoTle({ catalogNumber: '99803' }) }, {})).satellite;
  const embed = await getEmbedService(ctx).createEmbed(org.id, { name: 'Lobby', satelliteIds: [leo.id], options: { theme: 'dark' }, apiKeyId: browser.key.id });

  return {
    ...built,
    dir,
    sqliteFile,
    orgId: org.id,
    otherOrgId: other.id,
    browserKey: browser.secret,
    browserKeyId: browser.key.id,
    serverKey: server.secret,
    serverKeyId: server.key.id,
    readKey: read.secret,
    otherKey: otherKey.secret,
    embedId: embed.id,
    satellites: { leo, geo, empty, other: otherSat },
    async makeKey(input) {
      const made = await keys.createKey({ organizationId: org.id, name: 'Extra', ...input });
      return { id: made.key.id, secret: made.secret };
    },
    async close() {
      await built.close();
      await stores.drop();
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}
