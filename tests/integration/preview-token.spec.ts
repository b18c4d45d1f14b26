/**
 * Console preview tokens: POST /api/orgs/:org/preview-token hands any member a short-lived,
 * read-only /v1 credential for the console's live previews; /v1 accepts it only from this
 * server's own pages, only for the organization's satellites, outside the quota.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { issuePreviewToken, PREVIEW_RATE_LIMIT_PER_MIN, PREVIEW_TOKEN_TTL_MS } from '@nadirline/server/services/preview-token.ts';
import { signUpAndVerify, type Person, type TestApp, startTestApp } from './console-api.harness.ts';

/** PUBLIC_URL of the harness app: the console's own origin. */
const SELF = 'http://console.test';
const FOREIGN = 'https://pages.example.org';

let t: TestApp;
let owner: Person;
let viewer: Person;
let outsider: Person;
let orgId: string;
let satId: string;
let otherSatId: string;
let browserKey: string;

const kepler = (name: string, catalogNumber: number) => ({
  epoch: new Date(Date.now() - 3_600_000).toISOString(),
  meanMotionRevPerDay: 15.21,
  eccentricity: 0.0011,
  inclinationDeg: 51.6,
  raanDeg: 120,
  argPerigeeDeg: 80,
  meanAnomalyDeg: 20,
  name,
  catalogNumber,
});

async function satelliteWithElements(p: Person, org: string, name: string, catalogNumber: number): Promise<string> {
  const sat = await p.browser.post(`/api/orgs/${org}/satellites`, { name }).expect(201);
  const id = sat.body.satellite.id as string;
  await p.browser.post(`/api/orgs/${org}/satellites/${id}/element-sets`, { kepler: kepler(name.toUpperCase(), catalogNumber) }).expect(201);
  return id;
}

async function tokenFor(p: Person, org = orgId): Promise<string> {
  return (await p.browser.post(`/api/orgs/${org}/preview-token`).expect(200)).body.token as string;
}

/** A GET as the console page sends it (this server's origin). */
const v1 = (url: string, token: string, origin: string | null = SELF) => {
  const req = request(t.app).get(url).set('Authorization', `Bearer ${token}`);
  return origin ? req.set('Origin', origin) : req;
};

async function usedThisMonth(): Promise<number> {
  return (await owner.browser.get(`/api/orgs/${orgId}/usage`).expect(200)).body.quota.usedThisMonth as number;
}

beforeAll(async () => {
  t = await startTestApp();
  owner = await signUpAndVerify(t, { name: 'Preview Owner', organizationName: 'Preview Science Centre' });
  orgId = owner.orgId!;
  viewer = await signUpAndVerify(t, { name: 'Preview Viewer' });
  await t.context.sequelize.models['Membership']!.create({ id: `m_viewer_${viewer.userId}`, userId: viewer.userId, organizationId: orgId, role: 'viewer' });
  outsider = await signUpAndVerify(t, { name: 'Other Owner', organizationName: 'Other Centre' });
  satId = await satelliteWithElements(owner, orgId, 'Preview LEO', 90301);
  otherSatId = await satelliteWithElements(outsider, outsider.orgId!, 'Their LEO', 90302);
  browserKey = (await owner.browser.post(`/api/orgs/${orgId}/keys`, { kind: 'browser', name: 'Site', origins: [FOREIGN] }).expect(201)).body.secret as string;
});
afterAll(async () => {
  await t?.close();
});

describe('POST /api/orgs/:org/preview-token', () => {
  it('gives a viewer an nlp_ token that expires in fifteen minutes, without creating a key', async () => {
    const before = (await owner.browser.get(`/api/orgs/${orgId}/keys`).expect(200)).body.keys.length as number;
    const res = await viewer.browser.post(`/api/orgs/${orgId}/preview-token`).expect(200);
    expect(res.body.token).toMatch(/^nlp_[A-Za-z0-9_-]+\.[A-Za-z0-9_-]+$/);
    // `exp` is whole seconds, rounded down: the token lives 15 minutes less under a second.
    expect(res.body.expiresIn).toBeGreaterThanOrEqual(PREVIEW_TOKEN_TTL_MS / 1000 - 1);
    expect(res.body.expiresIn).toBeLessThanOrEqual(PREVIEW_TOKEN_TTL_MS / 1000);
    const left = Date.parse(res.body.expiresAt) - Date.now();
    expect(left).toBeGreaterThan(PREVIEW_TOKEN_TTL_MS - 5_000);
    expect(left).toBeLessThanOrEqual(PREVIEW_TOKEN_TTL_MS);
    expect(res.headers['cache-control']).toBe('no-store');
    expect((await owner.browser.get(`/api/orgs/${orgId}/keys`).expect(200)).body.keys.length).toBe(before);
  });

  it('needs the CSRF header like every other write', async () => {
    const res = await viewer.browser.agent.post(`/api/orgs/${orgId}/preview-token`).send({});
    expect(res.status).toBe(403);
    expect(res.body.code).toBe('csrf-failed');
  });

  it('answers 404 for an organization the caller does not belong to', async () => {
    const res = await outsider.browser.post(`/api/orgs/${orgId}/preview-token`);
    expect(res.status).toBe(404);
    expect(res.body.code).toBe('not-found');
  });
});

describe('a preview token on /v1', () => {
  it('reads every GET route for the organization’s satellites from the console’s origin', async () => {
    const token = await tokenFor(viewer);
    const list = await v1('/v1/satellites', token).expect(200);
    expect(list.body.satellites.map((s: { id: string }) => s.id)).toEqual([satId]);
    expect(list.headers['access-control-allow-origin']).toBe(SELF);
    await v1(`/v1/satellites/${satId}`, token).expect(200);
    const elements = await v1(`/v1/satellites/${satId}/elements`, token).expect(200);
    expect(elements.body.inclinationDeg).toBeCloseTo(51.6, 3);
    const track = await v1(`/v1/satellites/${satId}/track?step=60`, token).expect(200);
    expect(track.body.points.length).toBeGreaterThan(80);
    await v1(`/v1/satellites/${satId}/position`, token).expect(200);
    await v1(`/v1/positions?ids=${satId}`, token).expect(200);
    const passes = await v1(`/v1/satellites/${satId}/passes?lat=52&lon=5&days=1`, token).expect(200);
    expect(Array.isArray(passes.body.passes)).toBe(true);
  });

  it('works as ?key= on a same-origin GET that names its page by Referer only', async () => {
    const token = await tokenFor(viewer);
    await request(t.app).get(`/v1/satellites/${satId}/elements?key=${token}`).set('Referer', `${SELF}/o/${orgId}/satellites/${satId}`).expect(200);
  });

  it('refuses a request that names no page (Sec-Fetch-Site alone proves nothing) and one whose Host header claims to be the page\u2019s', async () => {
    const token = await tokenFor(viewer);
    const bare = await request(t.app).get(`/v1/satellites/${satId}/elements?key=${token}`).set('Sec-Fetch-Site', 'same-origin');
    expect(bare.status).toBe(403);
    expect(bare.body.code).toBe('origin-not-allowed');
    const rebound = await request(t.app).get(`/v1/satellites/${satId}/elements`).set('Authorization', `Bearer ${token}`).set('Host', 'evil.example').set('Origin', 'http://evil.example');
    expect(rebound.status).toBe(403);
    expect(rebound.body.code).toBe('origin-not-allowed');
  });

  it('hides another organization’s satellite behind 404', async () => {
    const token = await tokenFor(viewer);
    const res = await v1(`/v1/satellites/${otherSatId}/track`, token);
    expect(res.status).toBe(404);
    expect(res.body.code).toBe('not-found');
  });

  it('refuses writes with browser-key-read-only', async () => {
    const token = await tokenFor(owner);
    const create = await request(t.app).post('/v1/satellites').set('Authorization', `Bearer ${token}`).set('Origin', SELF).send({ name: 'Sneaky' });
    expect(create.status).toBe(403);
    expect(create.body.code).toBe('browser-key-read-only');
    expect(create.body.detail).toMatch(/preview tokens only read/);
    const upload = await request(t.app).post(`/v1/satellites/${satId}/element-sets`).set('Authorization', `Bearer ${token}`).set('Origin', SELF).set('Content-Type', 'text/plain').send('x');
    expect(upload.status).toBe(403);
    expect(upload.body.code).toBe('browser-key-read-only');
    const list = await v1('/v1/satellites', token).expect(200);
    expect(list.body.satellites).toHaveLength(1);
  });

  it('refuses a page of another origin, and a request that names no origin', async () => {
    const token = await tokenFor(viewer);
    const foreign = await v1(`/v1/satellites/${satId}/track`, token, FOREIGN);
    expect(foreign.status).toBe(403);
    expect(foreign.body.code).toBe('origin-not-allowed');
    expect(foreign.body.detail).toContain(FOREIGN);
    const viaReferer = await request(t.app).get(`/v1/satellites?key=${token}`).set('Referer', `${FOREIGN}/page`);
    expect(viaReferer.body.code).toBe('origin-not-allowed');
    const none = await v1('/v1/satellites', token, null);
    expect(none.status).toBe(403);
    expect(none.body.code).toBe('origin-not-allowed');
    expect(none.body.detail).toMatch(/named no origin/);
  });

  it('answers 401 key-expired with the time once the token has expired', async () => {
    const issuedAt = Date.now() - PREVIEW_TOKEN_TTL_MS - 1_000;
    const { token, expiresAt } = issuePreviewToken(t.context.config.sessionSecret, orgId, issuedAt);
    const res = await v1('/v1/satellites', token);
    expect(res.status).toBe(401);
    expect(res.body.code).toBe('key-expired');
    expect(res.body.detail).toContain(expiresAt.toISOString());
    expect(res.body.detail).toMatch(/console preview token expired/);
  });

  it('answers 401 invalid-key to a tampered signature and to a token of another server', async () => {
    const token = await tokenFor(viewer);
    const tampered = token.slice(0, -2) + (token.endsWith('AA') ? 'BB' : 'AA');
    const res = await v1('/v1/satellites', tampered);
    expect(res.status).toBe(401);
    expect(res.body.code).toBe('invalid-key');
    const foreignServer = issuePreviewToken('another server secret, long enough', orgId).token;
    expect((await v1('/v1/satellites', foreignServer)).body.code).toBe('invalid-key');
  });

  it('counts nothing against the plan’s quota, while a browser key’s read does', async () => {
    const token = await tokenFor(viewer);
    const before = await usedThisMonth();
    for (let i = 0; i < 5; i++) await v1(`/v1/satellites/${satId}/position`, token).expect(200);
    expect(await usedThisMonth()).toBe(before);
    await request(t.app).get(`/v1/satellites/${satId}/position?key=${browserKey}`).set('Origin', FOREIGN).expect(200);
    expect(await usedThisMonth()).toBe(before + 1);
  });

  it('shares one rate limit per organization across its tokens', async () => {
    const a = await tokenFor(viewer);
    const b = await tokenFor(owner);
    const first = await v1('/v1/satellites', a).expect(200);
    expect(first.headers['ratelimit-policy']).toBe(`${PREVIEW_RATE_LIMIT_PER_MIN};w=60`);
    const remaining = (res: request.Response) => Number(/remaining=(\d+)/.exec(String(res.headers['ratelimit']))?.[1]);
    // Another token of the same organization takes the next request of the same budget. (A pair
    // that straddles the limiter's minute boundary is measured again.)
    let pair: [number, number] = [NaN, NaN];
    for (let attempt = 0; attempt < 3; attempt++) {
      const one = remaining(attempt === 0 ? first : await v1('/v1/satellites', a).expect(200));
      pair = [one, remaining(await v1('/v1/satellites', b).expect(200))];
      if (pair[1] === pair[0] - 1) break;
    }
    expect(pair[1]).toBe(pair[0] - 1);
  });
});
