/**
 * What the app serves besides the APIs: the widget build, the console SPA, the examples with the
 * demo credentials filled in, and the hosted embed page. The builds may be missing (before
 * `npm run build`); then the app must say so clearly, and that is checked instead.
 */
import fs from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
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

/** The bytes on the wire (still compressed) and the headers of one GET over a real socket. */
async function wireBytes(url: string, encoding: string): Promise<{ bytes: number; headers: http.IncomingHttpHeaders }> {
  const server = http.createServer(t.app);
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  try {
    const { port } = server.address() as AddressInfo;
    return await new Promise((resolve, reject) => {
      http
        .get({ host: '127.0.0.1', port, path: url, headers: { 'Accept-Encoding': encoding } }, (res) => {
          let bytes = 0;
          res.on('data', (c: Buffer) => (bytes += c.length));
          res.on('end', () => resolve({ bytes, headers: res.headers }));
        })
        .on('error', reject);
    });
  } finally {
    server.close();
  }
}

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

  it('compresses the script and the map data for clients that accept it', async () => {
    if (!widgetBuilt) return;
    const raw = fs.statSync(path.join(repoRoot, 'widget', 'dist', 'nadir-track.js')).size;
    const gz = await wireBytes('/widget/nadir-track.js', 'gzip');
    expect(gz.headers['content-encoding']).toBe('gzip');
    expect(gz.headers['vary']).toMatch(/Accept-Encoding/i);
    const br = await request(t.app).get('/widget/nadir-track.js').set('Accept-Encoding', 'br');
    expect(br.headers['content-encoding']).toBe('br');
    expect(gz.bytes).toBeLessThan(raw / 2);
    const world = fs.readdirSync(path.join(repoRoot, 'widget', 'dist', 'assets')).find((f) => f.endsWith('.json')) as string;
    const map = await request(t.app).get(`/widget/assets/${world}`).set('Accept-Encoding', 'gzip');
    expect(map.headers['content-encoding']).toBe('gzip');
    expect(map.headers['cache-control']).toBe('public, max-age=31536000, immutable');
    const plain = await request(t.app).get('/widget/nadir-track.js').set('Accept-Encoding', 'identity');
    expect(plain.headers['content-encoding']).toBeUndefined();
  });

  it('serves the script under a versioned name for a year, and names the current version', async () => {
    if (!widgetBuilt) return;
    const v = await request(t.app).get('/widget/versions.json').expect(200);
    expect(v.body.module).toMatch(/^\/widget\/nadir-track\.[0-9a-f]{10}\.js$/);
    expect(v.body.classic).toMatch(/^\/widget\/nadir-track\.iife\.[0-9a-f]{10}\.js$/);
    const plain = await request(t.app).get('/widget/nadir-track.js').expect(200);
    const pinned = await request(t.app).get(v.body.module).expect(200);
    expect(pinned.headers['cache-control']).toBe('public, max-age=31536000, immutable');
    expect(pinned.headers['content-type']).toMatch(/javascript/);
    expect(pinned.headers['access-control-allow-origin']).toBe('*');
    expect(pinned.text).toBe(plain.text);
    const classic = await request(t.app).get(v.body.classic).expect(200);
    expect(classic.headers['cache-control']).toBe('public, max-age=31536000, immutable');
    // a version no longer built sends the page to the current script rather than breaking it
    const old = await request(t.app).get('/widget/nadir-track.0123456789.js').expect(302);
    expect(old.headers.location).toBe('/widget/nadir-track.js');
    expect(old.headers['cache-control']).toBe('public, max-age=300');
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
    expect(res.text).toMatch(/\/widget\/nadir-track\.[0-9a-f]{10}\.js/);
    expect(res.headers['content-security-policy']).toMatch(/frame-ancestors 'self' http:\/\/localhost:8080 http:\/\/127\.0\.0\.1:8080/);
    expect(res.headers['x-frame-options']).toBeUndefined();
    await request(t.app).get('/embed/nosuchembed').expect(404);
  });

  it('loads the versioned script in the hosted embed page', async () => {
    if (!widgetBuilt) return;
    const v = await request(t.app).get('/widget/versions.json').expect(200);
    const res = await request(t.app).get(`/embed/${creds.embedId}`).expect(200);
    expect(res.text).toContain(`src="${v.body.module}"`);
    expect(res.text).toContain(`src="${v.body.classic}"`);
  });

  it('answers our own refusal page, framable anywhere, when a site the key does not list frames the embed', async () => {
    const res = await request(t.app)
      .get(`/embed/${creds.embedId}`)
      .set('Sec-Fetch-Dest', 'iframe')
      .set('Sec-Fetch-Site', 'cross-site')
      .set('Referer', 'https://elsewhere.example.com/blog/post')
      .expect(403);
    expect(res.headers['content-type']).toMatch(/text\/html/);
    expect(res.headers['content-security-policy']).toMatch(/frame-ancestors \*/);
    expect(res.headers['content-security-policy']).not.toMatch(/script-src/);
    expect(res.text).toContain('This map is not allowed on this site');
    expect(res.text).toContain('https://elsewhere.example.com');
    expect(res.text).not.toContain('/blog/post');
    expect(res.text).not.toContain('<nadir-track');
    // a listed site still gets the map, under the key's frame-ancestors
    const ok = await request(t.app).get(`/embed/${creds.embedId}`).set('Sec-Fetch-Dest', 'iframe').set('Referer', 'http://localhost:8080/page.html').expect(200);
    expect(ok.text).toContain(`embed="${creds.embedId}"`);
    expect(ok.headers['content-security-policy']).toMatch(/frame-ancestors 'self' http:\/\/localhost:8080/);
  });

  it('asks the frame who frames it when a site of another origin sends no Referer, and refuses an unlisted one it names', async () => {
    const framed = (query = '') =>
      request(t.app).get(`/embed/${creds.embedId}${query}`).set('Sec-Fetch-Dest', 'iframe').set('Sec-Fetch-Site', 'cross-site');
    // no Referer: a framable check page, without the map and without the key's origins
    const check = await framed().expect(200);
    expect(check.headers['content-security-policy']).toMatch(/frame-ancestors \*/);
    expect(check.headers['content-security-policy']).toMatch(/script-src 'self'/);
    expect(check.headers['cache-control']).toBe('no-store');
    expect(check.text).toContain('<script src="/embed/frame-check.js"></script>');
    expect(check.text).not.toContain('<nadir-track');
    expect(check.text).not.toContain('localhost:8080');
    const script = await request(t.app).get('/embed/frame-check.js').expect(200);
    expect(script.headers['content-type']).toMatch(/javascript/);
    expect(script.text).toContain('ancestorOrigins');
    expect(script.text).toContain("searchParams.set('framers'");

    // the check names an unlisted framer: our notice, framable anywhere
    const refused = await request(t.app)
      .get(`/embed/${creds.embedId}`)
      .query({ framers: 'https://elsewhere.example.com' })
      .set('Sec-Fetch-Dest', 'iframe')
      .set('Sec-Fetch-Site', 'same-origin')
      .set('Referer', `http://localhost:8080/embed/${creds.embedId}`)
      .expect(403);
    expect(refused.headers['content-security-policy']).toMatch(/frame-ancestors \*/);
    expect(refused.text).toContain('This map is not allowed on this site');
    expect(refused.text).toContain('https://elsewhere.example.com');
    expect(refused.text).not.toContain('<nadir-track');
    // an opaque (sandboxed) framer, or an unlisted one anywhere up the chain
    expect((await framed('?framers=null').expect(403)).text).toContain('the page showing it is not one of them');
    expect((await framed(`?framers=${encodeURIComponent('http://localhost:8080 https://outer.example.com')}`).expect(403)).text).toContain('https://outer.example.com');

    // a listed framer, or none the browser would say: the map, under the key's frame-ancestors (the browser still decides)
    for (const framers of ['http://localhost:8080', '']) {
      const ok = await framed(`?framers=${encodeURIComponent(framers)}`).expect(200);
      expect(ok.text).toContain(`embed="${creds.embedId}"`);
      expect(ok.headers['content-security-policy']).toMatch(/frame-ancestors 'self' http:\/\/localhost:8080/);
      expect(ok.headers['content-security-policy']).not.toMatch(/frame-ancestors \*/);
    }
    // nothing that is not an origin gets into the page
    const junk = await framed(`?framers=${encodeURIComponent('<b>hi</b> javascript:alert(1)')}`).expect(200);
    expect(junk.text).not.toContain('<b>hi</b>');
    // opened on its own (not framed), no check page
    expect((await request(t.app).get(`/embed/${creds.embedId}`).set('Sec-Fetch-Dest', 'document').set('Sec-Fetch-Site', 'none').expect(200)).text).toContain('<nadir-track');
  });
});
