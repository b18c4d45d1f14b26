/**
 * Webhooks out, over real HTTP: an owner registers an endpoint (a node:http receiver on
 * 127.0.0.1 in this test), events are written where they happen (an upload through /v1, the daily
 * stale check, the quota thresholds, a checkout through the fake payment provider), and the worker
 * sends them signed, retries with backoff on the clock the test controls, gives up after the last
 * attempt, and sends each delivery once however many workers compete for it.
 */
import { spawn } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import request from 'supertest';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { Membership, UsageDaily, WebhookEndpoint } from '@nadirline/server/models/index.ts';
import { getKeyService } from '@nadirline/server/services/keys.ts';
import { runDueJobs } from '@nadirline/server/services/scheduler.ts';
import { getSatelliteService } from '@nadirline/server/services/satellites.ts';
import { sendStaleDigests } from '@nadirline/server/services/notices.ts';
import { MAX_ATTEMPTS, RETRY_DELAYS_MS, VERIFY_SNIPPET_NODE, runWebhookDeliveries } from '@nadirline/server/services/webhooks.ts';
import { leoTle } from '../support/app.ts';
import { signUpAndVerify, type Person } from './console-api.harness.ts';
import { TEST_CARD_OK, startBillingApp, type BillingApp } from './billing.harness.ts';

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- test reads of free-form JSON
type Loose = any;

interface SentEvent {
  id: string;
  type: string;
  createdAt: string;
  organizationId: string;
  data: Record<string, Loose>;
}

interface Received {
  headers: http.IncomingHttpHeaders;
  body: string;
  at: number;
}

/** A receiver on 127.0.0.1: answers each POST with the next status of `answers` (the last one repeats), after `delayMs`. */
class Receiver {
  readonly got: Received[] = [];
  answers: number[] = [200];
  delayMs = 0;
  /** When true, requests are never answered (the attempt times out). */
  silent = false;
  private server = http.createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on('data', (c: Buffer) => chunks.push(c));
    req.on('end', () => {
      this.got.push({ headers: req.headers, body: Buffer.concat(chunks).toString('utf8'), at: Date.now() });
      if (this.silent) return;
      const status = this.answers.length > 1 ? this.answers.shift()! : this.answers[0]!;
      setTimeout(() => {
        res.writeHead(status, { 'content-type': 'text/plain' });
        res.end(status < 300 ? 'thanks' : 'not now');
      }, this.delayMs);
    });
  });
  url = '';
  async start(): Promise<this> {
    await new Promise<void>((resolve) => this.server.listen(0, '127.0.0.1', resolve));
    this.url = `http://127.0.0.1:${(this.server.address() as AddressInfo).port}/nadirline-events`;
    return this;
  }
  events(): SentEvent[] {
    return this.got.map((g) => JSON.parse(g.body) as SentEvent);
  }
  async stop(): Promise<void> {
    this.server.closeAllConnections();
    await new Promise<void>((resolve) => this.server.close(() => resolve()));
  }
}

const DAY = 86_400_000;
// A fixed moment: 2030-05-20 06:00 UTC.
const T0 = Date.UTC(2030, 4, 20, 6, 0, 0);

let b: BillingApp;
let rx: Receiver;

beforeEach(async () => {
  b = await startBillingApp();
  rx = await new Receiver().start();
});
afterEach(async () => {
  await rx.stop();
  await b.close();
});

async function addEndpoint(events: string[], url = rx.url): Promise<{ id: string; secret: string }> {
  const res = await b.owner.browser.post(b.api('/webhooks'), { url, events, description: 'Operations desk' }).expect(201);
  return { id: res.body.endpoint.id, secret: res.body.secret };
}

async function deliveries(): Promise<Array<Record<string, Loose>>> {
  return (await b.owner.browser.get(b.api('/webhook-deliveries')).expect(200)).body.deliveries;
}

/** Runs the worker at `ms` on the app's clock. */
async function deliverAt(ms: number, holder?: string): Promise<number> {
  b.setNow(ms);
  return runWebhookDeliveries(b.t.context, { now: new Date(ms), ...(holder ? { holder } : {}) });
}

function expectSigned(g: Received, secret: string): void {
  const id = g.headers['nadirline-webhook-id'] as string;
  const ts = g.headers['nadirline-webhook-timestamp'] as string;
  const expected = crypto.createHmac('sha256', secret).update(`${id}.${ts}.${g.body}`).digest('hex');
  expect(g.headers['nadirline-webhook-signature']).toBe(`v1=${expected}`);
}

async function member(role: 'admin' | 'editor' | 'viewer'): Promise<Person> {
  const p = await signUpAndVerify(b.t, { name: `Hook ${role}` });
  await Membership.create({ id: `m_${role}_${p.userId}`, userId: p.userId, organizationId: b.orgId, role });
  return p;
}

describe('endpoints', () => {
  it('are registered, changed, rotated and deleted by owners and admins; the secret is shown once', async () => {
    const created = await b.owner.browser.post(b.api('/webhooks'), { url: rx.url, events: ['plan.changed', 'quota.threshold', 'plan.changed'] }).expect(201);
    const secret = created.body.secret as string;
    expect(secret).toMatch(/^nlwh_[A-Za-z0-9_-]{43}$/);
    expect(created.body.endpoint).toMatchObject({ url: rx.url, events: ['plan.changed', 'quota.threshold'], status: 'active', secretLastFour: secret.slice(-4) });
    const id = created.body.endpoint.id as string;

    // Never again: not in the list, not in the database in the clear.
    const list = await b.owner.browser.get(b.api('/webhooks')).expect(200);
    expect(JSON.stringify(list.body)).not.toContain(secret);
    expect(list.body.eventTypes.map((e: { type: string }) => e.type)).toEqual(['element-set.accepted', 'element-set.stale', 'quota.threshold', 'plan.changed']);
    const row = await WebhookEndpoint.findByPk(id);
    expect(JSON.stringify(row!.toJSON())).not.toContain(secret.slice(5));

    const admin = await member('admin');
    const patched = await admin.browser.patch(b.api(`/webhooks/${id}`), { events: ['element-set.accepted'], description: 'Ops', paused: true }).expect(200);
    expect(patched.body.endpoint).toMatchObject({ events: ['element-set.accepted'], description: 'Ops', status: 'paused' });

    const rotated = await admin.browser.post(b.api(`/webhooks/${id}/rotate-secret`)).expect(200);
    expect(rotated.body.secret).not.toBe(secret);
    expect(rotated.body.endpoint.secretLastFour).toBe((rotated.body.secret as string).slice(-4));
    expect(rotated.body.endpoint.secretRotatedAt).toEqual(expect.any(String));

    const editor = await member('editor');
    const refused = await editor.browser.get(b.api('/webhooks'));
    expect(refused.status).toBe(403);
    expect(refused.body.code).toBe('forbidden');
    expect((await editor.browser.post(b.api('/webhooks'), { url: rx.url, events: ['plan.changed'] })).status).toBe(403);
    expect((await editor.browser.delete(b.api(`/webhooks/${id}`))).status).toBe(403);

    await b.owner.browser.delete(b.api(`/webhooks/${id}`)).expect(204);
    expect((await b.owner.browser.get(b.api('/webhooks')).expect(200)).body.endpoints).toEqual([]);
    expect((await b.owner.browser.delete(b.api(`/webhooks/${id}`))).status).toBe(404);
  });

  it('refuses URLs that are not https, or private, with a problem naming the field', async () => {
    const bad = [
      ['ftp://hooks.example.org/in', /https/],
      ['http://hooks.example.org/in', /plain http is accepted only for a receiver on this machine/],
      ['https://10.1.2.3/in', /not a public address \(private\)/],
      ['https://169.254.169.254/latest', /not a public address \(linkLocal\)/],
      ['https://[fd00::1]/in', /not a public address \(uniqueLocal\)/],
      ['https://user:pw@hooks.example.org/in', /user name and password/],
      ['not a url', /full URL/],
    ] as const;
    for (const [url, why] of bad) {
      const res = await b.owner.browser.post(b.api('/webhooks'), { url, events: ['plan.changed'] });
      expect([url, res.status]).toEqual([url, 400]);
      expect(res.headers['content-type']).toMatch(/application\/problem\+json/);
      expect(res.body.code).toBe('validation-failed');
      expect(res.body.errors[0]).toMatchObject({ where: '/url', field: 'url' });
      expect(res.body.errors[0].message).toMatch(why);
    }
    const noKinds = await b.owner.browser.post(b.api('/webhooks'), { url: 'https://hooks.example.org/in', events: [] });
    expect(noKinds.status).toBe(400);
    expect(noKinds.body.errors[0]).toMatchObject({ where: '/events' });
    const unknownKind = await b.owner.browser.post(b.api('/webhooks'), { url: 'https://hooks.example.org/in', events: ['satellite.exploded'] });
    expect(unknownKind.status).toBe(400);
    // Under NODE_ENV=test a receiver on this machine is accepted, as in development.
    await b.owner.browser.post(b.api('/webhooks'), { url: 'https://hooks.example.org/in', events: ['plan.changed'] }).expect(201);
    await b.owner.browser.post(b.api('/webhooks'), { url: 'http://localhost:9/in', events: ['plan.changed'] }).expect(201);
  });
});

describe('deliveries', () => {
  it('sends a test event signed with the secret, checked by an independent HMAC', async () => {
    const { id, secret } = await addEndpoint(['plan.changed']);
    b.setNow(T0);
    const sent = await b.owner.browser.post(b.api(`/webhooks/${id}/test`)).expect(201);
    expect(sent.body.delivery).toMatchObject({ state: 'pending', attempts: 0, eventType: 'webhook.test' });
    expect(await deliverAt(T0)).toBe(1);
    expect(rx.got).toHaveLength(1);
    const g = rx.got[0]!;
    expectSigned(g, secret);
    expect(g.headers['content-type']).toBe('application/json');
    expect(g.headers['nadirline-webhook-timestamp']).toBe(String(T0 / 1000));
    const body = JSON.parse(g.body);
    expect(body).toEqual({ id: g.headers['nadirline-webhook-id'], type: 'webhook.test', createdAt: new Date(T0).toISOString(), organizationId: b.orgId, data: expect.objectContaining({ endpointId: id }) });
    // Another secret does not verify it.
    expect(crypto.createHmac('sha256', 'nlwh_someone-else').update(`${body.id}.${T0 / 1000}.${g.body}`).digest('hex')).not.toBe(String(g.headers['nadirline-webhook-signature']).slice(3));

    const [d] = await deliveries();
    expect(d).toMatchObject({ state: 'delivered', attempts: 1, lastStatusCode: 200, deliveredAt: new Date(T0).toISOString(), endpointUrl: rx.url });
    const detail = await b.owner.browser.get(b.api(`/webhook-deliveries/${d!.id}`)).expect(200);
    expect(detail.body.delivery.attemptList).toEqual([{ number: 1, startedAt: new Date(T0).toISOString(), statusCode: 200, error: null, durationMs: expect.any(Number) }]);
    // Nothing more to send.
    expect(await deliverAt(T0 + 3_600_000)).toBe(0);
  });

  it('retries with backoff on the controlled clock: 500, 500, then 200', async () => {
    const { id, secret } = await addEndpoint(['plan.changed']);
    rx.answers = [500, 500, 200];
    b.setNow(T0);
    await b.owner.browser.post(b.api(`/webhooks/${id}/test`)).expect(201);

    expect(await deliverAt(T0)).toBe(1);
    let [d] = await deliveries();
    expect(d).toMatchObject({ state: 'retrying', attempts: 1, lastStatusCode: 500, lastError: 'answered HTTP 500', nextAttemptAt: new Date(T0 + RETRY_DELAYS_MS[0]).toISOString() });
    expect(await deliverAt(T0 + 59_000)).toBe(0);
    expect(await deliverAt(T0 + 60_000)).toBe(1);
    [d] = await deliveries();
    const second = T0 + 60_000;
    expect(d).toMatchObject({ state: 'retrying', attempts: 2, nextAttemptAt: new Date(second + RETRY_DELAYS_MS[1]).toISOString() });
    expect(await deliverAt(second + RETRY_DELAYS_MS[1] - 1000)).toBe(0);
    expect(await deliverAt(second + RETRY_DELAYS_MS[1])).toBe(1);
    [d] = await deliveries();
    expect(d).toMatchObject({ state: 'delivered', attempts: 3, lastStatusCode: 200, lastError: null, nextAttemptAt: null });

    expect(rx.got).toHaveLength(3);
    // One event id on every attempt, each attempt signed with its own timestamp.
    expect(new Set(rx.got.map((g) => g.headers['nadirline-webhook-id'])).size).toBe(1);
    expect(rx.got.map((g) => Number(g.headers['nadirline-webhook-timestamp']) * 1000)).toEqual([T0, second, second + RETRY_DELAYS_MS[1]]);
    for (const g of rx.got) expectSigned(g, secret);
    const detail = await b.owner.browser.get(b.api(`/webhook-deliveries/${d!.id}`)).expect(200);
    expect(detail.body.delivery.attemptList.map((a: { statusCode: number }) => a.statusCode)).toEqual([500, 500, 200]);
  });

  it(`gives up after ${MAX_ATTEMPTS} attempts, and "send again" makes a new delivery of the same event`, async () => {
    const { id } = await addEndpoint(['plan.changed']);
    rx.answers = [503];
    b.setNow(T0);
    await b.owner.browser.post(b.api(`/webhooks/${id}/test`)).expect(201);
    let at = T0;
    for (let n = 1; n <= MAX_ATTEMPTS; n++) {
      expect(await deliverAt(at)).toBe(1);
      at += RETRY_DELAYS_MS[n - 1] ?? 0;
    }
    let [d] = await deliveries();
    expect(d).toMatchObject({ state: 'failed', attempts: MAX_ATTEMPTS, lastStatusCode: 503, nextAttemptAt: null });
    expect(await deliverAt(at + 30 * DAY)).toBe(0);
    expect(rx.got).toHaveLength(MAX_ATTEMPTS);

    rx.answers = [204];
    const again = await b.owner.browser.post(b.api(`/webhook-deliveries/${d!.id}/redeliver`)).expect(201);
    expect(again.body.delivery).toMatchObject({ state: 'pending', redeliveryOf: d!.id, eventId: d!.eventId });
    expect(await deliverAt(at + 30 * DAY)).toBe(1);
    [d] = await deliveries();
    expect(d).toMatchObject({ id: again.body.delivery.id, state: 'delivered', lastStatusCode: 204 });
    expect(rx.got.at(-1)!.headers['nadirline-webhook-id']).toBe(rx.got[0]!.headers['nadirline-webhook-id']);
  });

  it('counts an endpoint that does not answer in time, or cannot be reached, as not delivered', async () => {
    b.t.context.services.webhookTimeoutMs = 300;
    rx.silent = true;
    const { id } = await addEndpoint(['plan.changed']);
    b.setNow(T0);
    await b.owner.browser.post(b.api(`/webhooks/${id}/test`)).expect(201);
    expect(await deliverAt(T0)).toBe(1);
    const [d] = await deliveries();
    expect(d).toMatchObject({ state: 'retrying', lastStatusCode: null });
    expect(d!.lastError).toMatch(/no answer within/);

    await b.owner.browser.patch(b.api(`/webhooks/${id}`), { url: 'http://127.0.0.1:9/closed-port' }).expect(200);
    expect(await deliverAt(T0 + 60_000)).toBe(1);
    const [d2] = await deliveries();
    expect(d2!.lastError).toMatch(/ECONNREFUSED/);
  });

  it('holds deliveries while the endpoint is paused and sends them on resume', async () => {
    const { id } = await addEndpoint(['plan.changed']);
    b.setNow(T0);
    await b.owner.browser.post(b.api(`/webhooks/${id}/test`)).expect(201);
    await b.owner.browser.patch(b.api(`/webhooks/${id}`), { paused: true }).expect(200);
    expect((await deliveries())[0]).toMatchObject({ state: 'paused' });
    expect(await deliverAt(T0)).toBe(0);
    expect((await b.owner.browser.post(b.api(`/webhooks/${id}/test`))).status).toBe(409);
    await b.owner.browser.patch(b.api(`/webhooks/${id}`), { paused: false }).expect(200);
    expect(await deliverAt(T0)).toBe(1);
    expect(rx.got).toHaveLength(1);
  });

  it('sends each delivery once when two workers compete for it', async () => {
    const { id } = await addEndpoint(['plan.changed']);
    rx.delayMs = 150;
    b.setNow(T0);
    for (let i = 0; i < 4; i++) await b.owner.browser.post(b.api(`/webhooks/${id}/test`)).expect(201);
    const made = await Promise.all([deliverAt(T0, 'worker-a'), runWebhookDeliveries(b.t.context, { now: new Date(T0), holder: 'worker-b' })]);
    expect(made[0] + made[1]).toBe(4);
    expect(rx.got).toHaveLength(4);
    expect(new Set(rx.got.map((g) => g.headers['nadirline-webhook-delivery'])).size).toBe(4);
    expect((await deliveries()).map((d) => [d.state, d.attempts])).toEqual(Array.from({ length: 4 }, () => ['delivered', 1]));
    // Later passes by either worker find nothing.
    expect(await Promise.all([deliverAt(T0 + DAY, 'worker-a'), runWebhookDeliveries(b.t.context, { now: new Date(T0 + DAY), holder: 'worker-b' })])).toEqual([0, 0]);
  });
});

describe('each kind of event, from its real trigger', () => {
  it('element-set.accepted: an upload through /v1 with a server key', async () => {
    const { secret } = await addEndpoint(['element-set.accepted']);
    await addEndpoint(['plan.changed'], 'http://127.0.0.1:9/not-this-one');
    const key = await getKeyService(b.t.context).createKey({ organizationId: b.orgId, kind: 'server', name: 'Pipeline', scopes: ['read', 'element-sets:write'] });
    const sat = (await b.owner.browser.post(b.api('/satellites'), { name: 'Wren-2' }).expect(201)).body.satellite;
    const upload = await request(b.t.app).post(`/v1/satellites/${sat.id}/element-sets`).set('Authorization', `Bearer ${key.secret}`).set('Content-Type', 'text/plain').send(leoTle({ catalogNumber: '90777', name: 'WREN-2' }));
    expect(upload.status).toBe(201);
    await runWebhookDeliveries(b.t.context);
    const events = rx.events();
    expect(events).toHaveLength(1);
    expectSigned(rx.got[0]!, secret);
    expect(events[0]).toMatchObject({
      type: 'element-set.accepted',
      organizationId: b.orgId,
      data: {
        satellite: { id: sat.id, name: 'Wren-2', catalogNumber: '90777' },
        elementSets: [{ id: upload.body.report[0].elementSetId, source: 'tle', awaitingConfirmation: false }],
        currentElementSetId: upload.body.report[0].elementSetId,
        uploadedBy: { keyId: key.key.id },
      },
    });
    // The endpoint that chose only plan.changed got no delivery.
    expect((await deliveries()).map((d) => d.endpointUrl)).toEqual([rx.url]);
    // The same epoch again stores nothing, and tells nothing.
    await request(b.t.app).post(`/v1/satellites/${sat.id}/element-sets`).set('Authorization', `Bearer ${key.secret}`).set('Content-Type', 'text/plain').send(leoTle({ catalogNumber: '90777', name: 'WREN-2' }));
    await runWebhookDeliveries(b.t.context);
    expect(rx.got).toHaveLength(1);
  });

  it('element-set.stale: the daily stale check, once a day', async () => {
    await addEndpoint(['element-set.stale']);
    const sats = getSatelliteService(b.t.context);
    const make = async (name: string, ageDays: number, cat: string) => sats.createSatellite(b.orgId, { name, elementsText: leoTle({ epochMs: Math.floor((T0 - ageDays * DAY) / 60_000) * 60_000, catalogNumber: cat }) }, {});
    await make('Kestrel-1', 3.2, '90001');
    await make('Kestrel-2', 14.5, '90002');
    await make('Fresh-1', 1, '90003');
    b.setNow(T0);
    expect(await runDueJobs(b.t.context, new Date(T0))).toContain('stale-digest');
    // A second run of the same day's check (another process) tells nothing new.
    await sendStaleDigests(b.t.context, new Date(T0 + 3_600_000));
    await deliverAt(T0 + 3_600_000);
    const events = rx.events();
    expect(events).toHaveLength(1);
    expect(events[0]!.type).toBe('element-set.stale');
    expect(events[0]!.data.day).toBe('2030-05-20');
    expect(events[0]!.data.satellites.map((s: { name: string; staleness: string; ageDays: number }) => [s.name, s.staleness, s.ageDays])).toEqual([
      ['Kestrel-1', 'aging', 3.2],
      ['Kestrel-2', 'stale', 14.5],
    ]);
    expect(events[0]!.data.satellites[0]).toMatchObject({ elementSetId: expect.stringMatching(/^es_/), epoch: expect.any(String), catalogNumber: '90001' });
  });

  it('quota.threshold: 80 % and 100 % of the month, each once', async () => {
    await addEndpoint(['quota.threshold']);
    const keyId = (await getKeyService(b.t.context).createKey({ organizationId: b.orgId, kind: 'server', name: 'Pipeline' })).key.id;
    const use = (day: string, count: number) => UsageDaily.create({ organizationId: b.orgId, apiKeyId: keyId, endpoint: 'GET /v1/satellites/{id}/track', day, count });
    await use('2030-05-03', 81_000);
    await runDueJobs(b.t.context, new Date(T0));
    await runDueJobs(b.t.context, new Date(T0 + 10 * 60_000));
    await use('2030-05-19', 19_500);
    await runDueJobs(b.t.context, new Date(T0 + 20 * 60_000));
    await runDueJobs(b.t.context, new Date(T0 + 30 * 60_000));
    await deliverAt(T0 + 30 * 60_000);
    expect(rx.events().map((e) => [e.type, e.data.threshold, e.data.used, e.data.limit, e.data.month])).toEqual([
      ['quota.threshold', 80, 81_000, 100_000, '2030-05'],
      ['quota.threshold', 100, 100_500, 100_000, '2030-05'],
    ]);
  });

  it('plan.changed: a checkout paid on the fake provider', async () => {
    await addEndpoint(['plan.changed']);
    const url = (await b.owner.browser.post(b.api('/billing/checkout'), { plan: 'mission' }).expect(200)).body.url as string;
    await b.pay(url, TEST_CARD_OK);
    expect((await b.owner.browser.get(b.api('/billing')).expect(200)).body.plan).toBe('mission');
    await runWebhookDeliveries(b.t.context);
    const events = rx.events();
    expect(events).toHaveLength(1);
    expect(events[0]).toMatchObject({ type: 'plan.changed', organizationId: b.orgId, data: { from: 'starter', to: 'mission', reason: 'checkout', monthlyRequests: expect.any(Number) } });
    // Replaying the provider's events changes nothing, so tells nothing.
    for (const e of b.fake.store.events) await fetch(`${b.fake.url()}/_control/events/${String(e.id)}/resend`, { method: 'POST' });
    await b.fake.idle();
    await runWebhookDeliveries(b.t.context);
    expect(rx.events()).toHaveLength(1);
  });
});

describe('the verification snippet of the docs page', () => {
  it('is served at /docs/webhooks with the scheme, and linked from the API reference', async () => {
    const page = await request(b.t.app).get('/docs/webhooks').expect(200);
    expect(page.text).toContain('HMAC-SHA256(secret, id + "." + timestamp + "." + body)');
    expect(page.text).toContain('crypto.timingSafeEqual');
    expect(page.text).toContain('1 min, 5 min, 30 min, 2 h, 6 h');
    expect((await request(b.t.app).get('/docs/api').expect(200)).text).toContain('href="/docs/webhooks"');
  });

  it('runs as a receiver: takes a signed delivery, refuses a forged one', async () => {
    const created = await b.owner.browser.post(b.api('/webhooks'), { url: 'http://127.0.0.1:9/placeholder', events: ['plan.changed'] }).expect(201);
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-snippet-'));
    const file = path.join(dir, 'receiver.mjs');
    fs.writeFileSync(file, VERIFY_SNIPPET_NODE);
    const port = await new Promise<number>((resolve) => {
      const probe = net.createServer().listen(0, '127.0.0.1', () => {
        const p = (probe.address() as AddressInfo).port;
        probe.close(() => resolve(p));
      });
    });
    const child = spawn(process.execPath, [file], { env: { PATH: process.env.PATH ?? '', NADIRLINE_WEBHOOK_SECRET: created.body.secret, PORT: String(port) }, stdio: ['ignore', 'pipe', 'pipe'] });
    let out = '';
    child.stdout.on('data', (c: Buffer) => (out += c.toString()));
    child.stderr.on('data', (c: Buffer) => (out += c.toString()));
    try {
      for (let i = 0; i < 100; i++) {
        const up = await new Promise<boolean>((resolve) => net.connect(port, '127.0.0.1').on('connect', function (this: net.Socket) { this.destroy(); resolve(true); }).on('error', () => resolve(false)));
        if (up) break;
        await new Promise((r) => setTimeout(r, 50));
      }
      const id = created.body.endpoint.id as string;
      await b.owner.browser.patch(b.api(`/webhooks/${id}`), { url: `http://127.0.0.1:${port}/in` }).expect(200);
      await b.owner.browser.post(b.api(`/webhooks/${id}/test`)).expect(201);
      expect(await runWebhookDeliveries(b.t.context)).toBe(1);
      expect((await deliveries())[0]).toMatchObject({ state: 'delivered', lastStatusCode: 204 });
      expect(out).toContain('webhook.test');
      // Signed with another secret: refused.
      const body = '{"id":"evt_forged","type":"plan.changed"}';
      const ts = Math.floor(Date.now() / 1000);
      const forged = await fetch(`http://127.0.0.1:${port}/in`, {
        method: 'POST',
        headers: { 'nadirline-webhook-id': 'evt_forged', 'nadirline-webhook-timestamp': String(ts), 'nadirline-webhook-signature': `v1=${crypto.createHmac('sha256', 'nlwh_not-the-secret').update(`evt_forged.${ts}.${body}`).digest('hex')}` },
        body,
      });
      expect(forged.status).toBe(400);
    } finally {
      child.kill('SIGTERM');
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
