/**
 * What the app serves besides the APIs: the widget build, the console SPA, the examples with the
 * demo credentials filled in, and the hosted embed page. The builds may be missing (before
 * `npm run build`); then the app must say so clearly, and that is checked instead.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp, type NadirlineApp } from '@nadirline/server/app';
import { loadConfig, repoRoot } from '@nadirline/server/config';
import { seedDemo, type DemoCredentials } from '@nadirline/server/seed/demo.ts';
import { testStores, type TestStores } from '../support/stores.ts';

let t: NadirlineApp;
let dir: string;
let creds: DemoCredentials;
let stores: TestStores | undefined;
const widgetBuilt = fs.existsSync(path.join(repoRoot, 'widget', 'dist', 'nadir-track.js'));
const consoleBuilt = fs.existsSync(path.join(repoRoot, 'console', 'dist', 'index.html'));

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-site-'));
  stores = await testStores();
  t = await createApp(loadConfig({ NODE_ENV: 'test', SQLITE_FILE: path.join(dir, 'site.sqlite'), LOG_LEVEL: 'silent', DEMO: 'true', PORT: '8080', ...stores.env }));
  creds = (await seedDemo(t.context, { port: 8080 })).credentials;
});
afterAll(async () => {
  await t?.close();
  await stores?.drop();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('demo seed', () => {
  it('writes an invented organization with a user per role, four satellites, two keys and an embed', async () => {
    expect(creds.users.map((u) => u.role)).toEqual(['owner', 'admin', 'editor', 'viewer']);
    for (const u of creds.users) {
      expect(u.email).toMatch(/@[a-z.-]+\.example\.org$/);
      expect(u.password.length).toBeGreaterThanOrEqual(16);
    }
    expect(creds.browserKey).toMatch(/^nlb_/);
    expect(creds.serverKey).toMatch(/^nls_/);
    expect(creds.satellites).toHaveLength(4);
    const file = JSON.parse(fs.readFileSync(path.join(dir, 'demo-credentials.json'), 'utf8'));
    expect(file).toEqual(creds);
  });

  it('synthesizes fresh element sets for every demo satellite', async () => {
    const res = await request(t.app).get('/v1/satellites').set('Authorization', `Bearer ${creds.serverKey}`).expect(200);
    for (const s of res.body.satellites) {
      expect(s.current.staleness).toBe('fresh');
      expect(s.current.ageDays).toBeLessThan(1);
    }
    const byName = Object.fromEntries(res.body.satellites.map((s: { name: string; derived: Record<string, number> }) => [s.name, s.derived]));
    expect(byName['Wren Pathfinder'].inclinationDeg).toBeCloseTo(97.5, 3);
    expect(byName['Tessera GEO'].periodMin).toBeCloseTo(1436.1, 0);
    expect(byName['Halcyon Relay'].eccentricity).toBeCloseTo(0.72, 3);
  });

  it('keeps everything on a second run', async () => {
    const again = await seedDemo(t.context, { port: 8080 });
    expect(again.created).toBe(false);
    expect(again.credentials).toEqual(creds);
  });
});

describe('widget files', () => {
  it('serves the script for any origin with a short cache and hashed assets for a year', async () => {
    const res = await request(t.app).get('/widget/nadir-track.js');
    if (!widgetBuilt) {
      expect(res.status).toBe(503);
      return;
    }
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/javascript/);
    expect(res.headers['access-control-allow-origin']).toBe('*');
    expect(res.headers['cross-origin-resource-policy']).toBe('cross-origin');
    expect(res.headers['cache-control']).toBe('public, max-age=300, must-revalidate');
    const asset = fs.readdirSync(path.join(repoRoot, 'widget', 'dist', 'assets'))[0] as string;
    const a = await request(t.app).get(`/widget/assets/${asset}`).expect(200);
    expect(a.headers['cache-control']).toBe('public, max-age=31536000, immutable');
    const font = await request(t.app).get('/fonts/no-such-font.woff2');
    expect(font.status).toBe(404);
    const missing = await request(t.app).get('/widget/nope.js');
    expect(missing.status).toBe(404);
    expect(missing.headers['content-type']).toMatch(/problem\+json/);
  });
});

describe('console', () => {
  it('serves the single-page app with its security headers, and falls back to it for page routes', async () => {
    const root = await request(t.app).get('/').set('Accept', 'text/html');
    const deep = await request(t.app).get('/orgs/x/satellites').set('Accept', 'text/html');
    if (!consoleBuilt) {
      expect(root.status).toBe(503);
      expect(root.text).toContain('npm run build');
      return;
    }
    expect(root.status).toBe(200);
    expect(root.text).toContain('<div id="app">');
    expect(root.headers['content-security-policy']).toMatch(/script-src 'self'/);
    expect(root.headers['x-frame-options']).toBe('SAMEORIGIN');
    expect(deep.status).toBe(200);
    expect(deep.text).toBe(root.text);
  });

  it('answers the site icon at /favicon.ico, so pages without one log no missing file', async () => {
    const res = await request(t.app).get('/favicon.ico').expect(200);
    expect(res.headers['content-type']).toMatch(/^image\/svg\+xml/);
    expect(String(res.body)).toContain('<svg');
  });

  it('does not answer HTML for API paths or missing files', async () => {
    const api = await request(t.app).get('/v1/nothing').set('Accept', 'text/html');
    expect(api.headers['content-type']).toMatch(/problem\+json/);
    const file = await request(t.app).get('/missing-file.js').set('Accept', 'text/html');
    expect(file.status).toBe(404);
    const json = await request(t.app).get('/orgs/x').set('Accept', 'application/json');
    expect(json.status).toBe(404);
  });
});

describe('examples and the hosted embed page', () => {
  it('fills the demo browser key, satellite ids and embed id into the examples', async () => {
    const res = await request(t.app).get('/examples/').expect(200);
    expect(res.text).not.toContain('{{');
    const page = await request(t.app).get('/examples/science-centre.html').expect(200);
    expect(page.text).toContain(creds.browserKey);
    expect(page.text).toContain(creds.satellites.map((s) => s.id).join(','));
    await request(t.app).get('/examples/../server/src/config.ts').expect(404);
    await request(t.app).get('/examples/package.json').expect(404);
  });

  it('serves Markdown examples as UTF-8 plain text that browsers show instead of downloading', async () => {
    const md = fs.readdirSync(path.join(repoRoot, 'examples')).find((f) => f.endsWith('.md'));
    expect(md, 'an example in Markdown').toBeDefined();
    const res = await request(t.app).get(`/examples/${md}`).expect(200);
    expect(res.headers['content-type']).toBe('text/plain; charset=utf-8');
    expect(res.headers['content-disposition']).toBeUndefined();
    expect(res.text.length).toBeGreaterThan(100);
  });

  it('answers a broken percent-encoding in an example path with a readable 400 problem', async () => {
    const res = await request(t.app).get('/examples/%E0%A4%A.html').expect(400);
    expect(res.body.code).toBe('bad-request');
    expect(res.body.detail).toMatch(/^The URL holds a broken percent-encoding/);
  });

  it('serves a page holding only the widget for a saved embed, framable by the key\u2019s origins', async () => {
    const res = await request(t.app).get(`/embed/${creds.embedId}`).expect(200);
    expect(res.text).toContain(`embed="${creds.embedId}"`);
    expect(res.text).toContain('/widget/nadir-track.js');
    expect(res.headers['content-security-policy']).toMatch(/frame-ancestors 'self' http:\/\/localhost:8080 http:\/\/127\.0\.0\.1:8080/);
    expect(res.headers['x-frame-options']).toBeUndefined();
    await request(t.app).get('/embed/nosuchembed').expect(404);
  });
});
