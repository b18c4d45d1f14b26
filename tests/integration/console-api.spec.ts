/** The console API's keys, satellites, element sets, embeds, usage, activity and plan routes. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signUpAndVerify, startTestApp, type Person, type TestApp } from './console-api.harness.ts';

let t: TestApp;
let owner: Person;
let orgId: string;
const api = (p: string) => `/api/orgs/${orgId}${p}`;

const DAY_MS = 86_400_000;
function kepler(epochMs: number, extra: Record<string, unknown> = {}) {
  return {
    epoch: new Date(epochMs).toISOString(),
    meanMotionRevPerDay: 15.05,
    eccentricity: 0.0009,
    inclinationDeg: 97.4,
    raanDeg: 210,
    argPerigeeDeg: 45,
    meanAnomalyDeg: 300,
    name: 'ALDER-1',
    catalogNumber: 90201,
    ...extra,
  };
}

beforeAll(async () => {
  t = await startTestApp();
  owner = await signUpAndVerify(t, { name: 'Kit Keeper', organizationName: 'Alder Valley Space Lab' });
  orgId = owner.orgId!;
});
afterAll(async () => {
  await t.close();
});

describe('keys', () => {
  it('shows a new key text once, keeps only its last four, and never lists the text', async () => {
    const created = await owner.browser.post(api('/keys'), { kind: 'server', name: 'Flight dynamics', scopes: ['read', 'element-sets:write'] });
    expect(created.status).toBe(201);
    const secret = created.body.secret as string;
    expect(secret).toMatch(/^nls_/);
    expect(created.body.key).toMatchObject({ kind: 'server', name: 'Flight dynamics', lastFour: secret.slice(-4), scopes: ['read', 'element-sets:write'], state: 'active' });
    const list = await owner.browser.get(api('/keys')).expect(200);
    expect(JSON.stringify(list.body)).not.toContain(secret);
    expect(list.body.keys.map((k: { id: string }) => k.id)).toContain(created.body.key.id);
  });

  it('refuses a browser key without origins or with the write scope', async () => {
    const noOrigin = await owner.browser.post(api('/keys'), { kind: 'browser', name: 'Site' });
    expect(noOrigin.status).toBe(400);
    expect(noOrigin.body.code).toBe('validation-failed');
    const writes = await owner.browser.post(api('/keys'), { kind: 'browser', name: 'Site', origins: ['https://alder.example'], scopes: ['element-sets:write'] });
    expect(writes.status).toBe(400);
  });

  it('rotates (the old key retires when quiet), then revokes, and records each step without the key text', async () => {
    const created = await owner.browser.post(api('/keys'), { kind: 'browser', name: 'Public site', origins: ['https://alder.example', 'https://*.alder.example'] }).expect(201);
    const id = created.body.key.id as string;
    const retireBy = new Date(Date.now() + 5 * 86_400_000).toISOString();
    const rotated = await owner.browser.post(api(`/keys/${id}/rotate`), { name: 'Public site 2027', quietMinutes: 120, retireBy });
    expect(rotated.status).toBe(201);
    expect(rotated.body.secret).toMatch(/^nlb_/);
    expect(rotated.body.key).toMatchObject({ name: 'Public site 2027', replacesId: id, state: 'active' });
    expect(rotated.body.previous).toMatchObject({ id, name: 'Public site', state: 'retiring', replacedById: rotated.body.key.id, retireQuietMinutes: 120, retireBy });
    const hours = (Date.parse(rotated.body.previous.retiresAt) - Date.now()) / 3_600_000;
    expect(hours).toBeGreaterThan(1.9);
    expect(hours).toBeLessThanOrEqual(2);
    const sameName = await owner.browser.post(api(`/keys/${rotated.body.key.id}/rotate`), { name: 'Public site 2027' });
    expect(sameName.status).toBe(400);
    expect(sameName.body.errors[0].field).toBe('name');
    expect(rotated.body.key.origins).toEqual(['https://alder.example', 'https://*.alder.example']);

    const revoked = await owner.browser.post(api(`/keys/${rotated.body.key.id}/revoke`));
    expect(revoked.status).toBe(200);
    expect(revoked.body.key.state).toBe('revoked');

    const patched = await owner.browser.patch(api(`/keys/${id}`), { name: 'Old public site' });
    expect(patched.body.key.name).toBe('Old public site');

    const activity = await owner.browser.get(api('/activity?limit=200')).expect(200);
    const actions = (activity.body.events as Array<{ action: string }>).map((e) => e.action);
    expect(actions).toEqual(expect.arrayContaining(['key.create', 'key.rotate', 'key.revoke', 'key.update']));
    const text = JSON.stringify(activity.body);
    expect(text).not.toContain(created.body.secret);
    expect(text).not.toContain(rotated.body.secret);
  });

  it('answers 404 for a key of another organization', async () => {
    const other = await signUpAndVerify(t, { organizationName: 'Other Lab' });
    const key = await other.browser.post(`/api/orgs/${other.orgId}/keys`, { kind: 'server', name: 'Theirs' }).expect(201);
    const res = await owner.browser.post(api(`/keys/${key.body.key.id}/revoke`));
    expect(res.status).toBe(404);
    expect(res.body.code).toBe('not-found');
  });
});

describe('satellites and element sets', () => {
  let satId = '';

  it('registers a satellite, takes Keplerian elements and shows the current set and derived orbit', async () => {
    const created = await owner.browser.post(api('/satellites'), { name: 'Alder-1', description: 'Student cubesat' });
    expect(created.status).toBe(201);
    satId = created.body.satellite.id;
    expect(created.body.satellite).toMatchObject({ name: 'Alder-1', description: 'Student cubesat', current: null, derived: null });

    const upload = await owner.browser.post(api(`/satellites/${satId}/element-sets`), { kepler: kepler(Date.now() - 2 * DAY_MS) });
    expect(upload.status).toBe(201);
    expect(upload.body).toMatchObject({ accepted: 1, rejected: 0 });
    expect(upload.body.report[0]).toMatchObject({ index: 1, ok: true, elementSetId: expect.any(String) });

    const got = await owner.browser.get(api(`/satellites/${satId}`)).expect(200);
    expect(got.body.current).toMatchObject({ source: 'kepler', staleness: expect.any(String), uploadedBy: 'Kit Keeper', catalogNumber: '90201' });
    expect(got.body.current.ageDays).toBeGreaterThan(1.9);
    expect(got.body.derived.inclinationDeg).toBeCloseTo(97.4, 6);
    expect(got.body.derived.periodMin).toBeCloseTo(1440 / 15.05, 3);
  });

  it('exports a set as TLE with a download name, and a new satellite can be created from that text', async () => {
    const sets = await owner.browser.get(api(`/satellites/${satId}/element-sets`)).expect(200);
    const esId = sets.body.elementSets[0].id as string;
    const tle = await owner.browser.get(api(`/element-sets/${esId}/export?format=tle`)).expect(200);
    expect(tle.headers['content-type']).toBe('text/plain; charset=utf-8');
    expect(tle.headers['content-disposition']).toMatch(/^attachment; filename="?[A-Za-z0-9._-]+\.tle"?$/);
    const lines = tle.text.trim().split('\n');
    expect(lines.at(-2)).toMatch(/^1 90201/);
    expect(lines.at(-1)).toMatch(/^2 90201/);

    const twin = await owner.browser.post(api('/satellites'), { name: 'Alder-1 twin', elements: tle.text });
    expect(twin.status).toBe(201);
    expect(twin.body).toMatchObject({ accepted: 1, rejected: 0 });
    expect(twin.body.satellite.current.source).toBe('tle');

    for (const format of ['omm-kvn', 'omm-xml', 'omm-json']) {
      const res = await owner.browser.get(api(`/element-sets/${esId}/export?format=${format}`));
      expect([format, res.status]).toEqual([format, 200]);
    }
    const bad = await owner.browser.get(api(`/element-sets/${esId}/export?format=pdf`));
    expect(bad.status).toBe(400);
  });

  it('reports each entry of a mixed file upload and keeps the good ones; lists sets newest epoch first', async () => {
    // A good TLE with a newer epoch: made on a scratch satellite and exported.
    const scratch = await owner.browser.post(api('/satellites'), { name: 'Scratch' }).expect(201);
    const made = await owner.browser.post(api(`/satellites/${scratch.body.satellite.id}/element-sets`), { kepler: kepler(Date.now() - 3600_000) }).expect(201);
    const good = (await owner.browser.get(api(`/element-sets/${made.body.report[0].elementSetId}/export?format=tle`)).expect(200)).text.trim().split('\n').slice(-2);
    // A broken one: a letter where line 2's inclination belongs.
    const broken = [good[0]!, `${good[1]!.slice(0, 9)}X${good[1]!.slice(10)}`];
    const send = (text: string) =>
      owner.browser.agent.post(api(`/satellites/${satId}/element-sets`)).set('X-CSRF-Token', owner.browser.csrf).attach('files[]', Buffer.from(text), 'pipeline.tle');

    const mixed = await send(`${broken.join('\n')}\n${good.join('\n')}\n`);
    expect(mixed.status).toBe(201);
    expect(mixed.body).toMatchObject({ accepted: 1, rejected: 1 });
    expect(mixed.body.report).toEqual([
      expect.objectContaining({ index: 1, line: 2, column: 9, field: 'inclinationDeg', ok: false, file: 'pipeline.tle', code: expect.any(String), message: expect.any(String) }),
      expect.objectContaining({ index: 2, line: 3, ok: true, file: 'pipeline.tle', elementSetId: expect.any(String) }),
    ]);

    const allBad = await send(`${broken.join('\n')}\n`);
    expect(allBad.status).toBe(422);
    expect(allBad.body.code).toBe('unprocessable-element-set');
    expect(allBad.body.errors[0]).toMatchObject({ line: 2, column: 9, file: 'pipeline.tle' });

    const list = await owner.browser.get(api(`/satellites/${satId}/element-sets`)).expect(200);
    const epochs = (list.body.elementSets as Array<{ epoch: string }>).map((e) => Date.parse(e.epoch));
    expect(epochs).toHaveLength(2);
    expect(epochs[0]).toBeGreaterThan(epochs[1]!);
    expect((await owner.browser.get(api(`/satellites/${satId}`))).body.current.source).toBe('tle');
  });

  it('answers 422 with where the problem is when nothing in a text upload is usable', async () => {
    const res = await owner.browser.post(api(`/satellites/${satId}/element-sets`), { text: 'this is not an element set\n' });
    expect(res.status).toBe(422);
    expect(res.body.code).toBe('unprocessable-element-set');
    expect(res.body.errors.length).toBeGreaterThan(0);
  });

  it('renames and deletes a satellite, and records both', async () => {
    const sat = await owner.browser.post(api('/satellites'), { name: 'Short-lived' }).expect(201);
    const renamed = await owner.browser.patch(api(`/satellites/${sat.body.satellite.id}`), { name: 'Very short-lived' });
    expect(renamed.body.satellite.name).toBe('Very short-lived');
    await owner.browser.delete(api(`/satellites/${sat.body.satellite.id}`)).expect(204);
    expect((await owner.browser.get(api(`/satellites/${sat.body.satellite.id}`))).status).toBe(404);
    const activity = await owner.browser.get(api('/activity?limit=200')).expect(200);
    const actions = (activity.body.events as Array<{ action: string }>).map((e) => e.action);
    expect(actions).toEqual(expect.arrayContaining(['satellite.create', 'satellite.update', 'satellite.delete', 'element-set.upload']));
  });
});

describe('embeds', () => {
  it('saves, edits and deletes an embed that reads through a browser key', async () => {
    const sat = await owner.browser.post(api('/satellites'), { name: 'Embed sat' }).expect(201);
    const key = await owner.browser.post(api('/keys'), { kind: 'browser', name: 'Embed key', origins: ['https://alder.example'] }).expect(201);
    const created = await owner.browser.post(api('/embeds'), { name: 'Front page', satelliteIds: [sat.body.satellite.id], apiKeyId: key.body.key.id, options: { projection: 'globe', theme: 'dark' } });
    expect(created.status).toBe(201);
    expect(created.body.embed).toMatchObject({ name: 'Front page', satelliteIds: [sat.body.satellite.id], apiKeyId: key.body.key.id, options: { projection: 'globe', theme: 'dark' } });
    const id = created.body.embed.id as string;
    const edited = await owner.browser.patch(api(`/embeds/${id}`), { options: { projection: 'equal-earth' } });
    expect(edited.body.embed.options).toEqual({ projection: 'equal-earth' });
    const list = await owner.browser.get(api('/embeds')).expect(200);
    expect(list.body.embeds.map((e: { id: string }) => e.id)).toContain(id);
    await owner.browser.delete(api(`/embeds/${id}`)).expect(204);
    expect((await owner.browser.delete(api(`/embeds/${id}`))).status).toBe(404);
  });

  it('records what an edit changed, before and after, and nothing for an edit that changed nothing', async () => {
    const sat = await owner.browser.post(api('/satellites'), { name: 'Audit sat', description: 'first words' }).expect(201);
    const key = await owner.browser.post(api('/keys'), { kind: 'browser', name: 'Audit key', origins: ['https://alder.example'] }).expect(201);
    const created = await owner.browser.post(api('/embeds'), { name: 'Audited', satelliteIds: [sat.body.satellite.id], apiKeyId: key.body.key.id, options: { projection: 'globe', theme: 'dark', observer: '51.5,-0.1' } }).expect(201);
    const id = created.body.embed.id as string;
    await owner.browser.patch(api(`/embeds/${id}`), { name: 'Audited', options: { projection: 'globe', theme: 'light', observer: '51.5,-0.1' } }).expect(200);
    await owner.browser.patch(api(`/embeds/${id}`), { name: 'Audited', options: { projection: 'globe', theme: 'light', observer: '51.5,-0.1' } }).expect(200);
    await owner.browser.patch(api(`/satellites/${sat.body.satellite.id}`), { name: 'Audit sat', description: 'second words' }).expect(200);
    await owner.browser.patch(api(`/satellites/${sat.body.satellite.id}`), { name: 'Audit sat', description: 'second words' }).expect(200);
    const activity = await owner.browser.get(api('/activity?limit=200')).expect(200);
    const events = activity.body.events as Array<{ action: string; targetId: string; detail: Record<string, unknown> }>;
    const embedEdits = events.filter((e) => e.action === 'embed.update' && e.targetId === id);
    expect(embedEdits).toHaveLength(1);
    expect(embedEdits[0]!.detail).toEqual({ name: 'Audited', changes: { theme: { from: 'dark', to: 'light' } } });
    const satEdits = events.filter((e) => e.action === 'satellite.update' && e.targetId === sat.body.satellite.id);
    expect(satEdits).toHaveLength(1);
    expect(satEdits[0]!.detail).toEqual({ name: 'Audit sat', changes: { description: { from: 'first words', to: 'second words' } } });
  });

  it('lists with each key the embeds that use it, and moves them to the new key on replacement', async () => {
    const sat = await owner.browser.post(api('/satellites'), { name: 'Use sat' }).expect(201);
    const key = await owner.browser.post(api('/keys'), { kind: 'browser', name: 'Used key', origins: ['https://alder.example'] }).expect(201);
    const embed = await owner.browser.post(api('/embeds'), { name: 'Uses it', satelliteIds: [sat.body.satellite.id], apiKeyId: key.body.key.id, options: {} }).expect(201);
    const listed = (await owner.browser.get(api('/keys')).expect(200)).body.keys.find((k: { id: string }) => k.id === key.body.key.id);
    expect(listed.use.embeds).toEqual([{ id: embed.body.embed.id, name: 'Uses it' }]);
    expect(listed.use.origins).toEqual([]);
    const rotated = await owner.browser.post(api(`/keys/${key.body.key.id}/rotate`), { name: 'Used key, new' }).expect(201);
    expect(rotated.body.embedsMoved).toBe(1);
    expect(rotated.body.key.use.embeds).toEqual([{ id: embed.body.embed.id, name: 'Uses it' }]);
    expect(rotated.body.previous.use.embeds).toEqual([]);
    expect((await owner.browser.get(api('/embeds'))).body.embeds.find((e: { id: string }) => e.id === embed.body.embed.id).apiKeyId).toBe(rotated.body.key.id);
  });

  it('refuses an embed with an observer that is not a place, or passes without an observer, and stores nothing', async () => {
    const sat = await owner.browser.post(api('/satellites'), { name: 'Observer sat' }).expect(201);
    const key = await owner.browser.post(api('/keys'), { kind: 'browser', name: 'Observer key', origins: ['https://alder.example'] }).expect(201);
    const base = { name: 'Observed', satelliteIds: [sat.body.satellite.id], apiKeyId: key.body.key.id };
    const before = (await owner.browser.get(api('/embeds'))).body.embeds.length as number;
    for (const [options, says] of [
      [{ observer: '123,0', layers: ['passes'] }, /latitude "123"/],
      [{ observer: '51.5,abc', layers: ['passes'] }, /longitude "abc"/],
      [{ observer: 'None' }, /not an observer/],
      [{ observer: '', layers: ['footprint', 'passes'] }, /passes layer needs an observer/],
      [{ layers: ['passes'] }, /passes layer needs an observer/],
    ] as const) {
      const res = await owner.browser.post(api('/embeds'), { ...base, options });
      expect(res.status, JSON.stringify(options)).toBe(400);
      expect(res.body.code).toBe('validation-failed');
      expect(res.body.errors.map((e: { field: string }) => e.field)).toContain('options.observer');
      expect((res.body.errors as Array<{ message: string }>).map((e) => e.message).join(' ')).toMatch(says);
    }
    expect((await owner.browser.get(api('/embeds'))).body.embeds.length).toBe(before);
    const fine = await owner.browser.post(api('/embeds'), { ...base, options: { observer: '51.48,-0.01,45', layers: ['passes'] } });
    expect(fine.status).toBe(201);
    const edit = await owner.browser.patch(api(`/embeds/${fine.body.embed.id}`), { options: { observer: '-91,0', layers: ['passes'] } });
    expect(edit.status).toBe(400);
    expect((await owner.browser.get(api('/embeds'))).body.embeds.find((e: { id: string }) => e.id === fine.body.embed.id).options.observer).toBe('51.48,-0.01,45');
  });

  it('refuses an embed over a satellite of another organization', async () => {
    const other = await signUpAndVerify(t, { organizationName: 'Elsewhere Lab' });
    const theirs = await other.browser.post(`/api/orgs/${other.orgId}/satellites`, { name: 'Not yours' }).expect(201);
    const key = await owner.browser.post(api('/keys'), { kind: 'browser', name: 'K', origins: ['https://alder.example'] }).expect(201);
    const res = await owner.browser.post(api('/embeds'), { name: 'Sneaky', satelliteIds: [theirs.body.satellite.id], apiKeyId: key.body.key.id, options: {} });
    expect(res.status).toBeGreaterThanOrEqual(400);
    expect(res.status).toBeLessThan(500);
  });
});

describe('usage, activity and plan', () => {
  it('answers usage for the last 30 UTC days by default with the quota of the plan', async () => {
    const res = await owner.browser.get(api('/usage')).expect(200);
    expect(res.body.days).toHaveLength(30);
    expect(res.body.days.at(-1).day).toBe(new Date().toISOString().slice(0, 10));
    expect(res.body.quota).toMatchObject({ plan: 'starter', limit: expect.any(Number), usedThisMonth: expect.any(Number), resetsAt: expect.any(String) });
    expect(res.body).toMatchObject({ byKey: expect.any(Array), byRoute: expect.any(Array), rows: expect.any(Array) });
  });

  it('counts /v1 use per key, day and route once recorded', async () => {
    const key = await owner.browser.post(api('/keys'), { kind: 'server', name: 'Counted' }).expect(201);
    const usage = t.context.services.usage!;
    const today = new Date();
    usage.record(orgId, key.body.key.id, 'GET /v1/satellites', today);
    usage.record(orgId, key.body.key.id, 'GET /v1/satellites', today);
    await usage.flush();
    const res = await owner.browser.get(api('/usage')).expect(200);
    expect(res.body.byKey).toContainEqual({ apiKeyId: key.body.key.id, name: expect.stringContaining('Counted'), count: 2 });
    expect(res.body.byRoute).toContainEqual({ endpoint: 'GET /v1/satellites', count: 2 });
    const csv = await owner.browser.get(api('/usage.csv')).expect(200);
    expect(csv.headers['content-type']).toMatch(/^text\/csv/);
    expect(csv.headers['content-disposition']).toMatch(/^attachment; filename="?nadirline-usage-\d{4}-\d{2}-\d{2}-to-\d{4}-\d{2}-\d{2}\.csv"?$/);
    expect(csv.text.split('\r\n')[0]).toBe('day,key,endpoint,count');
    expect(csv.text).toContain(',GET /v1/satellites,2');
  });

  it('refuses a usage window that is upside down, too long, or not a day', async () => {
    expect((await owner.browser.get(api('/usage?from=2025-03-10&to=2025-03-01'))).status).toBe(400);
    expect((await owner.browser.get(api('/usage?from=2023-01-01&to=2025-01-01'))).status).toBe(400);
    const bad = await owner.browser.get(api('/usage?from=2025-02-30'));
    expect(bad.status).toBe(400);
    expect(bad.body.errors[0].where).toBe('from');
  });

  it('pages through the activity log, newest first', async () => {
    const first = await owner.browser.get(api('/activity?limit=3')).expect(200);
    expect(first.body.events).toHaveLength(3);
    const ids = (first.body.events as Array<{ id: number }>).map((e) => e.id);
    expect(ids).toEqual([...ids].sort((a, b) => b - a));
    const next = await owner.browser.get(api(`/activity?limit=3&before=${ids.at(-1)}`)).expect(200);
    expect((next.body.events as Array<{ id: number }>).every((e) => e.id < ids.at(-1)!)).toBe(true);
  });

  it('lists the plans and answers the payment page for a paid plan, leaving the plan as it is until paid', async () => {
    const billing = await owner.browser.get(api('/billing')).expect(200);
    expect(billing.body.plan).toBe('starter');
    expect(billing.body.plans.map((p: { id: string }) => p.id)).toEqual(['starter', 'mission', 'constellation']);
    expect(billing.body.paymentsAvailable).toBe(true);
    const checkout = await owner.browser.post(api('/billing/checkout'), { plan: 'mission' });
    expect(checkout.status).toBe(200);
    expect(checkout.body.url).toMatch(/^http:\/\/127\.0\.0\.1:\d+\/pay\/cs_test_/);
    const session = await owner.browser.session();
    expect(session.body.memberships[0].organization.plan).toBe('starter');
    expect((await owner.browser.get(api('/usage'))).body.quota.plan).toBe('starter');
    const again = await owner.browser.post(api('/billing/checkout'), { plan: 'starter' });
    expect(again.status).toBe(409);
  });
});

describe('the /api surface', () => {
  it('answers an unknown /api route with a problem', async () => {
    const res = await owner.browser.get('/api/nothing-here');
    expect(res.status).toBe(404);
    expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
  });

  it('answers 404 for an organization the user does not belong to', async () => {
    const res = await owner.browser.get('/api/orgs/no-such-org/satellites');
    expect(res.status).toBe(404);
    expect(res.body.code).toBe('not-found');
  });
});
