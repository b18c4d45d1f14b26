/**
 * Secrets stay out of the database and the logs: session ids are stored hashed, visitors who are
 * not signed in get no session row at all, and invitation links are redacted in request logs and
 * problem answers.
 */
import crypto from 'node:crypto';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { redactUrl } from '@nadirline/server/app';
import { problemInstance } from '@nadirline/server/http/problem.ts';
import { SESSION_MODEL } from '@nadirline/server/http/session.ts';
import { signUpAndVerify, startTestApp, type TestApp } from './console-api.harness.ts';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(async () => {
  await t.close();
});

const sessionRows = async () => (await t.context.sequelize.models[SESSION_MODEL]!.findAll({ attributes: ['sid', 'data'], raw: true })) as unknown as Array<{ sid: string; data: string }>;

/** The session id inside a signed `nadir.sid=s:<id>.<signature>` cookie. */
function sidOf(setCookie: unknown): string {
  const m = /nadir\.sid=([^;]+)/.exec(String(setCookie));
  const value = decodeURIComponent(m?.[1] ?? '');
  return value.slice(2, value.lastIndexOf('.'));
}

function signedCookie(sid: string, secret: string): string {
  const sig = crypto.createHmac('sha256', secret).update(sid).digest('base64').replace(/=+$/, '');
  return `nadir.sid=${encodeURIComponent(`s:${sid}.${sig}`)}`;
}

describe('sessions in the database', () => {
  it('stores nothing for visitors who are not signed in, and their CSRF token still works', async () => {
    const before = (await sessionRows()).length;
    const b = t.browser();
    await b.session();
    await b.session();
    await request(t.app).get('/api/session').expect(200);
    const failed = await b.signIn('nobody-here@example.test', 'not the password at all');
    expect(failed.status).toBe(401);
    await b.post('/api/auth/forgot-password', { email: 'nobody-here@example.test' }).expect(202);
    expect((await sessionRows()).length).toBe(before);
  });

  it('keys each signed-in session by a hash of its id, so a database reader cannot use a stored row', async () => {
    const person = await signUpAndVerify(t, { organizationName: 'Hashfield Centre' });
    const signin = await person.browser.signIn(person.email);
    const sid = sidOf(signin.headers['set-cookie']);
    expect(sid.length).toBeGreaterThan(20);
    const rows = await sessionRows();
    const mine = rows.filter((r) => JSON.parse(r.data).userId === person.userId);
    expect(mine.length).toBeGreaterThan(0);
    for (const r of rows) expect(r.sid).not.toBe(sid);
    // Even with the cookie secret, a stored key presented as a session id is nobody.
    for (const r of mine) {
      const res = await request(t.app).get('/api/session').set('Cookie', signedCookie(r.sid, t.context.config.sessionSecret)).expect(200);
      expect(res.body.user).toBeNull();
    }
    // The real cookie still works, and signing out removes its row.
    const me = await person.browser.session();
    expect(me.body.user.id).toBe(person.userId);
    await person.browser.post('/api/auth/signout').expect(204);
    const left = (await sessionRows()).filter((r) => JSON.parse(r.data).userId === person.userId);
    expect(left.length).toBe(mine.length - 1);
  });
});

describe('tokens in logs and answers', () => {
  it('redacts invitation links, their API paths and key or token parameters', () => {
    expect(redactUrl('/invite/AbCdEf0123456789_-xyz')).toBe('/invite/[hidden]');
    expect(redactUrl('/invite/AbCdEf0123456789?from=mail')).toBe('/invite/[hidden]?from=mail');
    expect(redactUrl('/api/invitations/AbCdEf0123456789/accept')).toBe('/api/invitations/[hidden]/accept');
    expect(redactUrl('/v1/satellites?key=nlb_secret&x=1')).toBe('/v1/satellites?key=[hidden]&x=1');
    expect(redactUrl('/verify-email?token=abc')).toBe('/verify-email?token=[hidden]');
    expect(problemInstance('/invite/AbCdEf0123456789')).toBe('/invite/[hidden]');
  });

  it('answers an unknown invitation path without echoing its token', async () => {
    const token = 'Zx9'.repeat(14);
    const res = await request(t.app).get(`/api/invitations/${token}`);
    expect(JSON.stringify(res.body)).not.toContain(token);
  });
});
