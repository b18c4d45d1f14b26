import pino from 'pino';
import { Sequelize } from 'sequelize';
import { afterEach, describe, expect, it } from 'vitest';
import { loadConfig } from '../config.ts';
import type { AppContext } from '../context.ts';
import { SESSION_MODEL, createSessionMiddleware, destroyUserSessions, storedSid } from './session.ts';

const closers: Array<() => Promise<void> | void> = [];
afterEach(async () => {
  for (const fn of closers.splice(0).reverse()) await fn();
});

async function context(): Promise<AppContext> {
  const sequelize = new Sequelize('sqlite::memory:', { logging: false });
  closers.push(() => sequelize.close());
  const ctx: AppContext = { config: loadConfig({ NODE_ENV: 'test' }), sequelize, logger: pino({ level: 'silent' }), onClose: (fn) => closers.push(fn), services: {} };
  createSessionMiddleware(ctx);
  // A scratch in-memory table for this test only (the real one comes from migration 0001).
  await sequelize.models[SESSION_MODEL]!.sync();
  return ctx;
}

describe('signing a user out everywhere', () => {
  it('removes exactly that user’s sessions, even when the id holds a LIKE wildcard, and keeps the one excepted', async () => {
    const ctx = await context();
    const Session = ctx.sequelize.models[SESSION_MODEL]!;
    const data = (userId: string) => JSON.stringify({ cookie: { path: '/' }, csrfToken: 'x', userId });
    await Session.bulkCreate([
      { sid: storedSid('a'), data: data('ab_c'), expires: new Date(Date.now() + 60_000) },
      { sid: storedSid('b'), data: data('abXc'), expires: new Date(Date.now() + 60_000) },
      { sid: storedSid('c'), data: data('ab_c'), expires: new Date(Date.now() + 60_000) },
      { sid: storedSid('d'), data: JSON.stringify({ cookie: {} }), expires: new Date(Date.now() + 60_000) },
    ]);
    expect(await destroyUserSessions(ctx, 'ab_c', 'c')).toBe(1);
    const left = (await Session.findAll({ attributes: ['sid'], order: [['sid', 'ASC']] })).map((s) => s.get('sid'));
    expect(left.sort()).toEqual([storedSid('b'), storedSid('c'), storedSid('d')].sort());
  });
});
