import { describe, expect, it } from 'vitest';
import { devFakesRefused, loadConfig, parseTrustProxy } from './config.ts';

const pg = 'postgres://nadirline@db.internal:5432/nadirline';

describe('configuration beyond one process', () => {
  it('reads TRUST_PROXY as express takes it: loopback by default, booleans, hop counts, lists', () => {
    expect(loadConfig({}).trustProxy).toEqual(['loopback']);
    expect(parseTrustProxy('true')).toBe(true);
    expect(parseTrustProxy('false')).toBe(false);
    expect(parseTrustProxy('2')).toBe(2);
    expect(parseTrustProxy(' 10.0.0.0/8, loopback ')).toEqual(['10.0.0.0/8', 'loopback']);
  });

  it('takes PostgreSQL and Redis URLs, pool and TLS settings, and refuses other URLs', () => {
    const c = loadConfig({ DATABASE_URL: pg, DATABASE_POOL_MAX: '20', DATABASE_SSL: 'require', REDIS_URL: 'redis://cache.internal:6379/2' });
    expect(c).toMatchObject({ DATABASE_POOL_MAX: 20, DATABASE_SSL: 'require', REDIS_URL: 'redis://cache.internal:6379/2', REDIS_KEY_PREFIX: 'nl:', MIGRATE_ON_START: true });
    expect(() => loadConfig({ DATABASE_URL: 'mysql://db/x' })).toThrow(/DATABASE_URL: use a postgres:\/\//);
    expect(() => loadConfig({ REDIS_URL: 'http://cache' })).toThrow(/REDIS_URL: use a redis:\/\//);
    expect(() => loadConfig({ DATABASE_POOL_MAX: '1' })).toThrow(/DATABASE_POOL_MAX/);
    expect(() => loadConfig({ DATABASE_SSL: 'maybe' })).toThrow(/DATABASE_SSL/);
  });

  it('refuses the fake SMTP server and the demo seed on a production database', () => {
    const prod = { NODE_ENV: 'production', SESSION_SECRET: 'a-production-secret-of-32-chars!', DATABASE_URL: pg };
    expect(() => loadConfig(prod)).toThrow(/SMTP_URL: required in production with DATABASE_URL/);
    expect(() => loadConfig({ ...prod, SMTP_URL: 'smtp://relay.internal:587', DEMO: 'true' })).toThrow(/DEMO: the demo seed does not run in production/);
    const ok = loadConfig({ ...prod, SMTP_URL: 'smtp://relay.internal:587' });
    expect(devFakesRefused(ok)).toMatch(/shared database/);
    // Development and tests on PostgreSQL keep the fakes; production on SQLite too.
    expect(devFakesRefused(loadConfig({ DATABASE_URL: pg }))).toBeNull();
    expect(devFakesRefused(loadConfig({ NODE_ENV: 'test', DATABASE_URL: pg }))).toBeNull();
    expect(devFakesRefused(loadConfig({ NODE_ENV: 'production', SESSION_SECRET: 'a-production-secret-of-32-chars!' }))).toBeNull();
  });
});
