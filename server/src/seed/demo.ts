/**
 * Demo seed, run at start when config.demo is on. Everything here is invented: the Ostwick
 * Science Centre, its people, and its four satellites, whose element sets are synthesized from
 * Keplerian elements at seed time so their epochs are fresh.
 *
 * Idempotent: a second start keeps the organization, users, keys and element sets. On every
 * start it (1) adds this run's port to the demo browser key's origins when missing, and (2) adds
 * a freshly synthesized element set to a demo satellite whose current set is over a day old,
 * as a flight-dynamics pipeline would. If data/demo-credentials.json was lost, passwords are
 * reset and the demo keys replaced so the file can be written again.
 *
 * The first run also writes the activity log of what it made, through services/audit.ts as the
 * console would, by the people who may do it: the editor registers the satellites and uploads
 * their first element sets, the admin creates the two keys, the editor creates the embed. Later
 * runs add no events.
 *
 *   seedDemo(ctx, { port }) -> { created, credentials, credentialsFile }
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { fromKeplerian, gmstRad, subsolarPoint, type ElementSet } from '@nadirline/shared';
import { devFakesRefused } from '../config.ts';
import type { AppContext } from '../context.ts';
import { ApiKey, Embed, Membership, Organization, Satellite, User, type Role } from '../models/index.ts';
import { hashPassword } from '../services/accounts.ts';
import { recordAudit, type AuditInput } from '../services/audit.ts';
import { seedDemoBilling } from './demo-billing.ts';
import { getEmbedService } from '../services/embeds.ts';
import { getKeyService, normalizeOrigin } from '../services/keys.ts';
import { getSatelliteService } from '../services/satellites.ts';

export const DEMO_ORG_ID = 'org_demo_ostwick';
export const DEMO_ORG_NAME = 'Ostwick Science Centre';
const DEMO_DOMAIN = 'ostwick.example.org';

const PEOPLE: Array<{ role: Role; name: string; email: string }> = [
  { role: 'owner', name: 'Maren Ostby', email: `maren.owner@${DEMO_DOMAIN}` },
  { role: 'admin', name: 'Tobias Venn', email: `tobias.admin@${DEMO_DOMAIN}` },
  { role: 'editor', name: 'Ilse Harrow', email: `ilse.editor@${DEMO_DOMAIN}` },
  { role: 'viewer', name: 'Kofi Lund', email: `kofi.viewer@${DEMO_DOMAIN}` },
];

interface DemoSatellite {
  id: string;
  name: string;
  description: string;
  catalogNumber: number;
  intlDesignator: string;
  /** Keplerian elements for an epoch; the GEO one places itself over a chosen longitude. */
  elements: (epochMs: number) => Record<string, number | string>;
}

const EARTH_RADIUS_KM = 6378.137;

const SATELLITES: DemoSatellite[] = [
  {
    id: 'sat_demo_wren',
    name: 'Wren Pathfinder',
    description: 'Student-built 3U cubesat in a sun-synchronous dawn-dusk orbit at about 520 km (invented demo satellite).',
    catalogNumber: 99_901,
    intlDesignator: '24901A',
    // Dawn-dusk: the ascending node sits 90 deg east of the Sun (local time of the node 18:00).
    // The Sun's right ascension is GMST plus the sub-solar longitude.
    elements: (epochMs) => {
      const sunRaDeg = (gmstRad(epochMs) * 180) / Math.PI + subsolarPoint(epochMs).lonDeg;
      const raanDeg = (((sunRaDeg + 90) % 360) + 360) % 360;
      return { semiMajorAxisKm: EARTH_RADIUS_KM + 520, eccentricity: 0.0011, inclinationDeg: 97.5, raanDeg, argPerigeeDeg: 88.0, meanAnomalyDeg: 272.1, bstar: 0.00012 };
    },
  },
  {
    id: 'sat_demo_orrery',
    name: 'Orrery-1',
    description: 'Outreach camera satellite sharing a 51.6 degree orbit near 420 km (invented demo satellite).',
    catalogNumber: 99_902,
    intlDesignator: '24902A',
    elements: () => ({ semiMajorAxisKm: EARTH_RADIUS_KM + 420, eccentricity: 0.0005, inclinationDeg: 51.6, raanDeg: 203.7, argPerigeeDeg: 35.4, meanAnomalyDeg: 324.8, bstar: 0.00025 }),
  },
  {
    id: 'sat_demo_halcyon',
    name: 'Halcyon Relay',
    description: 'High-latitude relay on a Molniya-like 12-hour eccentric orbit (invented demo satellite).',
    catalogNumber: 99_903,
    intlDesignator: '24903A',
    elements: () => ({ periodMin: 717.97, eccentricity: 0.72, inclinationDeg: 63.4, raanDeg: 120.0, argPerigeeDeg: 270.0, meanAnomalyDeg: 10.0, bstar: 0 }),
  },
  {
    id: 'sat_demo_tessera',
    name: 'Tessera GEO',
    description: 'Geostationary weather demonstrator parked near 10 degrees east (invented demo satellite).',
    catalogNumber: 99_904,
    intlDesignator: '24904A',
    // Sub-satellite longitude = RAAN + argument of perigee + mean anomaly - GMST (near-circular, equatorial).
    elements: (epochMs) => {
      const gmstDeg = (gmstRad(epochMs) * 180) / Math.PI;
      const m = (((10 + gmstDeg) % 360) + 360) % 360;
      return { meanMotionRevPerDay: 1.00273791, eccentricity: 0.0002, inclinationDeg: 0.05, raanDeg: 0, argPerigeeDeg: 0, meanAnomalyDeg: m, bstar: 0 };
    },
  },
];

export interface DemoCredentials {
  signInUrl: string;
  organizationId: string;
  users: Array<{ role: Role; email: string; password: string }>;
  browserKey: string;
  serverKey: string;
  satellites: Array<{ id: string; name: string }>;
  embedId: string;
}

function newPassword(): string {
  // 16 characters from an unambiguous alphabet, in groups for reading aloud.
  const alphabet = 'abcdefghjkmnpqrstuvwxyzABCDEFGHJKMNPQRSTUVWXYZ23456789';
  const bytes = crypto.randomBytes(16);
  const chars = [...bytes].map((b) => alphabet[b % alphabet.length]).join('');
  return `${chars.slice(0, 4)}-${chars.slice(4, 8)}-${chars.slice(8, 12)}-${chars.slice(12, 16)}`;
}

/** Synthesize an element set for a demo satellite with its epoch at `epochMs`. */
export function synthesizeElementSet(sat: DemoSatellite, epochMs: number): ElementSet {
  const r = fromKeplerian({
    epoch: new Date(epochMs).toISOString(),
    name: sat.name.toUpperCase(),
    catalogNumber: String(sat.catalogNumber),
    intlDesignator: sat.intlDesignator,
    classification: 'U',
    elementSetNo: 1 + (Math.floor(epochMs / 86_400_000) % 999),
    revAtEpoch: 1000 + (Math.floor(epochMs / 86_400_000) % 5000),
    ...sat.elements(epochMs),
  });
  if (!r.ok) throw new Error(`demo element set for ${sat.name} was refused: ${r.field}: ${r.message}`);
  return r.elementSet;
}

/** Origins of the demo pages: this machine on this run's port, and PUBLIC_URL when set. */
function demoOrigins(ctx: AppContext, port: number): string[] {
  const list = [`http://localhost:${port}`, `http://127.0.0.1:${port}`];
  if (ctx.config.PUBLIC_URL) list.push(new URL(ctx.config.publicUrl).origin);
  return [...new Set(list.map((o) => normalizeOrigin(o)).filter((o): o is string => o !== null))];
}

export async function seedDemo(
  ctx: AppContext,
  opts: { port: number; now?: Date },
): Promise<{ created: boolean; credentials: DemoCredentials; credentialsFile: string }> {
  const refused = devFakesRefused(ctx.config);
  if (refused) throw new Error(`The demo seed does not run here: ${refused}.`);
  const now = opts.now ?? new Date();
  const credentialsFile = path.join(ctx.config.dataDir, 'demo-credentials.json');
  const keys = getKeyService(ctx);
  const sats = getSatelliteService(ctx);
  const host = ctx.config.PUBLIC_URL ? ctx.config.publicUrl : `http://localhost:${opts.port}`;
  const signInUrl = `${host}/sign-in`;

  let org = await Organization.findByPk(DEMO_ORG_ID);
  const created = !org;
  let previous: DemoCredentials | null = null;
  if (!created && fs.existsSync(credentialsFile)) {
    try {
      previous = JSON.parse(fs.readFileSync(credentialsFile, 'utf8')) as DemoCredentials;
    } catch {
      previous = null;
    }
  }

  if (!org) org = await Organization.create({ id: DEMO_ORG_ID, name: DEMO_ORG_NAME, plan: 'mission' });

  // What this run made, written to the activity log at the end when the organization is new.
  const events: AuditInput[] = [];
  const event = (actor: User | null, e: Omit<AuditInput, 'organizationId' | 'actorUserId'>) => {
    if (created) events.push({ ...e, organizationId: DEMO_ORG_ID, actorUserId: actor?.id ?? null });
  };

  // -- people ----------------------------------------------------------------------------------
  const users: DemoCredentials['users'] = [];
  const byRole: Partial<Record<Role, User>> = {};
  let owner: User | null = null;
  for (const p of PEOPLE) {
    let user = await User.findOne({ where: { email: p.email } });
    const known = previous?.users.find((u) => u.email === p.email);
    let password = known?.password;
    if (!user || !password) {
      password = newPassword();
      const passwordHash = await hashPassword(ctx, password);
      if (user) await user.update({ passwordHash });
      else user = await User.create({ id: `usr_demo_${p.role}`, email: p.email, name: p.name, passwordHash, emailVerifiedAt: now });
    }
    const m = await Membership.findOne({ where: { userId: user.id, organizationId: org.id } });
    if (!m) await Membership.create({ id: `mem_demo_${p.role}`, userId: user.id, organizationId: org.id, role: p.role });
    if (p.role === 'owner') owner = user;
    byRole[p.role] = user;
    users.push({ role: p.role, email: p.email, password });
  }

  const editor = byRole.editor ?? owner;
  const admin = byRole.admin ?? owner;

  // -- satellites and fresh element sets -------------------------------------------------------
  for (const s of SATELLITES) {
    let sat = await Satellite.findByPk(s.id);
    if (!sat) {
      sat = await Satellite.create({ id: s.id, organizationId: org.id, name: s.name, catalogNumber: String(s.catalogNumber), description: s.description, currentElementSetId: null });
      event(editor, { action: 'satellite.create', targetType: 'satellite', targetId: sat.id, detail: { name: sat.name } });
    }
    const cached = await sats.current(sat.id);
    const epochMs = Math.floor(now.getTime() / 60_000) * 60_000 - 2 * 3_600_000;
    const cur = cached?.current;
    if (!cur || now.getTime() - cur.elementSet.epochMs > 86_400_000) {
      const { carryForward, toSatrec, toTle } = await import('@nadirline/shared');
      // Each new set continues the orbit of the one before it (its continuity check reads
      // "continues the orbit"); a new demo starts with a short history: 9, 6 and 3 days back.
      const sets: ElementSet[] = [];
      if (cur) sets.push(carryForward(cur.elementSet, cur.satrec, epochMs));
      else {
        sets.push(synthesizeElementSet(s, epochMs - 9 * 86_400_000));
        for (const daysBack of [6, 3, 0]) {
          const prev = sets[sets.length - 1] as ElementSet;
          sets.push(carryForward(prev, toSatrec(prev), epochMs - daysBack * 86_400_000));
        }
      }
      const report = await sats.addElementSets(sat, { text: sets.map((es) => toTle(es).text).join('\n'), format: 'tle' }, { userId: editor?.id ?? null });
      const bad = report.report.find((r) => !r.ok);
      if (bad) throw new Error(`demo element set for ${s.name} was refused: ${bad.code}: ${bad.message}`);
      event(editor, {
        action: 'element-set.upload',
        targetType: 'satellite',
        targetId: sat.id,
        detail: { satellite: sat.name, how: 'text', accepted: report.accepted, rejected: report.rejected, elementSetIds: report.created.map((c) => c.id) },
      });
    }
  }

  // -- keys ------------------------------------------------------------------------------------
  const origins = demoOrigins(ctx, opts.port);
  const findWorking = async (text: string | undefined, kind: 'browser' | 'server') => {
    if (!text) return null;
    try {
      const rec = await keys.authenticate(text, now);
      return rec.kind === kind && rec.organizationId === org.id ? rec : null;
    } catch {
      return null;
    }
  };
  const keyEvent = (k: ApiKey) =>
    event(admin, {
      action: 'key.create',
      targetType: 'key',
      targetId: k.id,
      detail: { name: k.name, kind: k.kind, lastFour: k.lastFour, origins: k.origins, scopes: k.scopes, rateLimitPerMin: k.rateLimitPerMin },
    });
  let browserKey = previous?.browserKey;
  const browserRec = await findWorking(browserKey, 'browser');
  if (!browserRec) {
    const made = await keys.createKey({
      organizationId: org.id,
      kind: 'browser',
      name: 'Demo pages on this machine',
      origins,
      rateLimitPerMin: 600,
      createdByUserId: admin?.id ?? null,
    });
    browserKey = made.secret;
    keyEvent(made.key);
  } else if (origins.some((o) => !browserRec.origins.includes(o))) {
    await keys.updateKey(browserRec.id, { origins: [...new Set([...browserRec.origins, ...origins])] });
  }
  let serverKey = previous?.serverKey;
  if (!(await findWorking(serverKey, 'server'))) {
    const made = await keys.createKey({
      organizationId: org.id,
      kind: 'server',
      name: 'Demo flight-dynamics pipeline',
      scopes: ['read', 'element-sets:write'],
      rateLimitPerMin: 1200,
      createdByUserId: admin?.id ?? null,
    });
    serverKey = made.secret;
    keyEvent(made.key);
  }

  // -- embed -----------------------------------------------------------------------------------
  const browserRecord = await keys.authenticate(browserKey as string, now);
  let embed = previous?.embedId ? await Embed.findByPk(previous.embedId) : await Embed.findOne({ where: { organizationId: org.id } });
  if (!embed) {
    embed = await getEmbedService(ctx).createEmbed(org.id, {
      name: 'Lobby screen: all our satellites',
      satelliteIds: SATELLITES.map((s) => s.id),
      options: { projection: 'equal-earth', orbitsBehind: 0.5, orbitsAhead: 1, layers: ['footprint', 'terminator', 'graticule', 'labels'], theme: 'auto' },
      apiKeyId: browserRecord.id,
    });
    event(editor, { action: 'embed.create', targetType: 'embed', targetId: embed.id, detail: { name: embed.name, satelliteIds: embed.satelliteIds, apiKeyId: embed.apiKeyId } });
  } else if (embed.apiKeyId !== browserRecord.id) {
    await getEmbedService(ctx).updateEmbed(org.id, embed.id, { apiKeyId: browserRecord.id });
  }

  // Old demo keys that no longer match the credentials file are revoked (they were never shown).
  for (const k of await ApiKey.findAll({ where: { organizationId: org.id, revokedAt: null, deletedAt: null } })) {
    const text = k.kind === 'browser' ? browserKey : serverKey;
    if (text && k.hash !== crypto.createHash('sha256').update(text).digest('hex') && !k.replacedById && k.name.startsWith('Demo ')) {
      await keys.revokeKey(k.id);
    }
  }

  // -- activity log (first run only) ------------------------------------------------------------
  for (const e of events) await recordAudit(ctx, e);

  // -- payments: Ostwick pays for Mission (one invoice); a second organization on Starter ------
  await seedDemoBilling(ctx, owner);

  const credentials: DemoCredentials = {
    signInUrl,
    organizationId: org.id,
    users,
    browserKey: browserKey as string,
    serverKey: serverKey as string,
    satellites: SATELLITES.map((s) => ({ id: s.id, name: s.name })),
    embedId: embed.id,
  };
  fs.mkdirSync(path.dirname(credentialsFile), { recursive: true });
  fs.writeFileSync(credentialsFile, `${JSON.stringify(credentials, null, 2)}\n`, { mode: 0o600 });
  return { created, credentials, credentialsFile };
}
