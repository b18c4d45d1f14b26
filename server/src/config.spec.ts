import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { devFakesRefused, loadConfig, noteListening, parseTrustProxy, SESSION_SECRET_FILE } from './config.ts';

const dirs: string[] = [];
function tempDir(): string {
  const d = fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-config-'));
  dirs.push(d);
  return d;
}
afterEach(() => {
  for (const d of dirs.splice(0)) fs.rmSync(d, { recursive: true, force: true });
});
const fileIn = (dir: string) => ({ SQLITE_FILE: path.join(dir, 'nadirline.sqlite') });

describe('configuration defaults', () => {
  it('listens on loopback only unless HOST says otherwise', () => {
    expect(loadConfig(fileIn(tempDir())).HOST).toBe('127.0.0.1');
    expect(loadConfig({ ...fileIn(tempDir()), HOST: '0.0.0.0' }).HOST).toBe('0.0.0.0');
  });

  it('treats an empty variable as unset', () => {
    const c = loadConfig({ ...fileIn(tempDir()), NODE_ENV: '', PORT: '', HOST: '', PUBLIC_URL: '', SESSION_SECRET: '', DEMO: ' ' });
    expect(c.NODE_ENV).toBe('development');
    expect(c.PORT).toBe(8080);
    expect(c.HOST).toBe('127.0.0.1');
    expect(c.publicUrl).toBe('http://localhost:8080');
    expect(c.demo).toBe(true);
    expect(c.sessionSecret.length).toBeGreaterThanOrEqual(32);
  });

  it('makes a random session secret per data directory, keeps it in a file only its owner reads, and reuses it', () => {
    const a = tempDir();
    const b = tempDir();
    const first = loadConfig(fileIn(a)).sessionSecret;
    expect(first).toMatch(/^[A-Za-z0-9_-]{43}$/);
    expect(loadConfig(fileIn(a)).sessionSecret).toBe(first);
    expect(loadConfig(fileIn(b)).sessionSecret).not.toBe(first);
    const file = path.join(a, SESSION_SECRET_FILE);
    expect(fs.readFileSync(file, 'utf8').trim()).toBe(first);
    expect(fs.statSync(file).mode & 0o077).toBe(0);
    // A configured secret wins and writes nothing.
    const c = tempDir();
    expect(loadConfig({ ...fileIn(c), SESSION_SECRET: 'configured secret of enough length' }).sessionSecret).toBe('configured secret of enough length');
    expect(fs.existsSync(path.join(c, SESSION_SECRET_FILE))).toBe(false);
  });

  it('still demands SESSION_SECRET in production', () => {
    expect(() => loadConfig({ ...fileIn(tempDir()), NODE_ENV: 'production' })).toThrow(/SESSION_SECRET/);
  });

  it('refuses the test clock in production and takes it elsewhere', () => {
    const prod = { ...fileIn(tempDir()), NODE_ENV: 'production', SESSION_SECRET: 'a-production-secret-of-32-chars!' };
    expect(() => loadConfig({ ...prod, TEST_CLOCK_FILE: '/tmp/clock' })).toThrow(/TEST_CLOCK_FILE: the test clock never runs in production/);
    expect(loadConfig(prod).TEST_CLOCK_FILE).toBeUndefined();
    expect(loadConfig({ ...fileIn(tempDir()), NODE_ENV: 'development', TEST_CLOCK_FILE: '/tmp/clock' }).TEST_CLOCK_FILE).toBe('/tmp/clock');
  });
});

describe('own origins', () => {
  it('are PUBLIC_URL plus, outside production, the loopback origins of the listening port', () => {
    const c = loadConfig({ ...fileIn(tempDir()), PORT: '0', PUBLIC_URL: 'https://Track.Example.org/base/' });
    expect(c.selfOrigins).toEqual(['https://track.example.org']);
    noteListening(c, 43123);
    expect(c.publicUrl).toBe('https://Track.Example.org/base');
    expect(c.selfOrigins.sort()).toEqual(['http://127.0.0.1:43123', 'http://[::1]:43123', 'http://localhost:43123', 'https://track.example.org']);
  });

  it('without PUBLIC_URL become http://localhost:<port> once the port is known', () => {
    const c = loadConfig({ ...fileIn(tempDir()), PORT: '0', HOST: 'nadir.lan' });
    expect(c.selfOrigins).toEqual([]);
    noteListening(c, 5000);
    expect(c.publicUrl).toBe('http://localhost:5000');
    expect(c.selfOrigins).toContain('http://nadir.lan:5000');
  });

  it('in production are PUBLIC_URL only', () => {
    const c = loadConfig({ ...fileIn(tempDir()), NODE_ENV: 'production', SESSION_SECRET: 'configured secret of enough length', PUBLIC_URL: 'https://track.example.org' });
    noteListening(c, 8080);
    expect(c.selfOrigins).toEqual(['https://track.example.org']);
  });
});

const pg = 'postgres://nadirline@db.internal:5432/nadirline';

describe('configuration beyond one process', () => {
  it('reads TRUST_PROXY as express takes it: loopback by default, booleans, hop counts, lists', () => {
    expect(loadConfig(fileIn(tempDir())).trustProxy).toEqual(['loopback']);
    expect(parseTrustProxy('true')).toBe(true);
    expect(parseTrustProxy('false')).toBe(false);
    expect(parseTrustProxy('2')).toBe(2);
    expect(parseTrustProxy(' 10.0.0.0/8, loopback ')).toEqual(['10.0.0.0/8', 'loopback']);
  });

  it('takes PostgreSQL and Redis URLs, pool and TLS settings, and refuses other URLs', () => {
    const c = loadConfig({ ...fileIn(tempDir()), DATABASE_URL: pg, DATABASE_POOL_MAX: '20', DATABASE_SSL: 'require', REDIS_URL: 'redis://cache.internal:6379/2' });
    expect(c).toMatchObject({ DATABASE_POOL_MAX: 20, DATABASE_SSL: 'require', REDIS_URL: 'redis://cache.internal:6379/2', REDIS_KEY_PREFIX: 'nl:', MIGRATE_ON_START: true });
    expect(() => loadConfig({ ...fileIn(tempDir()), DATABASE_URL: 'mysql://db/x' })).toThrow(/DATABASE_URL: use a postgres:\/\//);
    expect(() => loadConfig({ ...fileIn(tempDir()), REDIS_URL: 'http://cache' })).toThrow(/REDIS_URL: use a redis:\/\//);
    expect(() => loadConfig({ ...fileIn(tempDir()), DATABASE_POOL_MAX: '1' })).toThrow(/DATABASE_POOL_MAX/);
    expect(() => loadConfig({ ...fileIn(tempDir()), DATABASE_SSL: 'maybe' })).toThrow(/DATABASE_SSL/);
  });

  it('refuses the fake SMTP server and the demo seed on a production database', () => {
    const prod = { NODE_ENV: 'production', SESSION_SECRET: 'a-production-secret-of-32-chars!', DATABASE_URL: pg };
    expect(() => loadConfig({ ...fileIn(tempDir()), ...prod })).toThrow(/SMTP_URL: required in production with DATABASE_URL/);
    expect(() => loadConfig({ ...fileIn(tempDir()), ...prod, SMTP_URL: 'smtp://relay.internal:587', DEMO: 'true' })).toThrow(/DEMO: the demo seed does not run in production/);
    const ok = loadConfig({ ...fileIn(tempDir()), ...prod, SMTP_URL: 'smtp://relay.internal:587' });
    expect(devFakesRefused(ok)).toMatch(/shared database/);
    // Development and tests on PostgreSQL keep the fakes; production on SQLite too.
    expect(devFakesRefused(loadConfig({ ...fileIn(tempDir()), DATABASE_URL: pg }))).toBeNull();
    expect(devFakesRefused(loadConfig({ ...fileIn(tempDir()), NODE_ENV: 'test', DATABASE_URL: pg }))).toBeNull();
    expect(devFakesRefused(loadConfig({ ...fileIn(tempDir()), NODE_ENV: 'production', SESSION_SECRET: 'a-production-secret-of-32-chars!' }))).toBeNull();
  });
});
