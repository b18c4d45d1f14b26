/**
 * Deleting a key (DELETE /api/orgs/:org/keys/:id) over real HTTP: a revoked, retired or unused key
 * goes from the list and from /v1 at once, its usage stays counted under its name and the activity
 * log keeps the deletion; a key that embeds read with is refused with a problem naming them; only
 * admins and the owner may delete, with the CSRF token like every other console write.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { getUsageRecorder } from '@nadirline/server/services/usage.ts';
import { getKeyService } from '@nadirline/server/services/keys.ts';
import { signUpAndVerify, startTestApp, type Person, type TestApp } from './console-api.harness.ts';

let t: TestApp;
let owner: Person;
let orgId: string;
let satelliteId: string;
const api = (p: string) => `/api/orgs/${orgId}${p}`;
const ORIGIN = 'https://rowan.example';

beforeAll(async () => {
  t = await startTestApp();
  owner = await signUpAndVerify(t, { name: 'Ida Rowan', organizationName: 'Rowan Hill Observatory' });
  orgId = owner.orgId!;
  satelliteId = (await owner.browser.post(api('/satellites'), { name: 'ROWAN-1' }).expect(201)).body.satellite.id;
});
afterAll(async () => {
  await t?.close();
});

async function newKey(name: string, kind: 'browser' | 'server' = 'browser'): Promise<{ id: string; secret: string }> {
  const res = await owner.browser.post(api('/keys'), kind === 'browser' ? { kind, name, origins: [ORIGIN] } : { kind, name }).expect(201);
  return { id: res.body.key.id as string, secret: res.body.secret as string };
}
const listedIds = async () => ((await owner.browser.get(api('/keys')).expect(200)).body.keys as Array<{ id: string }>).map((k) => k.id);
const v1 = (secret: string) => request(t.app).get('/v1/satellites').set('Authorization', `Bearer ${secret}`);
const browserV1 = (secret: string) => request(t.app).get('/v1/satellites').query({ key: secret }).set('Origin', ORIGIN);

async function flushAll(): Promise<void> {
  await getUsageRecorder(t.context).flush();
  await getKeyService(t.context).flushLastUsed();
}

describe('deleting keys', () => {
  it('deletes a revoked key: gone from the list, refused on /v1, kept in the activity log', async () => {
    const k = await newKey('Old kiosk', 'server');
    await v1(k.secret).expect(200);
    await owner.browser.post(api(`/keys/${k.id}/revoke`)).expect(200);
    const res = await owner.browser.delete(api(`/keys/${k.id}`));
    expect(res.status, JSON.stringify(res.body)).toBe(204);
    expect(res.text).toBe('');
    expect(await listedIds()).not.toContain(k.id);

    const refused = await v1(k.secret);
    expect(refused.status).toBe(401);
    expect(refused.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(refused.body.code).toBe('invalid-key');
    expect(refused.body.detail).toMatch(/was deleted/);

    const events = (await owner.browser.get(api('/activity?limit=200')).expect(200)).body.events as Array<{ action: string; targetId: string; detail: Record<string, unknown> }>;
    const deleted = events.find((e) => e.action === 'key.delete' && e.targetId === k.id);
    expect(deleted?.detail).toMatchObject({ name: 'Old kiosk', kind: 'server', lastFour: k.secret.slice(-4), state: 'revoked', lastUsedAt: expect.any(String) });
    expect(events.some((e) => e.action === 'key.revoke' && e.targetId === k.id)).toBe(true);
    expect(JSON.stringify(events)).not.toContain(k.secret);

    // a second delete, a revoke, an edit: the key is not there any more
    expect((await owner.browser.delete(api(`/keys/${k.id}`))).status).toBe(404);
    expect((await owner.browser.post(api(`/keys/${k.id}/revoke`))).status).toBe(404);
    expect((await owner.browser.patch(api(`/keys/${k.id}`), { name: 'Back' })).status).toBe(404);
  });

  it('deletes a retired key; its replacement keeps working and no longer says what it replaced', async () => {
    const k = await newKey('Site 2030');
    const rotated = await owner.browser.post(api(`/keys/${k.id}/rotate`), { name: 'Site 2031', quietMinutes: 0 }).expect(201);
    expect(rotated.body.previous.state).toBe('retired');
    expect(rotated.body.key.replacesId).toBe(k.id);
    await owner.browser.delete(api(`/keys/${k.id}`)).expect(204);
    const keys = (await owner.browser.get(api('/keys')).expect(200)).body.keys as Array<{ id: string; replacesId: string | null }>;
    expect(keys.map((x) => x.id)).not.toContain(k.id);
    expect(keys.find((x) => x.id === rotated.body.key.id)?.replacesId).toBeNull();
    await browserV1(rotated.body.secret).expect(200);
    expect((await browserV1(k.secret)).body.code).toBe('invalid-key');
  });

  it('stops a working key it deletes at once, even one this process had cached', async () => {
    const k = await newKey('Unused pipeline', 'server');
    await v1(k.secret).expect(200); // now cached by hash
    await owner.browser.delete(api(`/keys/${k.id}`)).expect(204);
    const res = await v1(k.secret);
    expect(res.status).toBe(401);
    expect(res.body.code).toBe('invalid-key');
  });

  it('refuses to delete a key that embeds read with, naming them, and leaves key and embeds working', async () => {
    const k = await newKey('Lobby key');
    const embeds = [];
    for (const name of ['Lobby wall', 'Visitor guide']) {
      embeds.push((await owner.browser.post(api('/embeds'), { name, satelliteIds: [satelliteId], apiKeyId: k.id, options: {} }).expect(201)).body.embed);
    }
    const res = await owner.browser.delete(api(`/keys/${k.id}`));
    expect(res.status).toBe(409);
    expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(res.body.code).toBe('key-in-use');
    expect(res.body.detail).toContain('“Lobby wall”');
    expect(res.body.detail).toContain('“Visitor guide”');
    expect(res.body.detail).toMatch(/another browser key/);
    expect(res.body.embeds).toEqual([
      { id: embeds[0].id, name: 'Lobby wall' },
      { id: embeds[1].id, name: 'Visitor guide' },
    ]);
    expect(await listedIds()).toContain(k.id);
    await browserV1(k.secret).expect(200);
    await request(t.app).get('/v1/satellites').query({ embed: embeds[0].id }).set('Origin', ORIGIN).expect(200);

    // revoked, the key still may not go while an embed names it (the embed would point at nothing)
    await owner.browser.post(api(`/keys/${k.id}/revoke`)).expect(200);
    expect((await owner.browser.delete(api(`/keys/${k.id}`))).body.code).toBe('key-in-use');

    // once the embeds read with another key, it may
    const other = await newKey('Lobby key 2');
    for (const e of embeds) await owner.browser.patch(api(`/embeds/${e.id}`), { apiKeyId: other.id }).expect(200);
    await owner.browser.delete(api(`/keys/${k.id}`)).expect(204);
    await request(t.app).get('/v1/satellites').query({ embed: embeds[0].id }).set('Origin', ORIGIN).expect(200);
    // and a deleted key cannot be given to an embed
    const give = await owner.browser.patch(api(`/embeds/${embeds[0].id}`), { apiKeyId: k.id });
    expect(give.status).toBe(400);
    expect(give.body.errors[0].field).toBe('apiKeyId');
  });

  it('counts embeds on a key this one replaced as using it', async () => {
    const old = await newKey('Chain start');
    const rotated = await owner.browser.post(api(`/keys/${old.id}/rotate`), { name: 'Chain next', quietMinutes: 60 }).expect(201);
    // an embed put back on the replaced key reads with its successor
    const embed = (await owner.browser.post(api('/embeds'), { name: 'Follows the chain', satelliteIds: [satelliteId], apiKeyId: old.id, options: {} }).expect(201)).body.embed;
    const res = await owner.browser.delete(api(`/keys/${rotated.body.key.id}`));
    expect(res.status).toBe(409);
    expect(res.body.embeds).toEqual([{ id: embed.id, name: 'Follows the chain' }]);
  });

  it('keeps the organization’s usage totals and the key’s name in them after the key is deleted', async () => {
    const k = await newKey('Counted then deleted', 'server');
    for (let i = 0; i < 3; i++) await v1(k.secret).expect(200);
    await flushAll();
    const before = (await owner.browser.get(api('/usage')).expect(200)).body;
    const mine = before.byKey.find((x: { apiKeyId: string }) => x.apiKeyId === k.id);
    expect(mine).toMatchObject({ count: 3, name: expect.stringContaining('Counted then deleted') });

    await owner.browser.post(api(`/keys/${k.id}/revoke`)).expect(200);
    await owner.browser.delete(api(`/keys/${k.id}`)).expect(204);
    await flushAll();
    const after = (await owner.browser.get(api('/usage')).expect(200)).body;
    const total = (r: { days: Array<{ count: number }> }) => r.days.reduce((n, d) => n + d.count, 0);
    expect(total(after)).toBe(total(before));
    expect(after.quota.usedThisMonth).toBe(before.quota.usedThisMonth);
    expect(after.byKey.find((x: { apiKeyId: string }) => x.apiKeyId === k.id)).toEqual(mine);
    const csv = (await owner.browser.get(api('/usage.csv')).expect(200)).text;
    expect(csv).toContain('Counted then deleted');
  });

  it('answers 404 for a key of another organization and keeps it', async () => {
    const other = await signUpAndVerify(t, { organizationName: 'Elsewhere Lab' });
    const theirs = await other.browser.post(`/api/orgs/${other.orgId}/keys`, { kind: 'server', name: 'Theirs' }).expect(201);
    const res = await owner.browser.delete(api(`/keys/${theirs.body.key.id}`));
    expect(res.status).toBe(404);
    expect(res.body.code).toBe('not-found');
    await v1(theirs.body.secret).expect(200);
  });

  it('lets admins delete, not editors or viewers, and never without the CSRF token', async () => {
    const people: Record<string, Person> = {};
    for (const role of ['admin', 'editor', 'viewer'] as const) {
      const p = await signUpAndVerify(t, { name: `A ${role}` });
      const invite = await owner.browser.post(api('/invitations'), { email: p.email, role }).expect(201);
      const { token } = await t.lastMailTo(p.email);
      await p.browser.post(`/api/invitations/${token}/accept`).expect(200);
      expect(invite.body.invitation.role).toBe(role);
      people[role] = p;
    }
    for (const role of ['editor', 'viewer']) {
      const k = await newKey(`Kept from ${role}`, 'server');
      const res = await people[role]!.browser.delete(api(`/keys/${k.id}`));
      expect(res.status).toBe(403);
      expect(res.body.code).toBe('forbidden');
      expect(await listedIds()).toContain(k.id);
    }
    const k = await newKey('Admin may delete', 'server');
    const noToken = await people['admin']!.browser.agent.delete(api(`/keys/${k.id}`));
    expect(noToken.status).toBe(403);
    expect(noToken.body.code).toBe('csrf-failed');
    expect(await listedIds()).toContain(k.id);
    await people['admin']!.browser.delete(api(`/keys/${k.id}`)).expect(204);
    expect(await listedIds()).not.toContain(k.id);
  });
});
