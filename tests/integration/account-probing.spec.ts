/**
 * Nobody can learn who has an account, or hammer the account routes: sign-up for a taken address
 * answers as for a new one (and tells the owner), password-reset and verification requests answer
 * before any lookup or e-mail, and sign-ups, e-mail requests, invitations and failed sign-ins are
 * throttled per client and per target address (failed sign-ins per account across clients).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { User } from '@nadirline/server/models/index.ts';
import {
  INVITATIONS_PER_ADDRESS_PER_HOUR,
  INVITATIONS_PER_CLIENT_PER_HOUR,
} from '@nadirline/server/routes/api/orgs.ts';
import {
  MAIL_REQUESTS_PER_ADDRESS,
  MAIL_REQUESTS_PER_CLIENT,
  SIGNIN_ACCOUNT_MAX_FAILURES,
  SIGNUPS_PER_ADDRESS_PER_HOUR,
  SIGNUPS_PER_CLIENT_PER_HOUR,
} from '@nadirline/server/routes/api/account.ts';
import { PASSWORD, signUpAndVerify, startTestApp, uniqueEmail, type TestApp } from './console-api.harness.ts';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(async () => {
  await t.close();
});

/** Messages kept by the fake SMTP server right now, without waiting for work after answers. */
const keptNow = () => t.context.services.mail?.mailbox?.messages.length ?? 0;

describe('sign-up for an address that has an account', () => {
  it('answers exactly as for a new address, creates nothing and e-mails the owner instead', async () => {
    const owner = await signUpAndVerify(t, { organizationName: 'Probe Hall' });
    const users = await User.count();
    const fresh = await t.browser().post('/api/auth/signup', { email: uniqueEmail('fresh'), name: 'Fresh', password: PASSWORD }).expect(201);
    const taken = await t.browser().post('/api/auth/signup', { email: owner.email, name: 'Someone Else', password: PASSWORD, organizationName: 'Other' }).expect(201);
    expect(taken.headers['content-type']).toBe(fresh.headers['content-type']);
    expect(Object.keys(taken.body)).toEqual(Object.keys(fresh.body));
    expect(Object.keys(taken.body.user)).toEqual(Object.keys(fresh.body.user));
    expect(taken.body.user).toMatchObject({ email: owner.email, name: 'Someone Else', emailVerified: false });
    expect(await User.count()).toBe(users + 1);
    const { message } = await t.lastMailTo(owner.email);
    expect(message.subject).toMatch(/tried to make a new Nadirline account/);
    expect(message.links.some((l) => l.endsWith('/forgot-password'))).toBe(true);
    // The owner's account and password are untouched.
    expect((await owner.browser.signIn(owner.email)).status).toBe(200);
  });
});

describe('password reset and verification requests', () => {
  it('answer before looking the address up or sending anything, so known and unknown addresses look the same', async () => {
    const known = await signUpAndVerify(t);
    for (const path of ['/api/auth/forgot-password', '/api/auth/resend-verification']) {
      for (const email of [known.email, uniqueEmail('unknown')]) {
        const before = keptNow();
        const res = await t.browser().post(path, { email });
        expect(res.status).toBe(202);
        expect(res.text).toBe('');
        // Nothing was sent yet when the answer came.
        expect(keptNow()).toBe(before);
      }
    }
    // ... and the reset link does arrive afterwards.
    const { message } = await t.lastMailTo(known.email);
    expect(message.subject).toBe('Choose a new Nadirline password');
  });
});

describe('throttles', () => {
  it('limit sign-ups per target address (from any client) and per client (for any address)', async () => {
    const email = uniqueEmail('target');
    for (let i = 0; i < SIGNUPS_PER_ADDRESS_PER_HOUR; i++) await t.browser().post('/api/auth/signup', { email, name: `Try ${i}`, password: PASSWORD }).expect(201);
    const over = await t.browser().post('/api/auth/signup', { email, name: 'One more', password: PASSWORD });
    expect(over.status).toBe(429);
    expect(over.body.code).toBe('too-many-attempts');
    expect(Number(over.headers['retry-after'])).toBeGreaterThan(0);

    const b = t.browser();
    for (let i = 0; i < SIGNUPS_PER_CLIENT_PER_HOUR; i++) await b.post('/api/auth/signup', { email: uniqueEmail('many'), name: 'Many', password: PASSWORD }).expect(201);
    expect((await b.post('/api/auth/signup', { email: uniqueEmail('many'), name: 'Many', password: PASSWORD })).status).toBe(429);
    // Another client is not held up by that one.
    await t.browser().post('/api/auth/signup', { email: uniqueEmail('other'), name: 'Other', password: PASSWORD }).expect(201);
  });

  it('limit e-mail requests per target address and per client', async () => {
    const email = uniqueEmail('mailtarget');
    for (let i = 0; i < MAIL_REQUESTS_PER_ADDRESS; i++) await t.browser().post('/api/auth/forgot-password', { email }).expect(202);
    expect((await t.browser().post('/api/auth/resend-verification', { email })).status).toBe(429);

    const b = t.browser();
    for (let i = 0; i < MAIL_REQUESTS_PER_CLIENT; i++) await b.post('/api/auth/forgot-password', { email: uniqueEmail('spray') }).expect(202);
    const over = await b.post('/api/auth/forgot-password', { email: uniqueEmail('spray') });
    expect(over.status).toBe(429);
    expect(over.body.code).toBe('too-many-attempts');
  });

  it('limit invitations per target address and per client', async () => {
    const owner = await signUpAndVerify(t, { organizationName: 'Invite Works' });
    const other = await signUpAndVerify(t, { organizationName: 'Invite Elsewhere' });
    const target = uniqueEmail('invitee');
    for (let i = 0; i < INVITATIONS_PER_ADDRESS_PER_HOUR; i++) {
      const who = i % 2 === 0 ? owner : other;
      await who.browser.post(`/api/orgs/${who.orgId}/invitations`, { email: target, role: 'viewer' }).expect(201);
    }
    expect((await other.browser.post(`/api/orgs/${other.orgId}/invitations`, { email: target, role: 'viewer' })).status).toBe(429);
    // The owner's browser sent every other one of those already.
    const already = Math.ceil(INVITATIONS_PER_ADDRESS_PER_HOUR / 2);
    for (let i = already; i < INVITATIONS_PER_CLIENT_PER_HOUR; i++) {
      const res = await owner.browser.post(`/api/orgs/${owner.orgId}/invitations`, { email: uniqueEmail('crowd'), role: 'viewer' });
      expect(res.status).toBe(201);
    }
    expect((await owner.browser.post(`/api/orgs/${owner.orgId}/invitations`, { email: uniqueEmail('crowd'), role: 'viewer' })).status).toBe(429);
  });

  it('stop sign-in to an account after too many failures from many client addresses together', async () => {
    const person = await signUpAndVerify(t);
    for (let i = 0; i < SIGNIN_ACCOUNT_MAX_FAILURES; i++) {
      const res = await t.browser().signIn(person.email, `wrong password number ${i}`);
      expect(res.status).toBe(401);
    }
    // Even the right password, from yet another address, waits now.
    const locked = await t.browser().signIn(person.email);
    expect(locked.status).toBe(429);
    expect(locked.body.code).toBe('too-many-attempts');
    // The same holds for an address without an account: the answer tells nothing.
    const ghost = uniqueEmail('ghost');
    for (let i = 0; i < SIGNIN_ACCOUNT_MAX_FAILURES; i++) expect((await t.browser().signIn(ghost, `guess ${i} of many`)).status).toBe(401);
    expect((await t.browser().signIn(ghost, 'guess again and again')).status).toBe(429);
  });
});
