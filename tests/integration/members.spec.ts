import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PASSWORD, signUpAndVerify, startTestApp, uniqueEmail, type Person, type TestApp } from './console-api.harness.ts';

let t: TestApp;
let owner: Person;
let orgId: string;

beforeAll(async () => {
  t = await startTestApp();
  owner = await signUpAndVerify(t, { name: 'Orla Owner', organizationName: 'Cedar Ridge Observatory Club' });
  orgId = owner.orgId!;
});
afterAll(async () => {
  await t.close();
});

/** Owner invites `email` as `role`; returns the token from the mailed /invite/<token> link. */
async function invite(email: string, role: 'admin' | 'editor' | 'viewer', by: Person = owner): Promise<{ token: string; id: string }> {
  const res = await by.browser.post(`/api/orgs/${orgId}/invitations`, { email, role }).expect(201);
  const { link, token } = await t.lastMailTo(email);
  expect(link).toBe(`http://console.test/invite/${token}`);
  return { token, id: res.body.invitation.id as string };
}

/** A new person who joins the organization from an invitation link by signing up. */
async function join(role: 'admin' | 'editor' | 'viewer', name = `Member ${role}`): Promise<Person> {
  const email = uniqueEmail(role);
  const { token } = await invite(email, role);
  const b = t.browser();
  const signup = await b.post('/api/auth/signup', { email, name, password: PASSWORD, organizationName: '', invitationToken: token }).expect(201);
  // The sign-up from an invitation signed them in.
  b.csrf = signup.body.csrfToken as string;
  return { email, name, userId: signup.body.user.id, browser: b, orgId };
}

describe('invitations', () => {
  it('mails a link that anyone can read and that a new person signs up from, already confirmed', async () => {
    const email = uniqueEmail('newcomer');
    const { token } = await invite(email, 'editor');
    const mail = (await t.mailbox()).filter((m) => m.to === email).at(-1)!;
    expect(mail.subject).toBe('Orla Owner invited you to Cedar Ridge Observatory Club on Nadirline');

    const preview = await t.browser().get(`/api/invitations/${token}`).expect(200);
    expect(preview.body).toEqual({ organization: { name: 'Cedar Ridge Observatory Club' }, email, role: 'editor', expiresAt: expect.any(String) });
    const days = (Date.parse(preview.body.expiresAt) - Date.now()) / 86_400_000;
    expect(days).toBeGreaterThan(6.9);
    expect(days).toBeLessThanOrEqual(7);

    const b = t.browser();
    const signup = await b.post('/api/auth/signup', { email, name: 'New Comer', password: PASSWORD, organizationName: '', invitationToken: token });
    expect(signup.status).toBe(201);
    expect(signup.body.user.emailVerified).toBe(true);
    // Signed in by the sign-up itself: no second sign-in.
    expect(signup.body.signedIn).toBe(true);
    expect(signup.body.memberships).toEqual([{ organization: { id: orgId, name: 'Cedar Ridge Observatory Club', plan: 'starter' }, role: 'editor' }]);
    const session = await b.get('/api/session').expect(200);
    expect(session.body.user.email).toBe(email);
    expect(session.body.csrfToken).toBe(signup.body.csrfToken);
    b.csrf = signup.body.csrfToken;
    await b.get(`/api/orgs/${orgId}/satellites`).expect(200);
    await b.patch('/api/me', { name: 'New Comer, renamed' }).expect(200);
    // The invitation is used up.
    const again = await t.browser().get(`/api/invitations/${token}`);
    expect(again.status).toBe(400);
    expect(again.body).toMatchObject({ code: 'invalid-token', reason: 'used' });
  });

  it('lets an existing account accept while signed in with the invited address', async () => {
    const person = await signUpAndVerify(t, { name: 'Existing Person' });
    const { token } = await invite(person.email, 'viewer');
    const accepted = await person.browser.post(`/api/invitations/${token}/accept`);
    expect(accepted.status).toBe(200);
    expect(accepted.body.membership).toEqual({ organization: { id: orgId, name: 'Cedar Ridge Observatory Club', plan: 'starter' }, role: 'viewer' });
    const org = await person.browser.get(`/api/orgs/${orgId}`).expect(200);
    expect(org.body.role).toBe('viewer');
  });

  it('refuses to accept for a different signed-in address, and asks signed-out people to sign in', async () => {
    const invited = uniqueEmail('invited');
    const { token } = await invite(invited, 'viewer');
    const someoneElse = await signUpAndVerify(t);
    const res = await someoneElse.browser.post(`/api/invitations/${token}/accept`);
    expect(res.status).toBe(403);
    expect(res.body).toMatchObject({ code: 'email-mismatch', invitedEmail: invited });
    const anonymous = await t.browser().post(`/api/invitations/${token}/accept`);
    expect(anonymous.status).toBe(401);
    expect(anonymous.body.code).toBe('unauthenticated');
  });

  it('refuses a sign-up from an invitation with another address', async () => {
    const { token } = await invite(uniqueEmail('meant'), 'viewer');
    const res = await t.browser().post('/api/auth/signup', { email: uniqueEmail('other'), name: 'Other', password: PASSWORD, invitationToken: token });
    expect(res.status).toBe(403);
    expect(res.body.code).toBe('email-mismatch');
  });

  it('lists pending invitations with who sent them, and withdrawing one kills its link', async () => {
    const email = uniqueEmail('pending');
    const { token, id } = await invite(email, 'admin');
    const list = await owner.browser.get(`/api/orgs/${orgId}/members`).expect(200);
    expect(list.body.invitations).toContainEqual({ id, email, role: 'admin', expiresAt: expect.any(String), invitedBy: 'Orla Owner' });
    await owner.browser.delete(`/api/orgs/${orgId}/invitations/${id}`).expect(204);
    const gone = await t.browser().get(`/api/invitations/${token}`);
    expect(gone.body).toMatchObject({ code: 'invalid-token', reason: 'unknown' });
    const after = await owner.browser.get(`/api/orgs/${orgId}/members`).expect(200);
    expect(after.body.invitations.map((i: { id: string }) => i.id)).not.toContain(id);
  });

  it('replaces an earlier pending invitation to the same address', async () => {
    const email = uniqueEmail('twice');
    const first = await invite(email, 'viewer');
    const second = await invite(email, 'editor');
    expect((await t.browser().get(`/api/invitations/${first.token}`)).body.code).toBe('invalid-token');
    expect((await t.browser().get(`/api/invitations/${second.token}`)).body.role).toBe('editor');
  });

  it('refuses to invite someone who is already a member, or to invite an owner', async () => {
    const member = await join('viewer');
    const dup = await owner.browser.post(`/api/orgs/${orgId}/invitations`, { email: member.email, role: 'editor' });
    expect(dup.status).toBe(409);
    expect(dup.body.code).toBe('conflict');
    const asOwner = await owner.browser.post(`/api/orgs/${orgId}/invitations`, { email: uniqueEmail('boss'), role: 'owner' });
    expect(asOwner.status).toBe(400);
    expect(asOwner.body.errors[0].field).toBe('role');
  });

  it('refuses an expired invitation, also when signing up from it', async () => {
    const email = uniqueEmail('late');
    const { id, token } = await invite(email, 'viewer');
    await t.context.sequelize.models['Invitation']!.update({ expiresAt: new Date(Date.now() - 1000) }, { where: { id } });
    const res = await t.browser().get(`/api/invitations/${token}`);
    expect(res.body).toMatchObject({ code: 'invalid-token', reason: 'expired' });
    const signup = await t.browser().post('/api/auth/signup', { email, name: 'Late', password: PASSWORD, invitationToken: token });
    expect(signup.status).toBe(400);
    expect(signup.body).toMatchObject({ code: 'invalid-token', reason: 'expired' });
  });
});

describe('members and the owner', () => {
  it('lists members with the owner first', async () => {
    const res = await owner.browser.get(`/api/orgs/${orgId}/members`).expect(200);
    expect(res.body.members[0]).toEqual({ userId: owner.userId, name: 'Orla Owner', email: owner.email, role: 'owner', joinedAt: expect.any(String) });
  });

  it('lets an admin change roles and remove members, who then lose access', async () => {
    const admin = await join('admin');
    const editor = await join('editor');
    const changed = await admin.browser.patch(`/api/orgs/${orgId}/members/${editor.userId}`, { role: 'viewer' });
    expect(changed.status).toBe(200);
    expect(changed.body.member).toMatchObject({ userId: editor.userId, role: 'viewer' });
    expect((await editor.browser.get(`/api/orgs/${orgId}`)).body.role).toBe('viewer');

    await admin.browser.delete(`/api/orgs/${orgId}/members/${editor.userId}`).expect(204);
    const lost = await editor.browser.get(`/api/orgs/${orgId}`);
    expect(lost.status).toBe(404);
    expect(lost.body.code).toBe('not-found');
  });

  it('protects the owner from being demoted or removed, even by the owner', async () => {
    const admin = await join('admin');
    for (const b of [admin.browser, owner.browser]) {
      const demote = await b.patch(`/api/orgs/${orgId}/members/${owner.userId}`, { role: 'admin' });
      expect(demote.status).toBe(409);
      expect(demote.body.code).toBe('owner-protected');
      const remove = await b.delete(`/api/orgs/${orgId}/members/${owner.userId}`);
      expect(remove.status).toBe(409);
      expect(remove.body.code).toBe('owner-protected');
    }
  });

  it('never sets the owner role through a role change', async () => {
    const admin = await join('admin');
    const viewer = await join('viewer');
    const res = await admin.browser.patch(`/api/orgs/${orgId}/members/${viewer.userId}`, { role: 'owner' });
    expect(res.status).toBe(400);
    expect(res.body.code).toBe('validation-failed');
  });

  it('answers 404 for a member of another organization', async () => {
    const stranger = await signUpAndVerify(t, { organizationName: 'Elsewhere' });
    const res = await owner.browser.patch(`/api/orgs/${orgId}/members/${stranger.userId}`, { role: 'viewer' });
    expect(res.status).toBe(404);
  });

  it('records member changes in the activity log with who did them', async () => {
    const res = await owner.browser.get(`/api/orgs/${orgId}/activity?limit=200`).expect(200);
    const actions = new Set((res.body.events as Array<{ action: string }>).map((e) => e.action));
    for (const a of ['org.create', 'member.invite', 'member.join', 'member.role', 'member.remove', 'member.invite-revoke']) expect(actions).toContain(a);
    const invite = (res.body.events as Array<{ action: string; actor: unknown; detail: Record<string, unknown> }>).find((e) => e.action === 'member.invite')!;
    expect(invite.actor).toEqual({ name: 'Orla Owner', email: owner.email });
    expect(JSON.stringify(res.body)).not.toMatch(/token/i);
  });
});

describe('organizations', () => {
  it('creates another organization with the creator as owner, renames it and deletes it', async () => {
    const person = await signUpAndVerify(t);
    const created = await person.browser.post('/api/orgs', { name: 'Second Light Lab' });
    expect(created.status).toBe(201);
    const id = created.body.organization.id as string;
    expect((await person.browser.get(`/api/orgs/${id}`)).body.role).toBe('owner');
    const renamed = await person.browser.patch(`/api/orgs/${id}`, { name: 'Second Light Laboratory' });
    expect(renamed.body.organization.name).toBe('Second Light Laboratory');
    await person.browser.post(`/api/orgs/${id}/keys`, { kind: 'server', name: 'Doomed key' }).expect(201);
    await person.browser.post(`/api/orgs/${id}/satellites`, { name: 'Doomed satellite' }).expect(201);
    await person.browser.delete(`/api/orgs/${id}`).expect(204);
    expect((await person.browser.get(`/api/orgs/${id}`)).status).toBe(404);
    // Everything the organization held went with it.
    for (const model of ['Membership', 'ApiKey', 'Satellite', 'AuditEvent']) {
      expect([model, await t.context.sequelize.models[model]!.count({ where: { organizationId: id } })]).toEqual([model, 0]);
    }
    expect((await person.browser.session()).body.memberships.map((m: { organization: { id: string } }) => m.organization.id)).not.toContain(id);
  });

  it('transfers ownership: the new owner holds every owner right and the old owner becomes an admin', async () => {
    const founder = await signUpAndVerify(t, { organizationName: 'Handover Society' });
    const id = founder.orgId!;
    const heir = await signUpAndVerify(t);
    await founder.browser.post(`/api/orgs/${id}/invitations`, { email: heir.email, role: 'admin' }).expect(201);
    const { token } = await t.lastMailTo(heir.email);
    await heir.browser.post(`/api/invitations/${token}/accept`).expect(200);

    const outsider = await signUpAndVerify(t);
    expect((await founder.browser.post(`/api/orgs/${id}/transfer`, { userId: outsider.userId })).status).toBe(404);

    await founder.browser.post(`/api/orgs/${id}/transfer`, { userId: heir.userId }).expect(204);
    expect((await heir.browser.get(`/api/orgs/${id}`)).body.role).toBe('owner');
    expect((await founder.browser.get(`/api/orgs/${id}`)).body.role).toBe('admin');
    const refused = await founder.browser.delete(`/api/orgs/${id}`);
    expect(refused.status).toBe(403);
    expect(refused.body.code).toBe('forbidden');
    // The new owner is protected; the old one can now be removed.
    expect((await founder.browser.delete(`/api/orgs/${id}/members/${heir.userId}`)).body.code).toBe('owner-protected');
    await heir.browser.delete(`/api/orgs/${id}/members/${founder.userId}`).expect(204);
  });
});
