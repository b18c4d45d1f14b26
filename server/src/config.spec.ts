import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { loadConfig, noteListening, SESSION_SECRET_FILE } from './config.ts';

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
