/**
 * Webhooks out: an organization's own systems are told what happened, signed.
 *
 *   endpointUrlProblem(url, config) -> string | null   why a URL cannot be an endpoint (https only;
 *                                       loopback only in development and tests; never a private,
 *                                       link-local or otherwise non-public address)
 *   createEndpoint / updateEndpoint / deleteEndpoint / rotateSecret      (routes/api/webhooks.ts)
 *   emitEvent(ctx, { organizationId, type, data, dedupeKey? }, { transaction? })
 *       writes the event and one delivery per active endpoint that chose its kind (the outbox), in
 *       the caller's transaction when given, so the event exists exactly when what it reports was
 *       committed. Called where things happen: uploads (services/satellites.ts), the daily stale
 *       check and the quota thresholds (services/notices.ts), plan changes (services/billing.ts).
 *   sendTestEvent / redeliver                           a `webhook.test` event, or a delivery again
 *   runWebhookDeliveries(ctx, { now?, holder? })        sends what is due; tests call it with their clock
 *   startWebhookWorker(ctx)                             every WEBHOOK_TICK_MS (WEBHOOK_WORKER)
 *
 * A delivery is claimed by one conditional UPDATE (its status is still pending, it is due, and no
 * other holder's lease runs), the same on SQLite and PostgreSQL, so with several processes each
 * attempt is made by one of them. An attempt is a POST of the event's stored JSON body with
 *
 *   Nadirline-Webhook-Id         the event id (the same on every attempt and redelivery)
 *   Nadirline-Webhook-Timestamp  Unix seconds when this attempt was signed
 *   Nadirline-Webhook-Signature  v1=<hex HMAC-SHA256(secret, id + "." + timestamp + "." + body)>
 *
 * Any 2xx within ATTEMPT_TIMEOUT_MS is delivered; anything else is tried again after
 * RETRY_DELAYS_MS (1 min, 5 min, 30 min, 2 h, 6 h) and marked failed after MAX_ATTEMPTS. The
 * address a name resolves to is checked again when connecting, so a name that turns private later
 * is refused then. Redirects are not followed.
 */
import crypto from 'node:crypto';
import dns from 'node:dns';
import http from 'node:http';
import https from 'node:https';
import type { LookupFunction } from 'node:net';
import net from 'node:net';
import ipaddr from 'ipaddr.js';
import { nanoid } from 'nanoid';
import { Op, UniqueConstraintError, type Transaction } from 'sequelize';
import type { Config } from '../config.ts';
import type { AppContext } from '../context.ts';
import { writeTransaction } from '../db/index.ts';
import { HttpError } from '../http/problem.ts';
import { WebhookAttempt, WebhookDelivery, WebhookEndpoint, WebhookEvent } from '../models/index.ts';
import { now as clockNow } from './clock.ts';
import type {
  WebhookAttempt as WebhookAttemptJson,
  WebhookDelivery as WebhookDeliveryJson,
  WebhookDeliveryState,
  WebhookEndpoint as WebhookEndpointJson,
  WebhookEventType,
} from '@nadirline/shared/contract';

export const WEBHOOK_EVENT_TYPES = [
  { type: 'element-set.accepted', label: 'Element sets were stored for a satellite (an upload from the console or a server key).' },
  { type: 'element-set.stale', label: 'Once a day: satellites whose element set turned Aging (3 days) or Stale (14 days).' },
  { type: 'quota.threshold', label: 'The organization used 80 % or all of its monthly requests.' },
  { type: 'plan.changed', label: 'The organization moved to another plan.' },
] as const satisfies ReadonlyArray<{ type: WebhookEventType; label: string }>;
export const WEBHOOK_EVENT_TYPE_IDS = WEBHOOK_EVENT_TYPES.map((e) => e.type) as [WebhookEventType, ...WebhookEventType[]];
/** Sent to one endpoint on request (the console's "Send a test event"); no endpoint chooses it. */
export const TEST_EVENT_TYPE = 'webhook.test';

/** Waits after attempt 1, 2, ...: the delivery fails after the last. */
export const RETRY_DELAYS_MS = [60_000, 5 * 60_000, 30 * 60_000, 2 * 3_600_000, 6 * 3_600_000] as const;
export const MAX_ATTEMPTS = RETRY_DELAYS_MS.length + 1;
export const ATTEMPT_TIMEOUT_MS = 10_000;
/** How long a claimed delivery stays with its holder (longer than an attempt can take). */
export const CLAIM_MS = 60_000;
export const MAX_ENDPOINTS_PER_ORG = 10;
/** Deliveries one pass of the worker takes at most. */
const BATCH = 20;

export const SIGNATURE_HEADER = 'Nadirline-Webhook-Signature';
export const TIMESTAMP_HEADER = 'Nadirline-Webhook-Timestamp';
export const ID_HEADER = 'Nadirline-Webhook-Id';
export const DELIVERY_HEADER = 'Nadirline-Webhook-Delivery';

declare module '../context.ts' {
  interface AppServices {
    /** This process's holder id in webhook_deliveries. */
    webhookWorkerId?: string;
    /** Per-attempt timeout override, ms (tests). */
    webhookTimeoutMs?: number;
    /** Asks the running worker (if any) for a pass soon. */
    webhookKick?: () => void;
  }
}

// ---------------------------------------------------------------------------------------------
// URLs

/** True where a loopback receiver may be registered: development and tests. */
export function loopbackAllowed(config: Pick<Config, 'NODE_ENV'>): boolean {
  return config.NODE_ENV === 'development' || config.NODE_ENV === 'test';
}

/** Why this address may not receive webhooks, or null when it may (public unicast; loopback outside production). */
export function addressProblem(address: string, config: Pick<Config, 'NODE_ENV'>): string | null {
  if (!ipaddr.isValid(address)) return `${address} is not an IP address`;
  let ip = ipaddr.parse(address);
  if (ip.kind() === 'ipv6' && (ip as ipaddr.IPv6).isIPv4MappedAddress()) ip = (ip as ipaddr.IPv6).toIPv4Address();
  const range = ip.range();
  if (range === 'loopback') return loopbackAllowed(config) ? null : `${address} is a loopback address; a local receiver is accepted only while the server runs in development or tests`;
  if (range === 'unicast') return null;
  return `${address} is not a public address (${range})`;
}

/** Why `text` cannot be an endpoint URL under `config`, or null when it can. */
export function endpointUrlProblem(text: string, config: Pick<Config, 'NODE_ENV'>): string | null {
  let url: URL;
  try {
    url = new URL(text);
  } catch {
    return 'Enter a full URL starting with https://';
  }
  if (url.username || url.password) return 'Leave the user name and password out of the URL; check the signature instead.';
  if (url.hash) return 'Leave out the #fragment; it is never sent.';
  const host = url.hostname.replace(/^\[|\]$/g, '').toLowerCase();
  const isLoopbackName = host === 'localhost' || host.endsWith('.localhost');
  const isIp = net.isIP(host) !== 0;
  const loopback = isLoopbackName || (isIp && ipaddr.parse(host).range() === 'loopback');
  if (url.protocol === 'http:') {
    if (loopback && loopbackAllowed(config)) return null;
    return 'Use an https:// URL; plain http is accepted only for a receiver on this machine while the server runs in development or tests.';
  }
  if (url.protocol !== 'https:') return 'Use an https:// URL.';
  if (isLoopbackName) return loopbackAllowed(config) ? null : 'localhost is this server itself; a local receiver is accepted only while the server runs in development or tests.';
  if (isIp) {
    const why = addressProblem(host, config);
    if (why) return `Use a public address: ${why}.`;
    return null;
  }
  if (!host.includes('.')) return 'Use a full host name (with a dot), such as hooks.example.org.';
  if (/\.(local|internal|lan|home\.arpa)$/.test(host)) return `${host} is a local network name; use a public host name.`;
  return null;
}

/** Throws the problem+json naming `field` when the URL is refused. */
export function checkEndpointUrl(text: string, config: Pick<Config, 'NODE_ENV'>, field = 'url'): string {
  const why = endpointUrlProblem(text, config);
  if (why) throw new HttpError('validation-failed', `The endpoint URL was refused: ${why}`, { errors: [{ where: `/${field}`, field, message: why }] });
  return new URL(text).toString();
}

// ---------------------------------------------------------------------------------------------
// Secrets: made here, shown once, kept sealed with a key derived from SESSION_SECRET.

const SEAL_LABEL = 'nadirline webhook signing secrets v1';

function sealKey(config: Pick<Config, 'sessionSecret'>): Buffer {
  return crypto.createHmac('sha256', config.sessionSecret).update(SEAL_LABEL).digest();
}

export function newSecret(): string {
  return `nlwh_${crypto.randomBytes(32).toString('base64url')}`;
}

export function sealSecret(secret: string, config: Pick<Config, 'sessionSecret'>): string {
  const iv = crypto.randomBytes(12);
  const cipher = crypto.createCipheriv('aes-256-gcm', sealKey(config), iv);
  const ct = Buffer.concat([cipher.update(secret, 'utf8'), cipher.final()]);
  return ['v1', iv.toString('base64url'), cipher.getAuthTag().toString('base64url'), ct.toString('base64url')].join('.');
}

export function openSecret(sealed: string, config: Pick<Config, 'sessionSecret'>): string {
  const [v, iv, tag, ct] = sealed.split('.');
  if (v !== 'v1' || !iv || !tag || !ct) throw new Error('sealed webhook secret in an unknown format');
  const decipher = crypto.createDecipheriv('aes-256-gcm', sealKey(config), Buffer.from(iv, 'base64url'));
  decipher.setAuthTag(Buffer.from(tag, 'base64url'));
  return Buffer.concat([decipher.update(Buffer.from(ct, 'base64url')), decipher.final()]).toString('utf8');
}

/** The hex signature of one attempt: HMAC-SHA256(secret, `${id}.${timestamp}.${body}`). */
export function signPayload(secret: string, id: string, timestamp: number, body: string): string {
  return crypto.createHmac('sha256', secret).update(`${id}.${timestamp}.${body}`).digest('hex');
}

// ---------------------------------------------------------------------------------------------
// Endpoints

const iso = (d: Date | null | undefined) => (d ? new Date(d).toISOString() : null);

function eventsOf(e: WebhookEndpoint): WebhookEventType[] {
  const v = e.events as unknown;
  return (typeof v === 'string' ? JSON.parse(v) : v) as WebhookEventType[];
}

export function serializeEndpoint(e: WebhookEndpoint): WebhookEndpointJson {
  return {
    id: e.id,
    url: e.url,
    description: e.description,
    events: eventsOf(e),
    status: e.status === 'paused' ? 'paused' : 'active',
    secretLastFour: e.secretLastFour,
    secretRotatedAt: iso(e.secretRotatedAt),
    createdAt: new Date(e.createdAt).toISOString(),
    updatedAt: new Date(e.updatedAt).toISOString(),
  };
}

export async function endpointOf(organizationId: string, id: string): Promise<WebhookEndpoint> {
  const e = await WebhookEndpoint.findOne({ where: { id, organizationId } });
  if (!e) throw new HttpError('not-found', 'No such webhook endpoint in this organization.');
  return e;
}

export function listEndpoints(organizationId: string): Promise<WebhookEndpoint[]> {
  return WebhookEndpoint.findAll({ where: { organizationId }, order: [['createdAt', 'ASC'], ['id', 'ASC']] });
}

export interface EndpointInput {
  url: string;
  events: WebhookEventType[];
  description?: string | undefined;
}

export async function createEndpoint(ctx: AppContext, organizationId: string, input: EndpointInput, userId: string | null): Promise<{ endpoint: WebhookEndpoint; secret: string }> {
  const url = checkEndpointUrl(input.url, ctx.config);
  const count = await WebhookEndpoint.count({ where: { organizationId } });
  if (count >= MAX_ENDPOINTS_PER_ORG) throw new HttpError('conflict', `An organization can register at most ${MAX_ENDPOINTS_PER_ORG} webhook endpoints; delete one first.`);
  const secret = newSecret();
  const endpoint = await WebhookEndpoint.create({
    id: `whe_${nanoid(14)}`,
    organizationId,
    url,
    description: input.description ?? '',
    events: [...new Set(input.events)],
    status: 'active',
    secretSealed: sealSecret(secret, ctx.config),
    secretLastFour: secret.slice(-4),
    secretRotatedAt: null,
    createdByUserId: userId,
  });
  return { endpoint, secret };
}

export interface EndpointUpdate {
  url?: string | undefined;
  events?: WebhookEventType[] | undefined;
  description?: string | undefined;
  paused?: boolean | undefined;
}

export async function updateEndpoint(ctx: AppContext, endpoint: WebhookEndpoint, input: EndpointUpdate): Promise<WebhookEndpoint> {
  const fields: Partial<{ url: string; events: string[]; description: string; status: string }> = {};
  if (input.url !== undefined) fields.url = checkEndpointUrl(input.url, ctx.config);
  if (input.events !== undefined) fields.events = [...new Set(input.events)];
  if (input.description !== undefined) fields.description = input.description;
  const wasPaused = endpoint.status === 'paused';
  if (input.paused !== undefined) fields.status = input.paused ? 'paused' : 'active';
  await writeTransaction(ctx.sequelize, async (transaction) => {
    await endpoint.update(fields, { transaction });
    // Deliveries waiting for a paused endpoint wait as `paused`; resuming sends them at once.
    if (input.paused === true && !wasPaused) {
      await WebhookDelivery.update({ status: 'paused' }, { where: { endpointId: endpoint.id, status: 'pending' }, transaction });
    } else if (input.paused === false && wasPaused) {
      await WebhookDelivery.update({ status: 'pending', nextAttemptAt: clockNow(ctx) }, { where: { endpointId: endpoint.id, status: 'paused' }, transaction });
    }
  });
  if (input.paused === false && wasPaused) kick(ctx);
  return endpoint;
}

export async function deleteEndpoint(ctx: AppContext, endpoint: WebhookEndpoint): Promise<void> {
  await writeTransaction(ctx.sequelize, async (transaction) => {
    const ids = (await WebhookDelivery.findAll({ where: { endpointId: endpoint.id }, attributes: ['id'], transaction })).map((d) => d.id);
    if (ids.length) await WebhookAttempt.destroy({ where: { deliveryId: { [Op.in]: ids } }, transaction });
    await WebhookDelivery.destroy({ where: { endpointId: endpoint.id }, transaction });
    await endpoint.destroy({ transaction });
  });
}

export async function rotateSecret(ctx: AppContext, endpoint: WebhookEndpoint): Promise<{ endpoint: WebhookEndpoint; secret: string }> {
  const secret = newSecret();
  await endpoint.update({ secretSealed: sealSecret(secret, ctx.config), secretLastFour: secret.slice(-4), secretRotatedAt: clockNow(ctx) });
  return { endpoint, secret };
}

// ---------------------------------------------------------------------------------------------
// Events (the outbox)

export interface EventInput {
  organizationId: string;
  type: WebhookEventType;
  data: Record<string, unknown>;
  /** Set when the same event may be seen twice (a threshold, a day's stale list): written once. */
  dedupeKey?: string;
}

/** The body every delivery of an event sends, byte for byte. */
function payloadOf(id: string, type: string, createdAt: Date, organizationId: string, data: Record<string, unknown>): string {
  return JSON.stringify({ id, type, createdAt: createdAt.toISOString(), organizationId, data });
}

async function writeEvent(ctx: AppContext, input: { organizationId: string; type: string; data: Record<string, unknown>; dedupeKey?: string | undefined }, endpoints: WebhookEndpoint[], transaction: Transaction): Promise<WebhookEvent> {
  const at = clockNow(ctx);
  const id = `evt_${nanoid(18)}`;
  const event = await WebhookEvent.create(
    { id, organizationId: input.organizationId, type: input.type, dedupeKey: input.dedupeKey ?? null, payload: payloadOf(id, input.type, at, input.organizationId, input.data), createdAt: at },
    { transaction },
  );
  for (const e of endpoints) {
    await WebhookDelivery.create({ id: `whd_${nanoid(16)}`, eventId: id, endpointId: e.id, organizationId: input.organizationId, status: 'pending', nextAttemptAt: at }, { transaction });
  }
  return event;
}

/**
 * Writes the event and its deliveries. With `transaction` (the caller's, where the reported change
 * is written) they commit or roll back with it; `dedupeKey` is for calls outside a transaction.
 * Nothing is written when no active endpoint of the organization chose the kind. Returns the
 * event id, or null (no endpoint, or told already).
 */
export async function emitEvent(ctx: AppContext, input: EventInput, opts: { transaction?: Transaction } = {}): Promise<string | null> {
  const { transaction } = opts;
  const all = await WebhookEndpoint.findAll({ where: { organizationId: input.organizationId, status: 'active' }, attributes: ['id', 'events'], ...(transaction ? { transaction } : {}) });
  const endpoints = all.filter((e) => eventsOf(e).includes(input.type));
  if (endpoints.length === 0) return null;
  if (transaction) {
    if (input.dedupeKey) throw new Error('emitEvent: a dedupeKey is for calls outside a transaction (a refused insert would end the transaction on PostgreSQL)');
    const event = await writeEvent(ctx, input, endpoints, transaction);
    transaction.afterCommit(() => kick(ctx));
    return event.id;
  }
  try {
    const event = await writeTransaction(ctx.sequelize, (t) => writeEvent(ctx, input, endpoints, t));
    kick(ctx);
    return event.id;
  } catch (err) {
    if (err instanceof UniqueConstraintError) return null;
    throw err;
  }
}

/** A `webhook.test` event for this one endpoint (paused or not chosen kinds do not matter: it was asked for). */
export async function sendTestEvent(ctx: AppContext, endpoint: WebhookEndpoint, userName: string): Promise<WebhookDelivery> {
  if (endpoint.status === 'paused') throw new HttpError('conflict', 'This endpoint is paused; resume it to send a test event.');
  const delivery = await writeTransaction(ctx.sequelize, async (transaction) => {
    const event = await writeEvent(ctx, { organizationId: endpoint.organizationId, type: TEST_EVENT_TYPE, data: { message: `A test event sent from the Nadirline console by ${userName}.`, endpointId: endpoint.id } }, [], transaction);
    return WebhookDelivery.create({ id: `whd_${nanoid(16)}`, eventId: event.id, endpointId: endpoint.id, organizationId: endpoint.organizationId, status: 'pending', nextAttemptAt: clockNow(ctx) }, { transaction });
  });
  kick(ctx);
  return delivery;
}

/** The same event to the same endpoint again, as a new delivery (the first keeps its history). */
export async function redeliver(ctx: AppContext, organizationId: string, deliveryId: string): Promise<WebhookDelivery> {
  const old = await WebhookDelivery.findOne({ where: { id: deliveryId, organizationId } });
  if (!old) throw new HttpError('not-found', 'No such webhook delivery in this organization.');
  const endpoint = await endpointOf(organizationId, old.endpointId);
  if (endpoint.status === 'paused') throw new HttpError('conflict', 'The endpoint of this delivery is paused; resume it to send the event again.');
  if (old.status === 'pending' || old.status === 'paused') throw new HttpError('conflict', 'This delivery is still being tried; wait for it to be delivered or to fail.');
  const delivery = await WebhookDelivery.create({ id: `whd_${nanoid(16)}`, eventId: old.eventId, endpointId: old.endpointId, organizationId, status: 'pending', nextAttemptAt: clockNow(ctx), redeliveryOf: old.id });
  kick(ctx);
  return delivery;
}

// ---------------------------------------------------------------------------------------------
// Deliveries as the console lists them

function stateOf(d: WebhookDelivery): WebhookDeliveryState {
  if (d.status === 'delivered' || d.status === 'failed' || d.status === 'paused') return d.status;
  return d.attempts > 0 ? 'retrying' : 'pending';
}

export async function listDeliveries(organizationId: string, opts: { endpointId?: string | undefined; limit?: number; withAttempts?: boolean; ids?: string[] } = {}): Promise<WebhookDeliveryJson[]> {
  const where: Record<string, unknown> = { organizationId };
  if (opts.endpointId) where['endpointId'] = opts.endpointId;
  if (opts.ids) where['id'] = { [Op.in]: opts.ids };
  const rows = await WebhookDelivery.findAll({ where, order: [['createdAt', 'DESC'], ['id', 'DESC']], limit: opts.limit ?? 50 });
  if (rows.length === 0) return [];
  const events = new Map((await WebhookEvent.findAll({ where: { id: { [Op.in]: [...new Set(rows.map((r) => r.eventId))] } }, attributes: ['id', 'type'] })).map((e) => [e.id, e.type]));
  const endpoints = new Map((await WebhookEndpoint.findAll({ where: { id: { [Op.in]: [...new Set(rows.map((r) => r.endpointId))] } }, attributes: ['id', 'url'] })).map((e) => [e.id, e.url]));
  const attempts = new Map<string, WebhookAttemptJson[]>();
  if (opts.withAttempts) {
    for (const a of await WebhookAttempt.findAll({ where: { deliveryId: { [Op.in]: rows.map((r) => r.id) } }, order: [['number', 'ASC']] })) {
      const list = attempts.get(a.deliveryId) ?? [];
      list.push({ number: a.number, startedAt: new Date(a.startedAt).toISOString(), statusCode: a.statusCode, error: a.error, durationMs: a.durationMs });
      attempts.set(a.deliveryId, list);
    }
  }
  return rows.map((d) => ({
    id: d.id,
    eventId: d.eventId,
    eventType: (events.get(d.eventId) ?? TEST_EVENT_TYPE) as WebhookDeliveryJson['eventType'],
    endpointId: d.endpointId,
    endpointUrl: endpoints.get(d.endpointId) ?? '',
    state: stateOf(d),
    attempts: d.attempts,
    maxAttempts: MAX_ATTEMPTS,
    nextAttemptAt: d.status === 'pending' ? iso(d.nextAttemptAt) : null,
    lastStatusCode: d.lastStatusCode ?? null,
    lastError: d.lastError ?? null,
    deliveredAt: iso(d.deliveredAt),
    redeliveryOf: d.redeliveryOf ?? null,
    createdAt: new Date(d.createdAt).toISOString(),
    ...(opts.withAttempts ? { attemptList: attempts.get(d.id) ?? [] } : {}),
  }));
}

// ---------------------------------------------------------------------------------------------
// Sending

interface AttemptOutcome {
  statusCode: number | null;
  error: string | null;
  durationMs: number;
}

/** dns.lookup that refuses addresses endpointUrlProblem would refuse (a name that resolves to a private address). */
function guardedLookup(config: Pick<Config, 'NODE_ENV'>): LookupFunction {
  return (hostname, options, callback) => {
    dns.lookup(hostname, { ...options, all: true }, (err, addresses) => {
      if (err) return callback(err, '', 0);
      const list = addresses as dns.LookupAddress[];
      for (const a of list) {
        const why = addressProblem(a.address, config);
        if (why) return callback(Object.assign(new Error(`${hostname} resolves to ${why}`), { code: 'EADDRREFUSED' }), '', 0);
      }
      if ((options as dns.LookupOptions).all) return (callback as unknown as (e: null, a: dns.LookupAddress[]) => void)(null, list);
      const first = list[0];
      if (!first) return callback(Object.assign(new Error(`${hostname} has no address`), { code: 'ENOTFOUND' }), '', 0);
      callback(null, first.address, first.family);
    });
  };
}

function post(config: Pick<Config, 'NODE_ENV'>, url: string, headers: Record<string, string>, body: string, timeoutMs: number): Promise<AttemptOutcome> {
  const started = performance.now();
  const elapsed = () => Math.round(performance.now() - started);
  return new Promise((resolve) => {
    let done = false;
    const finish = (o: Omit<AttemptOutcome, 'durationMs'>) => {
      if (done) return;
      done = true;
      clearTimeout(timer);
      resolve({ ...o, durationMs: elapsed() });
    };
    const u = new URL(url);
    const host = u.hostname.replace(/^\[|\]$/g, '');
    if (net.isIP(host)) {
      const why = addressProblem(host, config);
      if (why) return finish({ statusCode: null, error: `refused: ${why}` });
    }
    const lib = u.protocol === 'https:' ? https : http;
    const req = lib.request(u, { method: 'POST', headers: { ...headers, 'Content-Length': String(Buffer.byteLength(body)) }, lookup: guardedLookup(config), agent: false });
    const timer = setTimeout(() => {
      req.destroy(Object.assign(new Error(`no answer within ${Math.round(timeoutMs / 1000)} s`), { code: 'ETIMEDOUT' }));
    }, timeoutMs);
    req.on('response', (res) => {
      // The answer's body is not kept; it is read so the connection can close.
      res.on('data', () => undefined);
      res.on('end', () => finish({ statusCode: res.statusCode ?? null, error: null }));
      res.on('error', () => finish({ statusCode: res.statusCode ?? null, error: null }));
    });
    req.on('error', (err: NodeJS.ErrnoException) => finish({ statusCode: null, error: `${err.code ? `${err.code}: ` : ''}${err.message}`.slice(0, 500) }));
    req.end(body);
  });
}

/** Takes one due delivery for `holder`; true when this holder got it. */
async function claim(id: string, holder: string, now: Date): Promise<boolean> {
  const [n] = await WebhookDelivery.update(
    { holder, leaseUntil: new Date(now.getTime() + CLAIM_MS) },
    {
      where: {
        id,
        status: 'pending',
        nextAttemptAt: { [Op.lte]: now },
        [Op.or]: [{ leaseUntil: null }, { leaseUntil: { [Op.lt]: now } }],
      },
    },
  );
  return n === 1;
}

async function attempt(ctx: AppContext, delivery: WebhookDelivery, holder: string): Promise<void> {
  const [endpoint, event] = await Promise.all([WebhookEndpoint.findByPk(delivery.endpointId), WebhookEvent.findByPk(delivery.eventId)]);
  if (!endpoint || !event) return;
  if (endpoint.status === 'paused') {
    await WebhookDelivery.update({ status: 'paused', holder: null, leaseUntil: null }, { where: { id: delivery.id, holder } });
    return;
  }
  const startedAt = clockNow(ctx);
  const timestamp = Math.floor(startedAt.getTime() / 1000);
  let outcome: AttemptOutcome;
  try {
    const secret = openSecret(endpoint.secretSealed, ctx.config);
    outcome = await post(
      ctx.config,
      endpoint.url,
      {
        'Content-Type': 'application/json',
        'User-Agent': 'Nadirline-Webhooks/1',
        [ID_HEADER]: event.id,
        [TIMESTAMP_HEADER]: String(timestamp),
        [SIGNATURE_HEADER]: `v1=${signPayload(secret, event.id, timestamp, event.payload)}`,
        [DELIVERY_HEADER]: delivery.id,
      },
      event.payload,
      ctx.services.webhookTimeoutMs ?? ATTEMPT_TIMEOUT_MS,
    );
  } catch (err) {
    // The secret cannot be opened (SESSION_SECRET changed): nothing was sent; rotating the secret mends it.
    outcome = { statusCode: null, error: `not sent: the signing secret cannot be read (${(err as Error).message}); rotate the endpoint's secret`.slice(0, 500), durationMs: 0 };
  }
  const number = delivery.attempts + 1;
  const ok = outcome.statusCode !== null && outcome.statusCode >= 200 && outcome.statusCode < 300;
  const after = clockNow(ctx);
  const error = ok ? null : (outcome.error ?? `answered HTTP ${outcome.statusCode}`);
  const giveUp = !ok && number >= MAX_ATTEMPTS;
  const delay: number = RETRY_DELAYS_MS[number - 1] ?? RETRY_DELAYS_MS[0];
  await writeTransaction(ctx.sequelize, async (transaction) => {
    const [n] = await WebhookDelivery.update(
      {
        attempts: number,
        status: ok ? 'delivered' : giveUp ? 'failed' : 'pending',
        nextAttemptAt: ok || giveUp ? null : new Date(after.getTime() + delay),
        deliveredAt: ok ? after : null,
        lastStatusCode: outcome.statusCode,
        lastError: error,
        holder: null,
        leaseUntil: null,
      },
      { where: { id: delivery.id, holder, attempts: delivery.attempts }, transaction },
    );
    // n = 0: the endpoint was deleted meanwhile (or the lease ran out and another holder took it).
    if (n === 1) await WebhookAttempt.create({ deliveryId: delivery.id, number, startedAt, statusCode: outcome.statusCode, error, durationMs: outcome.durationMs }, { transaction });
  });
  if (!ok) ctx.logger.info({ deliveryId: delivery.id, attempt: number, statusCode: outcome.statusCode, error, giveUp }, 'webhook attempt not delivered');
}

/** One pass: claims and sends every due delivery (up to a batch). Returns how many attempts this holder made. */
export async function runWebhookDeliveries(ctx: AppContext, opts: { now?: Date; holder?: string } = {}): Promise<number> {
  const at = opts.now ?? clockNow(ctx);
  const holder = opts.holder ?? (ctx.services.webhookWorkerId ??= `proc-${process.pid}-${nanoid(8)}`);
  const due = await WebhookDelivery.findAll({
    where: { status: 'pending', nextAttemptAt: { [Op.lte]: at }, [Op.or]: [{ leaseUntil: null }, { leaseUntil: { [Op.lt]: at } }] },
    order: [['nextAttemptAt', 'ASC']],
    limit: BATCH,
  });
  let made = 0;
  for (const d of due) {
    if (!(await claim(d.id, holder, at))) continue;
    const fresh = await WebhookDelivery.findByPk(d.id);
    if (!fresh || fresh.holder !== holder) continue;
    await attempt(ctx, fresh, holder);
    made += 1;
  }
  return made;
}

function kick(ctx: AppContext): void {
  ctx.services.webhookKick?.();
}

/** Sends due deliveries every WEBHOOK_TICK_MS, and soon after an event of this process. */
export function startWebhookWorker(ctx: AppContext): void {
  let pass: Promise<void> | null = null;
  let again = false;
  let closed = false;
  const tick = () => {
    if (closed) return;
    if (pass) {
      again = true;
      return;
    }
    pass = (async () => {
      try {
        do {
          again = false;
          await runWebhookDeliveries(ctx);
        } while (again && !closed);
      } catch (err) {
        ctx.logger.error({ err }, 'webhook worker pass failed');
      } finally {
        pass = null;
      }
    })();
  };
  const timer = setInterval(tick, ctx.config.WEBHOOK_TICK_MS);
  timer.unref();
  ctx.services.webhookKick = () => {
    setTimeout(tick, 20).unref();
  };
  ctx.onClose(async () => {
    closed = true;
    clearInterval(timer);
    ctx.services.webhookKick = undefined;
    // An attempt in flight ends (at most ATTEMPT_TIMEOUT_MS) before the database closes.
    await pass;
  });
}

/**
 * How a receiver checks a delivery, in Node (the /docs/webhooks page shows it; the integration test
 * runs it as a receiver). Only node: modules, no package.
 */
export const VERIFY_SNIPPET_NODE = `import crypto from 'node:crypto';
import http from 'node:http';

const SECRET = process.env.NADIRLINE_WEBHOOK_SECRET; // nlwh_..., shown once in the console
const TOLERANCE_S = 300; // refuse signatures older than five minutes (replays)
const seen = new Set(); // event ids handled already (keep them in your database)

function verified(headers, body) {
  const id = String(headers['nadirline-webhook-id'] ?? '');
  const timestamp = String(headers['nadirline-webhook-timestamp'] ?? '');
  const given = Buffer.from(String(headers['nadirline-webhook-signature'] ?? '').replace(/^v1=/, ''), 'hex');
  const expected = crypto.createHmac('sha256', SECRET).update(\`\${id}.\${timestamp}.\${body}\`).digest();
  const fresh = Math.abs(Date.now() / 1000 - Number(timestamp)) <= TOLERANCE_S;
  return fresh && given.length === expected.length && crypto.timingSafeEqual(given, expected);
}

http.createServer((req, res) => {
  const chunks = [];
  req.on('data', (c) => chunks.push(c));
  req.on('end', () => {
    const body = Buffer.concat(chunks).toString('utf8'); // the raw body, before any JSON parsing
    if (!verified(req.headers, body)) return void res.writeHead(400).end();
    const event = JSON.parse(body);
    if (!seen.has(event.id)) {
      seen.add(event.id);
      console.log(event.type, JSON.stringify(event.data));
    }
    res.writeHead(204).end(); // any 2xx within 10 s counts as delivered
  });
}).listen(Number(process.env.PORT ?? 3000), '127.0.0.1');
`;
