/**
 * The role matrix as ONE table: every /api route (the list the server mounts) × every role.
 * Each row says how to make a request that succeeds when the role may act; a role the matrix
 * forbids must get 403 `forbidden`. Org routes also answer 401 signed out and 404 to outsiders.
 * A route missing from this table fails the coverage test.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Response } from 'supertest';
import { PASSWORD, signUpAndVerify, startTestApp, uniqueEmail, type Browser, type Person, type TestApp } from './console-api.harness.ts';

type Role = 'owner' | 'admin' | 'editor' | 'viewer';
const ROLES: Role[] = ['viewer', 'editor', 'admin', 'owner'];
const EVERYONE: readonly Role[] = ['owner', 'admin', 'editor', 'viewer'];
const EDITORS: readonly Role[] = ['owner', 'admin', 'editor'];
const MANAGERS: readonly Role[] = ['owner', 'admin'];
const OWNER: readonly Role[] = ['owner'];

interface Fixture {
  t: TestApp;
  people: Record<Role, Person>;
  /** A signed-in user who belongs to no organization of the fixture. */
  outsider: Person;
  orgId: string;
  satelliteId: string;
  elementSetId: string;
  browserKeyId: string;
  serverKeyId: string;
  embedId: string;
}

interface Call {
  /** Whose browser sends it (default: the role under test). */
  browser?: Browser;
  method: 'get' | 'post' | 'patch' | 'delete';
  url: string;
  body?: object;
}

interface Row {
  /** "METHOD /path" exactly as the server declares it. */
  route: string;
  /** 'anyone' / 'signed-in' for account routes; else the roles the brief allows. */
  allowed: 'anyone' | 'signed-in' | readonly Role[];
  /** Status of the successful answer. */
  ok: number;
  /** Builds the request for this role (fresh targets for destructive calls). */
  call(f: Fixture, role: Role, b: Browser): Promise<Call>;
}

let f: Fixture;

const kepler = () => ({
  epoch: new Date(Date.now() - 3600_000).toISOString(),
  meanMotionRevPerDay: 15.21,
  eccentricity: 0.0011,
  inclinationDeg: 51.6,
  raanDeg: 120,
  argPerigeeDeg: 80,
  meanAnomalyDeg: 20,
  name: 'ROLE TEST SAT',
  catalogNumber: 90101,
});

async function ownerPost(url: string, body: object = {}, status = 201): Promise<Response> {
  return f.people.owner.browser.post(url, body).expect(status);
}

/** A new organization where the four people hold the four roles. */
async function freshOrg(): Promise<string> {
  const res = await ownerPost('/api/orgs', { name: `Throwaway ${uniqueEmail('org')}` });
  const id = res.body.organization.id as string;
  const Membership = f.t.context.sequelize.models['Membership']!;
  for (const role of ['admin', 'editor', 'viewer'] as const) {
    await Membership.create({ id: `m_${role}_${id}`, userId: f.people[role].userId, organizationId: id, role });
  }
  return id;
}

/** A new member (viewer) of the fixture organization, added directly. */
async function freshMember(): Promise<string> {
  const person = await signUpAndVerify(f.t);
  await f.t.context.sequelize.models['Membership']!.create({ id: `m_extra_${person.userId}`, userId: person.userId, organizationId: f.orgId, role: 'viewer' });
  return person.userId;
}

async function freshKey(kind: 'server' | 'browser' = 'server'): Promise<string> {
  const body = kind === 'server' ? { kind, name: 'Fresh server key' } : { kind, name: 'Fresh browser key', origins: ['https://www.example.org'] };
  return (await ownerPost(`/api/orgs/${f.orgId}/keys`, body)).body.key.id as string;
}

async function freshSatellite(): Promise<string> {
  return (await ownerPost(`/api/orgs/${f.orgId}/satellites`, { name: 'Fresh satellite' })).body.satellite.id as string;
}

/** A held element set (does not continue the orbit) in a fresh organization that asks for confirmation: its confirm URL. */
async function freshHeldSet(): Promise<string> {
  const orgId = await freshOrg();
  await f.people.owner.browser.patch(`/api/orgs/${orgId}/settings`, { confirmSuspiciousSets: true }).expect(200);
  const satId = (await ownerPost(`/api/orgs/${orgId}/satellites`, { name: 'Held satellite' })).body.satellite.id as string;
  const epoch = Date.now() - 7_200_000;
  await ownerPost(`/api/orgs/${orgId}/satellites/${satId}/element-sets`, { kepler: { ...kepler(), epoch: new Date(epoch).toISOString() } });
  const held = await ownerPost(`/api/orgs/${orgId}/satellites/${satId}/element-sets`, { kepler: { ...kepler(), epoch: new Date(epoch + 3_600_000).toISOString(), meanAnomalyDeg: 200 } });
  const entry = held.body.report[0];
  if (!entry.awaitingConfirmation) throw new Error(`expected a held set, got ${JSON.stringify(entry)}`);
  return `/api/orgs/${orgId}/element-sets/${entry.elementSetId as string}/confirm`;
}

async function freshEmbed(): Promise<string> {
  return (await ownerPost(`/api/orgs/${f.orgId}/embeds`, { name: 'Fresh embed', satelliteIds: [f.satelliteId], apiKeyId: f.browserKeyId, options: {} })).body.embed.id as string;
}

/**
 * A webhook endpoint in a fresh organization (an organization holds at most ten): its URL under
 * /api. A loopback receiver is accepted under NODE_ENV=test.
 */
async function freshEndpoint(): Promise<string> {
  const orgId = await freshOrg();
  const id = (await ownerPost(`/api/orgs/${orgId}/webhooks`, { url: 'http://127.0.0.1:9/nadirline-hooks', events: ['plan.changed'] })).body.endpoint.id as string;
  return `/api/orgs/${orgId}/webhooks/${id}`;
}

/** A finished (failed) delivery of a test event, to send again: its URL under /api. */
async function finishedDelivery(): Promise<string> {
  const endpoint = await freshEndpoint();
  const id = (await ownerPost(`${endpoint}/test`, {}, 201)).body.delivery.id as string;
  await f.t.context.sequelize.models['WebhookDelivery']!.update({ status: 'failed', attempts: 6, nextAttemptAt: null }, { where: { id } });
  return `${endpoint.replace(/\/webhooks\/[^/]+$/, '')}/webhook-deliveries/${id}`;
}

/** A fresh organization (four roles) with a paid Mission subscription at the fake provider. */
async function paidOrg(opts: { cancelAtPeriodEnd?: boolean } = {}): Promise<string> {
  const id = await freshOrg();
  const fake = f.t.context.services.payments?.fake;
  if (!fake) throw new Error('the fake payment provider did not start');
  const made = fake.createPaidSubscription({ priceId: 'price_nl_mission', email: f.people.owner.email, name: 'Matrix', metadata: { organizationId: id } });
  made.subscription['cancel_at_period_end'] = Boolean(opts.cancelAtPeriodEnd);
  await f.t.context.sequelize.models['Organization']!.update({ plan: 'mission' }, { where: { id } });
  await f.t.context.sequelize.models['Subscription']!.create({
    id: `s_${id}`,
    organizationId: id,
    plan: 'mission',
    status: 'active',
    providerCustomerId: made.customer.id,
    providerSubscriptionId: made.subscription.id,
    currentPeriodEnd: new Date(Date.now() + 30 * 86_400_000),
    cancelAtPeriodEnd: Boolean(opts.cancelAtPeriodEnd),
  });
  return id;
}

async function mailedToken(email: string): Promise<string> {
  return (await f.t.lastMailTo(email)).token;
}

const org = (p: string) => `/api/orgs/${f.orgId}${p}`;

export const TABLE: Row[] = [
  // ---- session and account
  { route: 'GET /session', allowed: 'anyone', ok: 200, call: async () => ({ method: 'get', url: '/api/session' }) },
  { route: 'POST /auth/signup', allowed: 'anyone', ok: 201, call: async () => ({ method: 'post', url: '/api/auth/signup', body: { email: uniqueEmail('matrix'), name: 'Matrix', password: PASSWORD } }) },
  {
    route: 'POST /auth/verify-email',
    allowed: 'anyone',
    ok: 200,
    call: async (fx) => {
      const email = uniqueEmail('verify');
      await fx.t.browser().post('/api/auth/signup', { email, name: 'Verify', password: PASSWORD }).expect(201);
      return { method: 'post', url: '/api/auth/verify-email', body: { token: await mailedToken(email) } };
    },
  },
  { route: 'POST /auth/resend-verification', allowed: 'anyone', ok: 202, call: async () => ({ method: 'post', url: '/api/auth/resend-verification', body: { email: uniqueEmail('resend') } }) },
  {
    route: 'POST /auth/signin',
    allowed: 'anyone',
    ok: 200,
    // A second browser of the same person, so the role's own session stays as it is.
    call: async (fx, role) => ({ browser: fx.t.browser(), method: 'post', url: '/api/auth/signin', body: { email: fx.people[role].email, password: PASSWORD } }),
  },
  {
    route: 'POST /auth/signout',
    allowed: 'anyone',
    ok: 204,
    call: async (fx, role) => {
      const other = fx.t.browser();
      await other.signIn(fx.people[role].email);
      return { browser: other, method: 'post', url: '/api/auth/signout' };
    },
  },
  { route: 'POST /auth/forgot-password', allowed: 'anyone', ok: 202, call: async () => ({ method: 'post', url: '/api/auth/forgot-password', body: { email: uniqueEmail('forgot') } }) },
  {
    route: 'POST /auth/reset-password',
    allowed: 'anyone',
    ok: 204,
    call: async (fx) => {
      const person = await signUpAndVerify(fx.t);
      await fx.t.browser().post('/api/auth/forgot-password', { email: person.email }).expect(202);
      return { method: 'post', url: '/api/auth/reset-password', body: { token: await mailedToken(person.email), password: 'another long password' } };
    },
  },
  { route: 'PATCH /me', allowed: 'signed-in', ok: 200, call: async (fx, role) => ({ method: 'patch', url: '/api/me', body: { name: fx.people[role].name } }) },
  { route: 'GET /me/notices', allowed: 'signed-in', ok: 200, call: async () => ({ method: 'get', url: '/api/me/notices' }) },
  { route: 'PATCH /me/notices', allowed: 'signed-in', ok: 200, call: async () => ({ method: 'patch', url: '/api/me/notices', body: { 'stale-digest': true } }) },
  {
    route: 'GET /invitations/:token',
    allowed: 'anyone',
    ok: 200,
    call: async () => {
      const email = uniqueEmail('peek');
      await ownerPost(org('/invitations'), { email, role: 'viewer' });
      return { method: 'get', url: `/api/invitations/${await mailedToken(email)}` };
    },
  },
  {
    route: 'POST /invitations/:token/accept',
    allowed: 'signed-in',
    ok: 200,
    call: async (fx, role) => {
      // The outsider's own organization invites this role's person.
      const outsiderOrg = fx.outsider.orgId!;
      await fx.t.context.sequelize.models['Membership']!.destroy({ where: { userId: fx.people[role].userId, organizationId: outsiderOrg } });
      await fx.outsider.browser.post(`/api/orgs/${outsiderOrg}/invitations`, { email: fx.people[role].email, role: 'viewer' }).expect(201);
      return { method: 'post', url: `/api/invitations/${await mailedToken(fx.people[role].email)}/accept` };
    },
  },
  { route: 'POST /orgs', allowed: 'signed-in', ok: 201, call: async () => ({ method: 'post', url: '/api/orgs', body: { name: 'Made in the matrix' } }) },

  // ---- organization
  { route: 'GET /orgs/:org', allowed: EVERYONE, ok: 200, call: async () => ({ method: 'get', url: org('') }) },
  { route: 'PATCH /orgs/:org', allowed: OWNER, ok: 200, call: async () => ({ method: 'patch', url: org(''), body: { name: 'Matrix Science Centre' } }) },
  { route: 'PATCH /orgs/:org/settings', allowed: OWNER, ok: 200, call: async () => ({ method: 'patch', url: org('/settings'), body: { confirmSuspiciousSets: false } }) },
  { route: 'DELETE /orgs/:org', allowed: OWNER, ok: 204, call: async () => ({ method: 'delete', url: `/api/orgs/${await freshOrg()}` }) },
  {
    route: 'POST /orgs/:org/transfer',
    allowed: OWNER,
    ok: 204,
    call: async (fx) => ({ method: 'post', url: `/api/orgs/${await freshOrg()}/transfer`, body: { userId: fx.people.admin.userId } }),
  },
  { route: 'GET /orgs/:org/members', allowed: EVERYONE, ok: 200, call: async () => ({ method: 'get', url: org('/members') }) },
  { route: 'POST /orgs/:org/invitations', allowed: MANAGERS, ok: 201, call: async () => ({ method: 'post', url: org('/invitations'), body: { email: uniqueEmail('inv'), role: 'editor' } }) },
  {
    route: 'DELETE /orgs/:org/invitations/:id',
    allowed: MANAGERS,
    ok: 204,
    call: async () => {
      const res = await ownerPost(org('/invitations'), { email: uniqueEmail('withdraw'), role: 'viewer' });
      return { method: 'delete', url: org(`/invitations/${res.body.invitation.id}`) };
    },
  },
  { route: 'PATCH /orgs/:org/members/:userId', allowed: MANAGERS, ok: 200, call: async () => ({ method: 'patch', url: org(`/members/${await freshMember()}`), body: { role: 'editor' } }) },
  { route: 'DELETE /orgs/:org/members/:userId', allowed: MANAGERS, ok: 204, call: async () => ({ method: 'delete', url: org(`/members/${await freshMember()}`) }) },

  // ---- keys
  { route: 'GET /orgs/:org/keys', allowed: EVERYONE, ok: 200, call: async () => ({ method: 'get', url: org('/keys') }) },
  { route: 'POST /orgs/:org/keys', allowed: MANAGERS, ok: 201, call: async () => ({ method: 'post', url: org('/keys'), body: { kind: 'server', name: 'Pipeline', scopes: ['read', 'element-sets:write'] } }) },
  { route: 'PATCH /orgs/:org/keys/:id', allowed: MANAGERS, ok: 200, call: async (fx) => ({ method: 'patch', url: org(`/keys/${fx.serverKeyId}`), body: { name: 'Renamed pipeline' } }) },
  { route: 'POST /orgs/:org/keys/:id/rotate', allowed: MANAGERS, ok: 201, call: async () => ({ method: 'post', url: org(`/keys/${await freshKey()}/rotate`), body: { name: 'Rotated by role test', quietMinutes: 60 } }) },
  { route: 'POST /orgs/:org/keys/:id/revoke', allowed: MANAGERS, ok: 200, call: async () => ({ method: 'post', url: org(`/keys/${await freshKey()}/revoke`) }) },
  { route: 'DELETE /orgs/:org/keys/:id', allowed: MANAGERS, ok: 204, call: async () => ({ method: 'delete', url: org(`/keys/${await freshKey()}`) }) },

  // ---- satellites and element sets
  { route: 'GET /orgs/:org/satellites', allowed: EVERYONE, ok: 200, call: async () => ({ method: 'get', url: org('/satellites') }) },
  { route: 'POST /orgs/:org/satellites', allowed: EDITORS, ok: 201, call: async () => ({ method: 'post', url: org('/satellites'), body: { name: 'Matrix sat', description: 'made by the role test' } }) },
  { route: 'GET /orgs/:org/satellites/:id', allowed: EVERYONE, ok: 200, call: async (fx) => ({ method: 'get', url: org(`/satellites/${fx.satelliteId}`) }) },
  { route: 'PATCH /orgs/:org/satellites/:id', allowed: EDITORS, ok: 200, call: async (fx) => ({ method: 'patch', url: org(`/satellites/${fx.satelliteId}`), body: { description: 'edited' } }) },
  { route: 'DELETE /orgs/:org/satellites/:id', allowed: EDITORS, ok: 204, call: async () => ({ method: 'delete', url: org(`/satellites/${await freshSatellite()}`) }) },
  { route: 'GET /orgs/:org/satellites/:id/element-sets', allowed: EVERYONE, ok: 200, call: async (fx) => ({ method: 'get', url: org(`/satellites/${fx.satelliteId}/element-sets`) }) },
  {
    route: 'POST /orgs/:org/satellites/:id/element-sets',
    allowed: EDITORS,
    ok: 201,
    call: async (fx) => ({ method: 'post', url: org(`/satellites/${fx.satelliteId}/element-sets`), body: { kepler: { ...kepler(), epoch: new Date(Date.now() - Math.random() * 86_400_000).toISOString() } } }),
  },
  { route: 'POST /orgs/:org/element-sets/:esId/confirm', allowed: EDITORS, ok: 200, call: async () => ({ method: 'post', url: await freshHeldSet() }) },
  { route: 'GET /orgs/:org/element-sets/:esId/export', allowed: EVERYONE, ok: 200, call: async (fx) => ({ method: 'get', url: org(`/element-sets/${fx.elementSetId}/export?format=omm-kvn`) }) },

  // ---- embeds
  { route: 'GET /orgs/:org/embeds', allowed: EVERYONE, ok: 200, call: async () => ({ method: 'get', url: org('/embeds') }) },
  {
    route: 'POST /orgs/:org/embeds',
    allowed: EDITORS,
    ok: 201,
    call: async (fx) => ({ method: 'post', url: org('/embeds'), body: { name: 'Lobby screen', satelliteIds: [fx.satelliteId], apiKeyId: fx.browserKeyId, options: { theme: 'dark' } } }),
  },
  { route: 'PATCH /orgs/:org/embeds/:id', allowed: EDITORS, ok: 200, call: async (fx) => ({ method: 'patch', url: org(`/embeds/${fx.embedId}`), body: { name: 'Lobby screen, renamed' } }) },
  { route: 'DELETE /orgs/:org/embeds/:id', allowed: EDITORS, ok: 204, call: async () => ({ method: 'delete', url: org(`/embeds/${await freshEmbed()}`) }) },

  // ---- usage, activity, plan
  { route: 'GET /orgs/:org/usage', allowed: EVERYONE, ok: 200, call: async () => ({ method: 'get', url: org('/usage') }) },
  { route: 'GET /orgs/:org/usage.csv', allowed: EVERYONE, ok: 200, call: async () => ({ method: 'get', url: org('/usage.csv') }) },
  { route: 'GET /orgs/:org/activity', allowed: EVERYONE, ok: 200, call: async () => ({ method: 'get', url: org('/activity') }) },
  { route: 'POST /orgs/:org/preview-token', allowed: EVERYONE, ok: 200, call: async () => ({ method: 'post', url: org('/preview-token') }) },
  { route: 'GET /orgs/:org/notices', allowed: EVERYONE, ok: 200, call: async () => ({ method: 'get', url: org('/notices') }) },
  // ---- webhooks out
  { route: 'GET /orgs/:org/webhooks', allowed: MANAGERS, ok: 200, call: async () => ({ method: 'get', url: org('/webhooks') }) },
  { route: 'POST /orgs/:org/webhooks', allowed: MANAGERS, ok: 201, call: async () => ({ method: 'post', url: `/api/orgs/${await freshOrg()}/webhooks`, body: { url: 'https://hooks.example.org/nadirline', events: ['element-set.accepted'] } }) },
  { route: 'PATCH /orgs/:org/webhooks/:id', allowed: MANAGERS, ok: 200, call: async () => ({ method: 'patch', url: await freshEndpoint(), body: { paused: true } }) },
  { route: 'DELETE /orgs/:org/webhooks/:id', allowed: MANAGERS, ok: 204, call: async () => ({ method: 'delete', url: await freshEndpoint() }) },
  { route: 'POST /orgs/:org/webhooks/:id/rotate-secret', allowed: MANAGERS, ok: 200, call: async () => ({ method: 'post', url: `${await freshEndpoint()}/rotate-secret` }) },
  { route: 'POST /orgs/:org/webhooks/:id/test', allowed: MANAGERS, ok: 201, call: async () => ({ method: 'post', url: `${await freshEndpoint()}/test` }) },
  { route: 'GET /orgs/:org/webhook-deliveries', allowed: MANAGERS, ok: 200, call: async () => ({ method: 'get', url: org('/webhook-deliveries') }) },
  { route: 'GET /orgs/:org/webhook-deliveries/:id', allowed: MANAGERS, ok: 200, call: async () => ({ method: 'get', url: await finishedDelivery() }) },
  { route: 'POST /orgs/:org/webhook-deliveries/:id/redeliver', allowed: MANAGERS, ok: 201, call: async () => ({ method: 'post', url: `${await finishedDelivery()}/redeliver` }) },
  { route: 'GET /orgs/:org/billing', allowed: OWNER, ok: 200, call: async () => ({ method: 'get', url: org('/billing') }) },
  { route: 'POST /orgs/:org/billing/checkout', allowed: OWNER, ok: 200, call: async () => ({ method: 'post', url: `/api/orgs/${await freshOrg()}/billing/checkout`, body: { plan: 'mission' } }) },
  { route: 'POST /orgs/:org/billing/portal', allowed: OWNER, ok: 200, call: async () => ({ method: 'post', url: `/api/orgs/${await paidOrg()}/billing/portal` }) },
  { route: 'POST /orgs/:org/billing/cancel', allowed: OWNER, ok: 200, call: async () => ({ method: 'post', url: `/api/orgs/${await paidOrg()}/billing/cancel` }) },
  { route: 'POST /orgs/:org/billing/resume', allowed: OWNER, ok: 200, call: async () => ({ method: 'post', url: `/api/orgs/${await paidOrg({ cancelAtPeriodEnd: true })}/billing/resume` }) },
];

async function send(c: Call, b: Browser): Promise<Response> {
  const browser = c.browser ?? b;
  if (c.method === 'get') return browser.get(c.url);
  return browser.send(c.method, c.url, c.body ?? {});
}

beforeAll(async () => {
  const t = await startTestApp();
  const owner = await signUpAndVerify(t, { name: 'Matrix Owner', organizationName: 'Matrix Science Centre' });
  const orgId = owner.orgId!;
  const people = { owner } as Record<Role, Person>;
  for (const role of ['admin', 'editor', 'viewer'] as const) {
    const email = uniqueEmail(role);
    await owner.browser.post(`/api/orgs/${orgId}/invitations`, { email, role }).expect(201);
    const b = t.browser();
    const signup = await b.post('/api/auth/signup', { email, name: `Matrix ${role}`, password: PASSWORD, invitationToken: (await t.lastMailTo(email)).token }).expect(201);
    // The sign-up from an invitation signs the new member in, with a fresh CSRF token.
    expect(signup.body.signedIn).toBe(true);
    b.csrf = signup.body.csrfToken as string;
    people[role] = { email, name: `Matrix ${role}`, userId: signup.body.user.id, browser: b, orgId };
  }
  const outsider = await signUpAndVerify(t, { name: 'Matrix Outsider', organizationName: 'Outside Org' });
  f = { t, people, outsider, orgId, satelliteId: '', elementSetId: '', browserKeyId: '', serverKeyId: '', embedId: '' };
  const sat = await ownerPost(`/api/orgs/${orgId}/satellites`, { name: 'Matrix sat' });
  f.satelliteId = sat.body.satellite.id;
  const upload = await ownerPost(`/api/orgs/${orgId}/satellites/${f.satelliteId}/element-sets`, { kepler: kepler() });
  f.elementSetId = upload.body.report[0].elementSetId;
  f.browserKeyId = await freshKey('browser');
  f.serverKeyId = await freshKey('server');
  f.embedId = await freshEmbed();
});

afterAll(async () => {
  await f?.t.close();
});

describe('the role matrix covers every /api route', () => {
  it('has exactly one row per route the server mounts', () => {
    const mounted = (f.t.context.services.apiRoutes ?? []).map((r) => `${r.method.toUpperCase()} ${r.path}`).sort();
    const rows = TABLE.map((r) => r.route).sort();
    expect(rows).toEqual(mounted);
  });

  it('agrees with the server role table for every route', () => {
    const declared = new Map((f.t.context.services.apiRoutes ?? []).map((r) => [`${r.method.toUpperCase()} ${r.path}`, r.access]));
    for (const row of TABLE) expect([row.route, declared.get(row.route)]).toEqual([row.route, row.allowed]);
  });
});

const cases = TABLE.flatMap((row) => ROLES.map((role) => ({ row, role, may: typeof row.allowed === 'string' || row.allowed.includes(role) })));

describe('every route and every role', () => {
  it.each(cases.map((c) => [`${c.may ? 'lets' : 'refuses'} ${c.role === 'admin' || c.role === 'editor' || c.role === 'owner' ? 'an' : 'a'} ${c.role} ${c.row.route}`, c] as const))('%s', async (_name, c) => {
    const b = f.people[c.role].browser;
    const res = await send(await c.row.call(f, c.role, b), b);
    if (c.may) {
      expect(res.status, JSON.stringify(res.body)).toBe(c.row.ok);
    } else {
      expect(res.status, JSON.stringify(res.body)).toBe(403);
      expect(res.body.code).toBe('forbidden');
    }
  });
});

describe('organization routes for people outside the organization', () => {
  const orgRows = TABLE.filter((row) => typeof row.allowed !== 'string');
  it.each(orgRows.map((row) => [row.route, row] as const))('answers 401 to a signed-out client and 404 to a non-member: %s', async (_name, row) => {
    const c = await row.call(f, 'owner', f.people.owner.browser);
    const signedOut = await send({ ...c, browser: undefined }, f.t.browser());
    expect(signedOut.status).toBe(401);
    expect(signedOut.body.code).toBe('unauthenticated');
    const outsider = await send({ ...c, browser: undefined }, f.outsider.browser);
    expect(outsider.status).toBe(404);
    expect(outsider.body.code).toBe('not-found');
  });

  it('asks signed-out clients to sign in on signed-in-only account routes', async () => {
    for (const row of TABLE.filter((r) => r.allowed === 'signed-in')) {
      const c = await row.call(f, 'viewer', f.people.viewer.browser);
      const res = await send({ ...c, browser: undefined }, f.t.browser());
      expect([row.route, res.status]).toEqual([row.route, 401]);
    }
  });
});
