/**
 * Passwords: the commonest and trivial ones are refused (zxcvbn-ts with its common and English
 * dictionaries), so are ones made of the person's own address or name, and ones longer than the
 * 72 bytes bcrypt reads, at sign-up, password reset and password change; each refusal names the
 * password field with a sentence the console shows beside it.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signUpAndVerify, startTestApp, uniqueEmail, type TestApp } from './console-api.harness.ts';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(async () => {
  await t.close();
});

function expectPasswordRefused(res: { status: number; body: { code?: string; errors?: Array<{ field?: string; message: string }> } }, pattern: RegExp): void {
  expect(res.status, JSON.stringify(res.body)).toBe(400);
  expect(res.body.code).toBe('validation-failed');
  const e = res.body.errors?.find((x) => x.field === 'password');
  expect(e?.message).toMatch(pattern);
}

describe('sign-up passwords', () => {
  it.each(['password123', 'Password1234', 'qwertyuiop', '1234567890', 'aaaaaaaaaaaa', 'iloveyou12'])('refuses %s as too easy to guess', async (password) => {
    const res = await t.browser().post('/api/auth/signup', { email: uniqueEmail('weak'), name: 'Wen Weak', password });
    expectPasswordRefused(res, /too easy to guess/);
  });

  it('refuses a password made of the person\u2019s own address and name', async () => {
    const email = `tamsin.orrel-${Date.now().toString(36)}@example.test`;
    const res = await t.browser().post('/api/auth/signup', { email, name: 'Tamsin Orrel', password: 'tamsinorrel' });
    expectPasswordRefused(res, /too easy to guess/);
  });

  it('refuses more than 72 bytes, counting bytes not characters, so no part of a password is ignored', async () => {
    const long = await t.browser().post('/api/auth/signup', { email: uniqueEmail('long'), name: 'Lon', password: 'a7#Kq'.repeat(15) });
    expectPasswordRefused(long, /at most 72 bytes/);
    // 25 characters, 75 bytes.
    const wide = await t.browser().post('/api/auth/signup', { email: uniqueEmail('wide'), name: 'Wid', password: '\u00e9\u00f8\u00e5\u00df\u00fc'.repeat(5) + '\u4e2d'.repeat(8) });
    expectPasswordRefused(wide, /at most 72 bytes/);
    // Exactly 72 bytes is fine.
    await t.browser().post('/api/auth/signup', { email: uniqueEmail('edge'), name: 'Edge', password: 'Vq3!rTz8#Lm2' + 'x7Kp'.repeat(15) }).expect(201);
  });

  it('accepts an unusual passphrase', async () => {
    await t.browser().post('/api/auth/signup', { email: uniqueEmail('good'), name: 'Gus Good', password: 'lantern orbit pickle' }).expect(201);
  });
});

describe('password reset and change', () => {
  it('refuse a guessable new password and keep the old one', async () => {
    const person = await signUpAndVerify(t);
    await t.browser().post('/api/auth/forgot-password', { email: person.email }).expect(202);
    const { token } = await t.lastMailTo(person.email);
    expectPasswordRefused(await t.browser().post('/api/auth/reset-password', { token, password: 'password1234' }), /too easy to guess/);
    expectPasswordRefused(await person.browser.patch('/api/me', { password: 'qwerty123456', currentPassword: 'correct horse battery' }), /too easy to guess/);
    expectPasswordRefused(await person.browser.patch('/api/me', { password: 'Zr8#'.repeat(19), currentPassword: 'correct horse battery' }), /at most 72 bytes/);
    expect((await t.browser().signIn(person.email)).status).toBe(200);
    // The reset link still works for a good password.
    await t.browser().post('/api/auth/reset-password', { token, password: 'velvet quarry meridian' }).expect(204);
  });
});
