/**
 * Key rules on /v1: origins and CORS, scopes, rotation (the old key retires when quiet), revocation, expiry,
 * per-key rate limits and the monthly quota.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ApiKey, Embed, UsageDaily } from '@nadirline/server/models/index.ts';
import { getEmbedService } from '@nadirline/server/services/embeds.ts';
import { getKeyService } from '@nadirline/server/services/keys.ts';
import { getQuotaService, planOf } from '@nadirline/server/services/quota.ts';
import { getUsageRecorder } from '@nadirline/server/services/usage.ts';
import { leoTle, PAGE_ORIGIN, startKeyedApp, WILDCARD_ORIGIN, type KeyedTestApp } from '../support/app.ts';

let t: KeyedTestApp;
beforeAll(async () => {
  t = await startKeyedApp();
});
afterAll(async () => {
  await t?.close();
});

const sat = () => `/v1/satellites/${t.satellites.leo.id}`;
const getUsageFlush = () => getUsageRecorder(t.context).flush();

function expectProblem(res: request.Response, status: number, code: string): void {
  expect(res.status, JSON.stringify(res.body)).toBe(status);
  expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
  expect(res.body.code).toBe(code);
}

describe('browser keys and origins', () => {
  it('serves a browser key in ?key= from a listed origin and reflects that origin in CORS', async () => {
    const res = await request(t.app).get(`${sat()}/position`).query({ key: t.browserKey }).set('Origin', PAGE_ORIGIN).expect(200);
    expect(res.headers['access-control-allow-origin']).toBe(PAGE_ORIGIN);
    expect(res.headers.vary).toMatch(/Origin/);
    expect(res.headers['access-control-expose-headers']).toMatch(/RateLimit/);
  });

  it('serves any subdomain of a wildcard origin, but not the bare domain', async () => {
    await request(t.app).get(`${sat()}/position`).query({ key: t.browserKey }).set('Origin', 'https://maps.outreach.example.net').expect(200);
    expectProblem(await request(t.app).get(`${sat()}/position`).query({ key: t.browserKey }).set('Origin', 'https://example.net'), 403, 'origin-not-allowed');
  });

  it('refuses a browser key from an origin it does not list, readably for the page', async () => {
    const res = await request(t.app).get(`${sat()}/position`).query({ key: t.browserKey }).set('Origin', 'https://copycat.example.com');
    expectProblem(res, 403, 'origin-not-allowed');
    expect(res.body.detail).toContain('https://copycat.example.com');
    expect(res.headers['access-control-allow-origin']).toBe('https://copycat.example.com');
    expect(res.body).not.toHaveProperty('lat');
  });

  it('names only the refused origin, never the origins the key lists (members see those in the console)', async () => {
    const byKey = await request(t.app).get(`${sat()}/position`).query({ key: t.browserKey }).set('Origin', 'https://copycat.example.com');
    const byEmbed = await request(t.app).get(`/v1/embeds/${t.embedId}`).set('Origin', 'https://copycat.example.com');
    for (const res of [byKey, byEmbed]) {
      expectProblem(res, 403, 'origin-not-allowed');
      expect(res.body.detail).toContain('https://copycat.example.com');
      expect(res.body.detail).toMatch(/console/);
      expect(res.text).not.toContain(PAGE_ORIGIN);
      expect(res.text).not.toContain(WILDCARD_ORIGIN);
      expect(res.text).not.toContain('example.net');
    }
  });

  it('judges a request without Origin by its Referer, and refuses one naming no origin at all', async () => {
    await request(t.app).get(`${sat()}/position`).query({ key: t.browserKey }).set('Referer', `${PAGE_ORIGIN}/where-is-it.html`).expect(200);
    expectProblem(await request(t.app).get(`${sat()}/position`).query({ key: t.browserKey }).set('Referer', 'https://elsewhere.example.com/x'), 403, 'origin-not-allowed');
    const bare = await request(t.app).get(`${sat()}/position`).query({ key: t.browserKey });
    expectProblem(bare, 403, 'origin-not-allowed');
    expect(bare.body.detail).toMatch(/server key/);
  });

  it('serves a browser key on pages of this server itself (console preview, hosted embeds, examples)', async () => {
    await request(t.app).get(`${sat()}/position`).query({ key: t.browserKey }).set('Origin', 'http://nadirline.test').expect(200);
    await request(t.app).get(`${sat()}/position`).query({ key: t.browserKey }).set('Referer', 'http://nadirline.test/examples/').expect(200);
  });

  it('takes this server\u2019s own origin from its configuration, never from Host or Sec-Fetch-Site', async () => {
    // A rebound DNS name: the page and the Host header agree, but neither is this server.
    const rebound = await request(t.app).get(`${sat()}/position`).query({ key: t.browserKey }).set('Host', 'evil.example').set('Origin', 'http://evil.example');
    expectProblem(rebound, 403, 'origin-not-allowed');
    const byReferer = await request(t.app).get(`${sat()}/position`).query({ key: t.browserKey }).set('Host', 'evil.example').set('Referer', 'http://evil.example/page');
    expectProblem(byReferer, 403, 'origin-not-allowed');
    // Sec-Fetch-Site is only a claim; with no Origin and no Referer nothing names the page.
    expectProblem(await request(t.app).get(`${sat()}/position`).query({ key: t.browserKey }).set('Sec-Fetch-Site', 'same-origin'), 403, 'origin-not-allowed');
    expectProblem(await request(t.app).get(`${sat()}/position`).query({ embed: t.embedId }).set('Sec-Fetch-Site', 'same-origin'), 403, 'origin-not-allowed');
    expectProblem(await request(t.app).get(`${sat()}/position`).query({ embed: t.embedId }).set('Host', 'evil.example').set('Origin', 'http://evil.example'), 403, 'origin-not-allowed');
  });

  it('refuses writes with a browser key', async () => {
    const res = await request(t.app)
      .post(`${sat()}/element-sets`)
      .set('Authorization', `Bearer ${t.browserKey}`)
      .set('Origin', PAGE_ORIGIN)
      .set('Content-Type', 'text/plain')
      .send(leoTle());
    expectProblem(res, 403, 'browser-key-read-only');
  });

  it('answers a preflight for any origin, and checks a key carried in the URL', async () => {
    const ok = await request(t.app).options(`${sat()}/track`).set('Origin', 'https://anyone.example.com').set('Access-Control-Request-Method', 'GET').set('Access-Control-Request-Headers', 'authorization');
    expect(ok.status).toBe(204);
    expect(ok.headers['access-control-allow-origin']).toBe('https://anyone.example.com');
    expect(ok.headers['access-control-allow-headers']).toBe('authorization');
    expect(ok.headers['access-control-allow-methods']).toMatch(/GET/);
    const refused = await request(t.app).options(`${sat()}/track?key=${t.browserKey}`).set('Origin', 'https://anyone.example.com').set('Access-Control-Request-Method', 'GET');
    expectProblem(refused, 403, 'origin-not-allowed');
    await request(t.app).options(`${sat()}/track?key=${t.browserKey}`).set('Origin', PAGE_ORIGIN).set('Access-Control-Request-Method', 'GET').expect(204);
  });
});

describe('embeds as read credentials', () => {
  it('reads the embed\u2019s satellites with its browser key, from the key\u2019s origins and this server\u2019s own', async () => {
    await request(t.app).get(`${sat()}/position`).query({ embed: t.embedId }).set('Origin', PAGE_ORIGIN).expect(200);
    await request(t.app).get(`${sat()}/position`).query({ embed: t.embedId }).set('Origin', 'http://nadirline.test').expect(200);
    await request(t.app).get(`${sat()}/position`).query({ embed: t.embedId }).set('Referer', 'http://nadirline.test/embed/x').expect(200);
    expectProblem(await request(t.app).get(`${sat()}/position`).query({ embed: t.embedId }).set('Origin', 'https://copycat.example.com'), 403, 'origin-not-allowed');
  });

  it('limits an embed to its own satellites', async () => {
    const list = await request(t.app).get('/v1/satellites').query({ embed: t.embedId }).set('Origin', PAGE_ORIGIN).expect(200);
    expect(list.body.satellites.map((s: { id: string }) => s.id)).toEqual([t.satellites.leo.id]);
    expectProblem(await request(t.app).get(`/v1/satellites/${t.satellites.geo.id}/position`).query({ embed: t.embedId }).set('Origin', PAGE_ORIGIN), 404, 'not-found');
  });
});

describe('server keys and scopes', () => {
  it('refuses a server key sent from a web page and a server key in the URL', async () => {
    const page = await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${t.serverKey}`).set('Origin', PAGE_ORIGIN);
    expectProblem(page, 403, 'origin-not-allowed');
    expect(page.body.detail).toMatch(/server key/);
    expectProblem(await request(t.app).get(`${sat()}/position`).query({ key: t.serverKey }), 401, 'invalid-key');
  });

  it('needs the element-sets:write scope to write', async () => {
    const res = await request(t.app).post(`${sat()}/element-sets`).set('Authorization', `Bearer ${t.readKey}`).set('Content-Type', 'text/plain').send(leoTle());
    expectProblem(res, 403, 'scope-missing');
    await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${t.readKey}`).expect(200);
  });

  it('never lets a key read another organization\u2019s satellites', async () => {
    expectProblem(await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${t.otherKey}`), 404, 'not-found');
  });
});

describe('rotation, revocation and expiry', () => {
  it('keeps the old key answering while it is called, and the new one works at once', async () => {
    const made = await t.makeKey({ kind: 'server', name: 'Rotating' });
    const keys = getKeyService(t.context);
    const rotated = await keys.rotateKey(made.id, { name: 'Rotating, second', quietMinutes: 60 });
    expect(rotated.secret).not.toBe(made.secret);
    expect(rotated.key.name).toBe('Rotating, second');
    expect(keys.serializeKey(rotated.previous).state).toBe('retiring');
    await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${made.secret}`).expect(200);
    await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${rotated.secret}`).expect(200);

    // Quiet for more than the spell (moved into the past as time would move it): retired.
    const replacedAt = new Date(Date.now() - 3 * 3_600_000);
    await keys.flushLastUsed();
    await ApiKey.update({ replacedAt, lastUsedAt: new Date(Date.now() - 2 * 3_600_000) }, { where: { id: made.id } });
    keys.invalidate(rotated.previous);
    const res = await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${made.secret}`);
    expectProblem(res, 401, 'key-rotated');
    expect(res.body.detail).toContain(new Date(Date.now() - 3_600_000).toISOString().slice(0, 13));
    expect(res.body.detail).toMatch(/1 hour without use/);
    await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${rotated.secret}`).expect(200);
  });

  it('retires the old key at its retire-by date even while it is still called', async () => {
    const made = await t.makeKey({ kind: 'server', name: 'Busy' });
    const keys = getKeyService(t.context);
    await keys.rotateKey(made.id, { name: 'Busy, new', quietMinutes: 7 * 1440 });
    await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${made.secret}`).expect(200);
    const retireBy = new Date(Date.now() - 1_000);
    await ApiKey.update({ graceUntil: retireBy }, { where: { id: made.id } });
    keys.invalidate({ id: made.id, hash: (await ApiKey.findByPk(made.id))!.hash });
    const res = await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${made.secret}`);
    expectProblem(res, 401, 'key-rotated');
    expect(res.body.detail).toContain(retireBy.toISOString());
    expect(res.body.detail).toMatch(/retire-by date/);
  });

  it('retires the old key at once with a quiet spell of zero', async () => {
    const made = await t.makeKey({ kind: 'server', name: 'Leaked' });
    await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${made.secret}`).expect(200);
    const rotated = await getKeyService(t.context).rotateKey(made.id, { name: 'Leaked, replaced', quietMinutes: 0 });
    expectProblem(await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${made.secret}`), 401, 'key-rotated');
    await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${rotated.secret}`).expect(200);
  });

  it('refuses a new key named like the old one, and a retire-by date in the past or too far ahead', async () => {
    const keys = getKeyService(t.context);
    const made = await t.makeKey({ kind: 'server', name: 'Twin' });
    await expect(keys.rotateKey(made.id, { name: 'Twin' })).rejects.toMatchObject({ code: 'validation-failed' });
    await expect(keys.rotateKey(made.id, { name: 'Twin 2', retireBy: new Date(Date.now() - 60_000) })).rejects.toMatchObject({ code: 'validation-failed' });
    await expect(keys.rotateKey(made.id, { name: 'Twin 2', retireBy: new Date(Date.now() + 200 * 86_400_000) })).rejects.toMatchObject({ code: 'validation-failed' });
    await expect(keys.rotateKey(made.id, { name: 'Twin 2', quietMinutes: -5 })).rejects.toMatchObject({ code: 'validation-failed' });
    expect((await ApiKey.findByPk(made.id))?.replacedById).toBeNull();
  });

  it('moves embeds to the new key at once, and an embed still reads after the old key retired', async () => {
    const made = await t.makeKey({ kind: 'browser', name: 'Embed key', origins: [PAGE_ORIGIN] });
    const embed = await getEmbedService(t.context).createEmbed(t.orgId, { name: 'Follows', satelliteIds: [t.satellites.leo.id], apiKeyId: made.id });
    await request(t.app).get(`${sat()}/position`).query({ embed: embed.id }).set('Origin', PAGE_ORIGIN).expect(200);
    const rotated = await getKeyService(t.context).rotateKey(made.id, { name: 'Embed key, new', quietMinutes: 0 });
    expect((await Embed.findByPk(embed.id))?.apiKeyId).toBe(rotated.key.id);
    // The old key is retired; the embed (cached with the old key id a moment ago) reads with the new one.
    expectProblem(await request(t.app).get(`${sat()}/position`).query({ key: made.secret }).set('Origin', PAGE_ORIGIN), 401, 'key-rotated');
    await request(t.app).get(`${sat()}/position`).query({ embed: embed.id }).set('Origin', PAGE_ORIGIN).expect(200);
    await request(t.app).get(`/v1/embeds/${embed.id}`).set('Origin', PAGE_ORIGIN).expect(200);
  });

  it('resolves an embed still pointing at a replaced key to that key\u2019s current successor', async () => {
    const made = await t.makeKey({ kind: 'browser', name: 'Chain', origins: [PAGE_ORIGIN] });
    const keys = getKeyService(t.context);
    const second = await keys.rotateKey(made.id, { name: 'Chain 2', quietMinutes: 0 });
    const third = await keys.rotateKey(second.key.id, { name: 'Chain 3', quietMinutes: 0 });
    // An embed row left on the first key (as one written by another process before the rotation).
    const embed = await Embed.create({ id: 'chainembed01', organizationId: t.orgId, name: 'Left behind', satelliteIds: [t.satellites.leo.id], options: {}, apiKeyId: made.id });
    const res = await request(t.app).get(`${sat()}/position`).query({ embed: embed.id }).set('Origin', PAGE_ORIGIN).expect(200);
    expect(res.body).toHaveProperty('lat');
    await getUsageFlush();
    const rows = await UsageDaily.findAll({ where: { apiKeyId: third.key.id } });
    expect(rows.reduce((n, r) => n + r.count, 0)).toBe(1);
  });

  it('revokes at once, even with the key record cached', async () => {
    const made = await t.makeKey({ kind: 'browser', name: 'Old site', origins: [PAGE_ORIGIN] });
    await request(t.app).get(`${sat()}/position`).query({ key: made.secret }).set('Origin', PAGE_ORIGIN).expect(200);
    await getKeyService(t.context).revokeKey(made.id);
    expectProblem(await request(t.app).get(`${sat()}/position`).query({ key: made.secret }).set('Origin', PAGE_ORIGIN), 401, 'key-revoked');
  });

  it('answers key-expired after the expiry date', async () => {
    const soon = new Date(Date.now() + 200);
    const made = await t.makeKey({ kind: 'server', name: 'Short-lived', expiresAt: soon });
    await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${made.secret}`).expect(200);
    await new Promise((r) => setTimeout(r, 300));
    const res = await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${made.secret}`);
    expectProblem(res, 401, 'key-expired');
    expect(res.body.detail).toContain(soon.toISOString());
  });

  it('refuses to rotate a revoked key and validates key input', async () => {
    const keys = getKeyService(t.context);
    const made = await t.makeKey({ kind: 'server', name: 'Gone' });
    await keys.revokeKey(made.id);
    await expect(keys.rotateKey(made.id, { name: 'Gone 2' })).rejects.toMatchObject({ code: 'conflict' });
    await expect(keys.createKey({ organizationId: t.orgId, kind: 'browser', name: 'No origins' })).rejects.toMatchObject({ code: 'validation-failed' });
    await expect(keys.createKey({ organizationId: t.orgId, kind: 'browser', name: 'Writer', origins: [PAGE_ORIGIN], scopes: ['element-sets:write'] })).rejects.toMatchObject({ code: 'validation-failed' });
    await expect(keys.createKey({ organizationId: t.orgId, kind: 'browser', name: 'Bad origin', origins: ['example.org/path'] })).rejects.toMatchObject({ code: 'validation-failed' });
  });

  it('shows the text once: only the hash and last four characters are stored', async () => {
    const made = await t.makeKey({ kind: 'server', name: 'Stored' });
    const row = await ApiKey.findByPk(made.id);
    expect(made.secret).toMatch(/^nls_[A-Za-z0-9_-]{32}$/);
    expect(row?.hash).toMatch(/^[0-9a-f]{64}$/);
    expect(row?.hash).not.toContain(made.secret.slice(4));
    expect(row?.lastFour).toBe(made.secret.slice(-4));
    expect(JSON.stringify(row?.toJSON())).not.toContain(made.secret);
  });
});

describe('rate limits and quota', () => {
  it('answers 429 with Retry-After and the standard RateLimit headers past the key\u2019s limit', async () => {
    const made = await t.makeKey({ kind: 'server', name: 'Slow', rateLimitPerMin: 3 });
    for (let i = 0; i < 3; i++) {
      const ok = await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${made.secret}`).expect(200);
      expect(ok.headers['ratelimit-policy']).toMatch(/^3;w=60$/);
      expect(ok.headers.ratelimit).toMatch(/^limit=3, remaining=\d+, reset=\d+$/);
    }
    const res = await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${made.secret}`);
    expectProblem(res, 429, 'rate-limited');
    expect(Number(res.headers['retry-after'])).toBeGreaterThan(0);
    expect(res.headers['retry-after']).toBeDefined();
    expect(res.headers.ratelimit).toMatch(/remaining=0/);
    // Other keys are not affected.
    await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${t.serverKey}`).expect(200);
  });

  it('answers quota-exceeded once the organization has used its month', async () => {
    const quota = getQuotaService(t.context);
    const limit = planOf('mission').monthlyRequests;
    const used = await quota.usedThisMonth(t.orgId);
    const day = new Date().toISOString().slice(0, 10);
    await UsageDaily.create({ organizationId: t.orgId, apiKeyId: t.serverKeyId, endpoint: 'GET /v1/earlier', day, count: limit - used - 1 });
    quota.invalidatePlan(t.orgId);
    await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${t.serverKey}`).expect(200);
    const res = await request(t.app).get(`${sat()}/position`).set('Authorization', `Bearer ${t.serverKey}`);
    expectProblem(res, 429, 'quota-exceeded');
    expect(res.body.limit).toBe(limit);
    expect(Number(res.headers['retry-after'])).toBeGreaterThan(0);
    // Another organization is not affected.
    await request(t.app).get(`/v1/satellites/${t.satellites.other.id}/position`).set('Authorization', `Bearer ${t.otherKey}`).expect(200);
    const status = await quota.status(t.orgId);
    expect(status.usedThisMonth).toBeGreaterThanOrEqual(limit);
  });
});

describe('guessing keys', () => {
  it('slows down a client that keeps sending unknown keys, without touching working keys', async () => {
    // Its own app, last in this file (models bind to the newest app's database): the address
    // stays slowed for the rest of the minute.
    const own = await startKeyedApp();
    try {
      await request(own.app).get('/v1/satellites').set('Authorization', `Bearer ${own.serverKey}`).expect(200);
      let last: request.Response | undefined;
      for (let i = 0; i < 301; i++) {
        last = await request(own.app).get('/v1/satellites').set('Authorization', `Bearer nls_guess${String(i).padStart(28, '0')}`);
        if (last.status === 429) break;
      }
      expectProblem(last!, 429, 'rate-limited');
      expect(Number(last!.headers['retry-after'])).toBeGreaterThan(0);
      await request(own.app).get('/v1/satellites').set('Authorization', `Bearer ${own.serverKey}`).expect(200);
    } finally {
      await own.close();
    }
  });
});
