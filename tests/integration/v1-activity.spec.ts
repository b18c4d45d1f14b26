/**
 * Writes through /v1 reach the console's activity log with the key as the actor, `uploadedBy`
 * reads the same in /v1 and in the console for the same set, and the console refuses keys that
 * would be born expired.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { leoTle } from '../support/app.ts';
import { signUpAndVerify, startTestApp, type Person, type TestApp } from './console-api.harness.ts';

let t: TestApp;
let owner: Person;
let org: string;
let serverKey: string;

interface ActivityEvent {
  action: string;
  actor: { name: string; email: string } | { keyName: string } | null;
  targetType: string;
  targetId: string | null;
  detail: Record<string, unknown>;
}

beforeAll(async () => {
  t = await startTestApp();
  owner = await signUpAndVerify(t, { name: 'Odile Owner', organizationName: 'Brackwater Rocketry Society' });
  org = owner.orgId as string;
  const made = await owner.browser.post(`/api/orgs/${org}/keys`, { kind: 'server', name: 'Nightly pipeline', scopes: ['read', 'element-sets:write'] }).expect(201);
  serverKey = made.body.secret as string;
});
afterAll(async () => {
  await t?.close();
});

const v1 = () => ({ Authorization: `Bearer ${serverKey}` });
const activity = async (): Promise<ActivityEvent[]> => (await owner.browser.get(`/api/orgs/${org}/activity?limit=200`).expect(200)).body.events;

describe('activity of /v1 writes', () => {
  it('records a satellite registered with a server key, by that key', async () => {
    const res = await request(t.app).post('/v1/satellites').set(v1()).send({ name: 'Brackwater-1', elements: leoTle({ catalogNumber: '99871', hoursAgo: 5 }) }).expect(201);
    const events = (await activity()).filter((e) => e.targetId === res.body.id);
    expect(events.map((e) => e.action).sort()).toEqual(['element-set.upload', 'satellite.create']);
    for (const e of events) expect(e.actor).toEqual({ keyName: 'Nightly pipeline' });
    expect(events.find((e) => e.action === 'satellite.create')?.detail).toEqual({ name: 'Brackwater-1' });
    expect(events.find((e) => e.action === 'element-set.upload')?.detail).toMatchObject({ satellite: 'Brackwater-1', accepted: 1, rejected: 0 });
  });

  it('records element sets uploaded with a server key, and nothing for an upload that adds nothing', async () => {
    const sat = (await request(t.app).post('/v1/satellites').set(v1()).send({ name: 'Brackwater-2' }).expect(201)).body.id as string;
    const tle = leoTle({ catalogNumber: '99872', hoursAgo: 3 });
    const up = await request(t.app).post(`/v1/satellites/${sat}/element-sets`).set(v1()).set('Content-Type', 'text/plain').send(tle).expect(201);
    await request(t.app).post(`/v1/satellites/${sat}/element-sets`).set(v1()).set('Content-Type', 'text/plain').send(tle).expect(200);
    const uploads = (await activity()).filter((e) => e.targetId === sat && e.action === 'element-set.upload');
    expect(uploads).toHaveLength(1);
    expect(uploads[0]).toMatchObject({ actor: { keyName: 'Nightly pipeline' }, targetType: 'satellite', detail: { satellite: 'Brackwater-2', accepted: 1, elementSetIds: [up.body.elementSet.id] } });
  });
});

describe('who uploaded a set', () => {
  it('reads the same in /v1 and in the console for a key upload', async () => {
    const sat = (await request(t.app).post('/v1/satellites').set(v1()).send({ name: 'Brackwater-3', elements: leoTle({ catalogNumber: '99873' }) }).expect(201)).body;
    expect(sat.current.uploadedBy).toBe('key Nightly pipeline');
    const viaV1 = await request(t.app).get(`/v1/satellites/${sat.id}`).set(v1()).expect(200);
    const history = await owner.browser.get(`/api/orgs/${org}/satellites/${sat.id}/element-sets`).expect(200);
    expect(viaV1.body.current.uploadedBy).toBe('key Nightly pipeline');
    expect(history.body.elementSets[0].uploadedBy).toBe(viaV1.body.current.uploadedBy);
  });

  it('reads the same in /v1 and in the console for a member\u2019s upload', async () => {
    const sat = (await request(t.app).post('/v1/satellites').set(v1()).send({ name: 'Brackwater-4' }).expect(201)).body.id as string;
    await owner.browser.post(`/api/orgs/${org}/satellites/${sat}/element-sets`, { text: leoTle({ catalogNumber: '99874' }) }).expect(201);
    const viaV1 = await request(t.app).get(`/v1/satellites/${sat}`).set(v1()).expect(200);
    const list = await request(t.app).get('/v1/satellites').set(v1()).expect(200);
    const history = await owner.browser.get(`/api/orgs/${org}/satellites/${sat}/element-sets`).expect(200);
    expect(viaV1.body.current.uploadedBy).toBe('Odile Owner');
    expect(list.body.satellites.find((s: { id: string }) => s.id === sat).current.uploadedBy).toBe('Odile Owner');
    expect(history.body.elementSets[0].uploadedBy).toBe('Odile Owner');
  });

  it('keeps names away from browser keys, which answer public pages', async () => {
    const made = await owner.browser.post(`/api/orgs/${org}/keys`, { kind: 'browser', name: 'Public page', origins: ['https://www.brackwater.example'] }).expect(201);
    const page = { Authorization: `Bearer ${made.body.secret as string}`, Origin: 'https://www.brackwater.example' };
    const sat = (await request(t.app).post('/v1/satellites').set(v1()).send({ name: 'Brackwater-6', elements: leoTle({ catalogNumber: '99876' }) }).expect(201)).body.id as string;
    const one = await request(t.app).get(`/v1/satellites/${sat}`).set(page).expect(200);
    const list = await request(t.app).get('/v1/satellites').set(page).expect(200);
    expect(one.body.current.uploadedBy).toBeNull();
    expect(list.body.satellites.find((s: { id: string }) => s.id === sat).current.uploadedBy).toBeNull();
    expect(JSON.stringify(list.body)).not.toContain('Odile Owner');
  });

  it('names the key on the sets an upload answers with', async () => {
    const sat = (await request(t.app).post('/v1/satellites').set(v1()).send({ name: 'Brackwater-5' }).expect(201)).body.id as string;
    const up = await request(t.app).post(`/v1/satellites/${sat}/element-sets`).set(v1()).set('Content-Type', 'text/plain').send(leoTle({ catalogNumber: '99875' })).expect(201);
    expect(up.body.elementSet.uploadedBy).toBe('key Nightly pipeline');
    expect(up.body.elementSets[0].uploadedBy).toBe('key Nightly pipeline');
  });
});

describe('key expiry in the console', () => {
  it('refuses to create a key whose expiry has passed, at the field expiresAt', async () => {
    const res = await owner.browser.post(`/api/orgs/${org}/keys`, { kind: 'server', name: 'Born expired', expiresAt: new Date(Date.now() - 60_000).toISOString() });
    expect(res.status, JSON.stringify(res.body)).toBe(400);
    expect(res.body.code).toBe('validation-failed');
    expect(res.body.errors).toEqual([{ where: '/expiresAt', field: 'expiresAt', message: 'Choose a time in the future: a key that has already expired would refuse every request.' }]);
    const keys = (await owner.browser.get(`/api/orgs/${org}/keys`).expect(200)).body.keys as Array<{ name: string }>;
    expect(keys.map((k) => k.name)).not.toContain('Born expired');
  });

  it('refuses to move a key\u2019s expiry into the past, and takes a future one or none', async () => {
    const made = await owner.browser.post(`/api/orgs/${org}/keys`, { kind: 'server', name: 'Moving expiry' }).expect(201);
    const url = `/api/orgs/${org}/keys/${made.body.key.id}`;
    const past = await owner.browser.patch(url, { expiresAt: '2020-01-01T00:00:00Z' });
    expect(past.status).toBe(400);
    expect(past.body.errors[0]).toMatchObject({ field: 'expiresAt' });
    const future = new Date(Date.now() + 86_400_000).toISOString();
    expect((await owner.browser.patch(url, { expiresAt: future }).expect(200)).body.key.expiresAt).toBe(future);
    expect((await owner.browser.patch(url, { expiresAt: null }).expect(200)).body.key.expiresAt).toBeNull();
  });
});
