import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PASSWORD, signUpAndVerify, startTestApp, uniqueEmail, type TestApp } from './console-api.harness.ts';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(async () => {
  await t.close();
});

describe('sign-up to verified sign-in through the development mailbox', () => {
  it('refuses sign-in until the address is confirmed, then signs in with a session cookie', async () => {
    const email = uniqueEmail('ada');
    const b = t.browser();
    const session = await b.session();
    expect(session.body).toMatchObject({ user: null, memberships: [] });
    expect(typeof session.body.csrfToken).toBe('string');

    const signup = await b.post('/api/auth/signup', { email, name: 'Ada Quill', password: PASSWORD, organizationName: 'Mirador Science Centre' });
    expect(signup.status).toBe(201);
    expect(signup.body.user).toMatchObject({ email, name: 'Ada Quill', emailVerified: false });
    expect(signup.body.user.passwordHash).toBeUndefined();

    const early = await b.signIn(email);
    expect(early.status).toBe(403);
    expect(early.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(early.body.code).toBe('email-not-verified');

    const messages = await t.mailbox();
    const mail = messages.filter((m) => m.to === email).at(-1)!;
    expect(mail.subject).toBe('Confirm your e-mail address for Nadirline');
    expect(mail.links[0]).toMatch(/^http:\/\/console\.test\/verify-email\?token=[A-Za-z0-9_-]{43}$/);
    const token = new URL(mail.links[0]!).searchParams.get('token')!;

    const verified = await b.post('/api/auth/verify-email', { token });
    expect(verified.status).toBe(200);
    expect(verified.body.user.emailVerified).toBe(true);

    const signin = await b.signIn(email);
    expect(signin.status).toBe(200);
    const cookie = String(signin.headers['set-cookie']);
    expect(cookie).toMatch(/nadir\.sid=/);
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
    expect(signin.body.memberships).toEqual([{ organization: { id: expect.any(String), name: 'Mirador Science Centre', plan: 'starter' }, role: 'owner' }]);
    expect(signin.body.csrfToken).not.toBe(session.body.csrfToken);

    const after = await b.session();
    expect(after.body.user).toMatchObject({ email, emailVerified: true });
  });

  it('refuses a confirmation link the second time it is used', async () => {
    const email = uniqueEmail('twice');
    const b = t.browser();
    await b.post('/api/auth/signup', { email, name: 'Twice', password: PASSWORD }).expect(201);
    const { token } = await t.lastMailTo(email);
    await b.post('/api/auth/verify-email', { token }).expect(200);
    const again = await b.post('/api/auth/verify-email', { token });
    expect(again.status).toBe(400);
    expect(again.body).toMatchObject({ code: 'invalid-token', reason: 'used' });
  });

  it('sends a new confirmation link on request and retires the older one', async () => {
    const email = uniqueEmail('resend');
    const b = t.browser();
    await b.post('/api/auth/signup', { email, name: 'Resend', password: PASSWORD }).expect(201);
    const first = await t.lastMailTo(email);
    await b.post('/api/auth/resend-verification', { email }).expect(202);
    const second = await t.lastMailTo(email);
    expect(second.token).not.toBe(first.token);
    expect((await b.post('/api/auth/verify-email', { token: first.token })).body.code).toBe('invalid-token');
    await b.post('/api/auth/verify-email', { token: second.token }).expect(200);
  });

  it('answers 202 to a resend or reset request for an unknown address and sends nothing', async () => {
    const before = (await t.mailbox()).length;
    const b = t.browser();
    await b.post('/api/auth/resend-verification', { email: 'nobody-here@example.test' }).expect(202);
    await b.post('/api/auth/forgot-password', { email: 'nobody-here@example.test' }).expect(202);
    expect((await t.mailbox()).length).toBe(before);
  });

  it('makes no second account with the same address, whatever its case, and answers as for a new one', async () => {
    const email = uniqueEmail('dup');
    const b = t.browser();
    const first = await b.post('/api/auth/signup', { email, name: 'One', password: PASSWORD }).expect(201);
    const dup = await t.browser().post('/api/auth/signup', { email: email.toUpperCase(), name: 'Two', password: PASSWORD }).expect(201);
    expect(Object.keys(dup.body.user).sort()).toEqual(Object.keys(first.body.user).sort());
    expect(dup.body.user).toMatchObject({ email, name: 'Two', emailVerified: false });
    expect(dup.body.user.id).not.toBe(first.body.user.id);
    const { message } = await t.lastMailTo(email);
    expect(message.subject).toMatch(/tried to make a new Nadirline account/);
    expect(message.text).toContain('Hello One');
  });

  it('explains which fields are wrong in a sign-up', async () => {
    const res = await t.browser().post('/api/auth/signup', { email: 'not-an-address', name: '', password: 'short' });
    expect(res.status).toBe(400);
    expect(res.body.code).toBe('validation-failed');
    const fields = (res.body.errors as Array<{ field: string }>).map((e) => e.field).sort();
    expect(fields).toEqual(['email', 'name', 'password']);
  });

  it('says the same thing for a wrong password and for an unknown address', async () => {
    const person = await signUpAndVerify(t);
    const wrong = await t.browser().signIn(person.email, 'not the password at all');
    const unknown = await t.browser().signIn('nobody-at-all@example.test', 'not the password at all');
    expect(wrong.status).toBe(401);
    expect(unknown.status).toBe(401);
    expect(wrong.body.code).toBe('invalid-credentials');
    expect(unknown.body.detail).toBe(wrong.body.detail);
  });

  it('signs out: the session no longer knows the user and writes are refused', async () => {
    const person = await signUpAndVerify(t);
    const b = person.browser;
    await b.post('/api/auth/signout').expect(204);
    const session = await b.session();
    expect(session.body.user).toBeNull();
    const res = await b.patch('/api/me', { name: 'Ghost' });
    expect(res.status).toBe(401);
    expect(res.body.code).toBe('unauthenticated');
  });

  it('changes the name, and the password only with the current one', async () => {
    const person = await signUpAndVerify(t);
    const b = person.browser;
    const renamed = await b.patch('/api/me', { name: 'Renamed Person' });
    expect(renamed.status).toBe(200);
    expect(renamed.body.user.name).toBe('Renamed Person');

    const refused = await b.patch('/api/me', { password: 'a brand new password', currentPassword: 'wrong guess here' });
    expect(refused.status).toBe(400);
    expect(refused.body.errors[0].field).toBe('currentPassword');

    await b.patch('/api/me', { password: 'a brand new password', currentPassword: PASSWORD }).expect(200);
    // The same browser stays signed in; the old password no longer works.
    expect((await b.session()).body.user.email).toBe(person.email);
    expect((await t.browser().signIn(person.email)).status).toBe(401);
    expect((await t.browser().signIn(person.email, 'a brand new password')).status).toBe(200);
  });
});

describe('password reset', () => {
  it('resets the password with the mailed one-time link and signs out other sessions', async () => {
    const person = await signUpAndVerify(t);
    const other = t.browser();
    await other.post('/api/auth/forgot-password', { email: person.email }).expect(202);
    const { message, link, token } = await t.lastMailTo(person.email);
    expect(message.subject).toBe('Choose a new Nadirline password');
    expect(link).toMatch(/^http:\/\/console\.test\/reset-password\?token=/);

    const tooShort = await other.post('/api/auth/reset-password', { token, password: 'short' });
    expect(tooShort.body.code).toBe('validation-failed');

    await other.post('/api/auth/reset-password', { token, password: 'fresh password 2' }).expect(204);
    const reused = await other.post('/api/auth/reset-password', { token, password: 'fresh password 3' });
    expect(reused.status).toBe(400);
    expect(reused.body).toMatchObject({ code: 'invalid-token', reason: 'used' });

    // The browser that was signed in before the reset is signed out.
    expect((await person.browser.session()).body.user).toBeNull();
    expect((await t.browser().signIn(person.email)).status).toBe(401);
    expect((await t.browser().signIn(person.email, 'fresh password 2')).status).toBe(200);
  });

  it('refuses an expired reset link', async () => {
    const person = await signUpAndVerify(t);
    await t.browser().post('/api/auth/forgot-password', { email: person.email }).expect(202);
    const { token } = await t.lastMailTo(person.email);
    // Age every reset token of this user past its hour.
    await t.context.sequelize.models['EmailToken']!.update(
      { expiresAt: new Date(Date.now() - 1000) },
      { where: { userId: person.userId, purpose: 'reset-password' } },
    );
    const res = await t.browser().post('/api/auth/reset-password', { token, password: 'fresh password 4' });
    expect(res.status).toBe(400);
    expect(res.body).toMatchObject({ code: 'invalid-token', reason: 'expired' });
  });
});

describe('sign-in throttling', () => {
  it('answers 429 too-many-attempts with Retry-After after five failures for one address, even with the right password', async () => {
    const person = await signUpAndVerify(t);
    const b = t.browser();
    for (let i = 0; i < 5; i++) expect((await b.signIn(person.email, `wrong password ${i}`)).status).toBe(401);
    const blocked = await b.signIn(person.email);
    expect(blocked.status).toBe(429);
    expect(blocked.body.code).toBe('too-many-attempts');
    const retryAfter = Number(blocked.headers['retry-after']);
    expect(retryAfter).toBeGreaterThan(0);
    expect(retryAfter).toBeLessThanOrEqual(15 * 60);
    // Another address from the same client is not affected.
    const other = await signUpAndVerify(t);
    expect((await t.browser().signIn(other.email)).status).toBe(200);
  });

  it('forgets earlier failures after a successful sign-in', async () => {
    const person = await signUpAndVerify(t);
    const b = t.browser();
    for (let i = 0; i < 4; i++) await b.signIn(person.email, `wrong password ${i}`);
    expect((await b.signIn(person.email)).status).toBe(200);
    for (let i = 0; i < 4; i++) expect((await b.signIn(person.email, `wrong again ${i}`)).status).toBe(401);
    expect((await b.signIn(person.email)).status).toBe(200);
  });
});

describe('CSRF protection', () => {
  it('refuses a write without the X-CSRF-Token header', async () => {
    const person = await signUpAndVerify(t);
    const res = await person.browser.agent.patch('/api/me').send({ name: 'No token' });
    expect(res.status).toBe(403);
    expect(res.body.code).toBe('csrf-failed');
  });

  it('refuses a write with a token from another session', async () => {
    const person = await signUpAndVerify(t);
    const stranger = t.browser();
    await stranger.session();
    const res = await person.browser.agent.patch('/api/me').set('X-CSRF-Token', stranger.csrf).send({ name: 'Forged' });
    expect(res.status).toBe(403);
    expect(res.body.code).toBe('csrf-failed');
  });

  it('refuses the pre-sign-in token after sign-in (a new one is issued)', async () => {
    const email = uniqueEmail('rotate');
    const b = t.browser();
    await b.post('/api/auth/signup', { email, name: 'Rotate', password: PASSWORD }).expect(201);
    await b.post('/api/auth/verify-email', { token: (await t.lastMailTo(email)).token }).expect(200);
    const before = b.csrf;
    await b.signIn(email);
    const res = await b.agent.patch('/api/me').set('X-CSRF-Token', before).send({ name: 'Old token' });
    expect(res.body.code).toBe('csrf-failed');
    await b.patch('/api/me', { name: 'New token' }).expect(200);
  });

  it('refuses sign-in itself without a token (no login CSRF)', async () => {
    const res = await t.browser().agent.post('/api/auth/signin').send({ email: 'x@example.test', password: PASSWORD });
    expect(res.status).toBe(403);
    expect(res.body.code).toBe('csrf-failed');
  });
});

describe('headers and the mailbox page', () => {
  it('sends security headers and no-store on /api answers', async () => {
    const res = await t.browser().get('/api/session');
    expect(res.headers['content-security-policy']).toContain("default-src 'none'");
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['x-frame-options']).toBe('DENY');
    expect(res.headers['cache-control']).toBe('no-store');
  });

  it('lists kept messages on the development mailbox page', async () => {
    const email = uniqueEmail('page');
    await t.browser().post('/api/auth/signup', { email, name: 'Page <b>Reader</b>', password: PASSWORD }).expect(201);
    const res = await t.browser('127.0.0.1').get('/dev/mailbox').expect(200);
    expect(res.headers['content-type']).toMatch(/^text\/html/);
    expect(res.text).toContain(email);
    expect(res.text).toContain('Page &lt;b&gt;Reader&lt;/b&gt;');
    expect(res.headers['content-security-policy']).toContain("script-src 'self'");
  });
});

describe('in production', () => {
  it('has no development mailbox, starts no fake SMTP server and sets a Secure session cookie behind HTTPS', async () => {
    const prod = await startTestApp({ NODE_ENV: 'production', SESSION_SECRET: 'a-long-enough-production-secret', SMTP_URL: 'smtp://127.0.0.1:9' });
    try {
      expect(prod.context.services.mail?.mailbox).toBeNull();
      const res = await prod.browser().get('/dev/mailbox.json');
      expect(res.status).toBe(404);
      const session = await prod.browser().agent.get('/api/session').set('X-Forwarded-Proto', 'https');
      // Not signed in: no session is stored; the CSRF cookie is Secure.
      expect(String(session.headers['set-cookie'])).toMatch(/nadir\.csrf=.*; Secure/i);
      expect(String(session.headers['set-cookie'])).not.toMatch(/nadir\.sid=/);
      expect(session.headers['strict-transport-security']).toMatch(/max-age=\d+/);
    } finally {
      await prod.close();
    }
  });
});
