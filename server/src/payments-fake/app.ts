/**
 * A local stand-in for the payment provider: the few calls Nadirline makes through the
 * provider's SDK, with every object kept in memory, a hosted checkout page and a billing page
 * of its own, and webhook events signed exactly as the SDK's `webhooks.constructEvent` checks
 * them. Nothing here talks to the internet.
 *
 *   const fake = createFakeProvider({ secretKey, webhookSecret, prices });
 *   const url = await fake.listen(0);          // http://127.0.0.1:PORT
 *   fake.setWebhookUrl('http://127.0.0.1:8080/webhooks/payments');
 *   new Stripe(secretKey, { host: '127.0.0.1', port, protocol: 'http' })
 *
 * API (form-encoded bodies as the SDK sends them, JSON answers, `Idempotency-Key` honoured):
 *   POST /v1/customers, GET|POST /v1/customers/:id
 *   GET /v1/prices, GET /v1/prices/:id
 *   POST /v1/checkout/sessions, GET /v1/checkout/sessions/:id
 *   GET|POST|DELETE /v1/subscriptions/:id
 *   GET /v1/invoices?customer=..., GET /v1/invoices/:id
 *   POST /v1/billing_portal/sessions
 * Pages for people: /pay/:session (checkout), /account/:portalSession (billing), /receipt/:invoice
 * Test controls (no key needed, 127.0.0.1 only): POST /_control/subscriptions/:id/renew
 *   { outcome: 'paid' | 'failed' }, POST /_control/events/:id/resend, GET /_control/events
 *
 * Test cards: 4242 4242 4242 4242 is paid; 4000 0000 0000 0002 is declined.
 */
import crypto from 'node:crypto';
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import express, { type Response } from 'express';
import Stripe from 'stripe';

export const TEST_CARD_OK = '4242424242424242';
export const TEST_CARD_DECLINED = '4000000000000002';

export interface FakePrice {
  id: string;
  /** Shown on the checkout page, e.g. "Nadirline Mission". */
  productName: string;
  /** In cents. */
  unitAmount: number;
  currency: string;
}

export interface FakeProviderOptions {
  secretKey: string;
  webhookSecret: string;
  prices: FakePrice[];
  webhookUrl?: string | null;
  /** Length of one billing period, seconds (default 30 days). */
  periodSeconds?: number;
  /** The fake's own clock, seconds (tests move it). */
  now?: () => number;
  log?: (msg: string) => void;
}

type Obj = Record<string, unknown> & { id: string };

interface Stored {
  customers: Map<string, Obj>;
  sessions: Map<string, Obj>;
  subscriptions: Map<string, Obj>;
  invoices: Map<string, Obj>;
  portals: Map<string, Obj>;
  events: Obj[];
  idempotent: Map<string, { status: number; body: unknown }>;
}

export interface FakeProvider {
  app: express.Express;
  readonly store: Stored;
  listen(port?: number, host?: string): Promise<string>;
  /** Where webhook events go; events made while none is set wait and go out when one is set. */
  setWebhookUrl(url: string | null): void;
  /** Resolves when every event made so far has been delivered (or given up on). */
  idle(): Promise<void>;
  url(): string;
  close(): Promise<void>;
  /** Makes a paid, active subscription without the checkout page (fixtures, role tests, the demo seed); `events: false` sends no webhooks. */
  createPaidSubscription(input: { priceId: string; email: string; name: string; metadata: Record<string, string>; events?: boolean }): { customer: Obj; subscription: Obj; invoice: Obj };
  /** Puts back a customer and subscription Nadirline already knows (the fake forgets all on restart); no events. */
  restoreSubscription(input: { customerId: string; subscriptionId: string; priceId: string; email: string; name: string; metadata: Record<string, string>; periodEnd: number; cancelAtPeriodEnd: boolean }): void;
  /** Ends the period of a subscription: a new invoice, paid or failed, and its events. */
  renew(subscriptionId: string, outcome: 'paid' | 'failed'): Obj;
}

function id(prefix: string): string {
  return `${prefix}_${crypto.randomBytes(12).toString('base64url')}`;
}

function escapeHtml(s: unknown): string {
  return String(s ?? '').replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);
}

function money(cents: number, currency: string): string {
  return new Intl.NumberFormat('en', { style: 'currency', currency: currency.toUpperCase() }).format(cents / 100);
}

function list(data: Obj[], url: string) {
  return { object: 'list', data, has_more: false, url };
}

function providerError(res: Response, status: number, message: string, param?: string, type = 'invalid_request_error', code?: string) {
  res.status(status).json({ error: { type, message, ...(param ? { param } : {}), ...(code ? { code } : {}) } });
}

const PAGE_STYLE = `
  body { font: 16px/1.5 system-ui, sans-serif; margin: 0; background: #f4f4f0; color: #222; }
  main { max-width: 30rem; margin: 3rem auto; background: #fff; border: 2px solid #333; padding: 1.5rem 2rem; }
  h1 { font-size: 1.3rem; margin: 0 0 .25rem; }
  .note { font-size: .85rem; color: #555; border-left: 4px solid #999; padding-left: .6rem; }
  label { display: block; margin-top: 1rem; font-weight: 600; }
  input { font: inherit; width: 100%; box-sizing: border-box; padding: .45rem; border: 1px solid #555; }
  button, .button { font: inherit; margin-top: 1.2rem; padding: .5rem 1.2rem; border: 2px solid #222; background: #222; color: #fff; cursor: pointer; text-decoration: none; display: inline-block; }
  .secondary { background: #fff; color: #222; }
  .error { border: 2px solid #a00; color: #a00; padding: .5rem .75rem; margin-top: 1rem; }
  .ok { border: 2px solid #060; color: #060; padding: .5rem .75rem; margin-top: 1rem; }
  table { border-collapse: collapse; width: 100%; margin-top: 1rem; font-size: .9rem; }
  td, th { border-bottom: 1px solid #ccc; text-align: left; padding: .3rem; }
`;

function page(title: string, body: string): string {
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>${escapeHtml(title)}</title><style>${PAGE_STYLE}</style></head><body><main>${body}<p class="note">Local test payment service: no money moves and nothing leaves this machine.</p></main></body></html>`;
}

export function createFakeProvider(options: FakeProviderOptions): FakeProvider {
  const now = options.now ?? (() => Math.floor(Date.now() / 1000));
  const period = options.periodSeconds ?? 30 * 86_400;
  const log = options.log ?? (() => {});
  const signer = new Stripe(options.secretKey);
  const store: Stored = {
    customers: new Map(),
    sessions: new Map(),
    subscriptions: new Map(),
    invoices: new Map(),
    portals: new Map(),
    events: [],
    idempotent: new Map(),
  };
  const prices = new Map(
    options.prices.map((p) => [
      p.id,
      { id: p.id, object: 'price', active: true, currency: p.currency.toLowerCase(), unit_amount: p.unitAmount, recurring: { interval: 'month', interval_count: 1 }, product: `prod_${p.id}`, nickname: p.productName, type: 'recurring', livemode: false } as Obj,
    ]),
  );
  let webhookUrl: string | null = options.webhookUrl ?? null;
  let baseUrl = '';
  let server: Server | null = null;
  const queue: Obj[] = [];
  let delivering: Promise<void> = Promise.resolve();

  // ------------------------------------------------------------------------------- events
  function emit(type: string, object: Obj): Obj {
    const event: Obj = {
      id: id('evt'),
      object: 'event',
      api_version: Stripe.API_VERSION,
      created: now(),
      type,
      livemode: false,
      pending_webhooks: 1,
      request: { id: null, idempotency_key: null },
      data: { object: structuredClone(object) },
    };
    store.events.push(event);
    queue.push(event);
    pump();
    return event;
  }

  async function deliver(event: Obj): Promise<boolean> {
    if (!webhookUrl) return false;
    const payload = JSON.stringify(event);
    // Eight tries over about half a minute (100 ms doubling, capped at 8 s), then the event waits for a resend.
    for (let attempt = 0; attempt < 8; attempt++) {
      const header = signer.webhooks.generateTestHeaderString({ payload, secret: options.webhookSecret, timestamp: Math.floor(Date.now() / 1000) });
      try {
        const res = await fetch(webhookUrl, { method: 'POST', headers: { 'content-type': 'application/json', 'stripe-signature': header }, body: payload });
        if (res.ok) return true;
        log(`webhook ${event['type'] as string} answered ${res.status}`);
        if (res.status >= 400 && res.status < 500) return true;
      } catch (err) {
        log(`webhook ${event['type'] as string} failed: ${(err as Error).message}`);
      }
      await new Promise((r) => setTimeout(r, Math.min(8_000, 100 * 2 ** attempt)));
    }
    return false;
  }

  function pump(): void {
    delivering = delivering.then(async () => {
      while (webhookUrl && queue.length > 0) {
        const event = queue.shift() as Obj;
        await deliver(event);
      }
    });
  }

  // ------------------------------------------------------------------------------- objects
  function priceOr404(priceId: unknown): Obj | null {
    return typeof priceId === 'string' ? (prices.get(priceId) ?? null) : null;
  }

  function newCustomer(body: Record<string, unknown>): Obj {
    const c: Obj = {
      id: id('cus'),
      object: 'customer',
      created: now(),
      email: body['email'] ?? null,
      name: body['name'] ?? null,
      metadata: (body['metadata'] as Record<string, string>) ?? {},
      livemode: false,
      invoice_settings: { default_payment_method: null },
    };
    store.customers.set(c.id, c);
    return c;
  }

  function newInvoice(sub: Obj, status: 'paid' | 'open', reason: string): Obj {
    const item = (sub['items'] as { data: Obj[] }).data[0] as Obj;
    const price = item['price'] as Obj;
    const amount = price['unit_amount'] as number;
    const invId = id('in');
    const inv: Obj = {
      id: invId,
      object: 'invoice',
      number: `NLT-${String(store.invoices.size + 1).padStart(5, '0')}`,
      customer: sub['customer'],
      status,
      currency: price['currency'],
      amount_due: amount,
      amount_paid: status === 'paid' ? amount : 0,
      amount_remaining: status === 'paid' ? 0 : amount,
      created: now(),
      period_start: item['current_period_start'],
      period_end: item['current_period_end'],
      billing_reason: reason,
      attempt_count: 1,
      hosted_invoice_url: `${baseUrl}/receipt/${invId}`,
      invoice_pdf: `${baseUrl}/receipt/${invId}?format=text`,
      parent: { type: 'subscription_details', quote_details: null, subscription_details: { subscription: sub.id, metadata: sub['metadata'] } },
      lines: { object: 'list', data: [{ id: id('il'), object: 'line_item', amount, currency: price['currency'], description: `1 × ${price['nickname'] as string}`, pricing: { price_details: { price: price.id } } }], has_more: false },
      livemode: false,
    };
    store.invoices.set(inv.id, inv);
    sub['latest_invoice'] = inv.id;
    return inv;
  }

  function newSubscription(customerId: string, price: Obj, metadata: Record<string, string>): Obj {
    const start = now();
    const sub: Obj = {
      id: id('sub'),
      object: 'subscription',
      customer: customerId,
      status: 'active',
      cancel_at_period_end: false,
      cancel_at: null,
      canceled_at: null,
      ended_at: null,
      created: start,
      start_date: start,
      metadata,
      currency: price['currency'],
      latest_invoice: null,
      livemode: false,
      items: { object: 'list', data: [{ id: id('si'), object: 'subscription_item', price, quantity: 1, current_period_start: start, current_period_end: start + period }], has_more: false },
    };
    store.subscriptions.set(sub.id, sub);
    return sub;
  }

  function items(sub: Obj): Obj[] {
    return (sub['items'] as { data: Obj[] }).data;
  }

  function renew(subscriptionId: string, outcome: 'paid' | 'failed'): Obj {
    const sub = store.subscriptions.get(subscriptionId);
    if (!sub) throw new Error(`no subscription ${subscriptionId}`);
    const item = items(sub)[0] as Obj;
    const start = item['current_period_end'] as number;
    item['current_period_start'] = start;
    item['current_period_end'] = start + period;
    if (sub['cancel_at_period_end']) {
      sub['status'] = 'canceled';
      sub['ended_at'] = now();
      sub['canceled_at'] ??= now();
      emit('customer.subscription.deleted', sub);
      return sub;
    }
    const inv = newInvoice(sub, outcome === 'paid' ? 'paid' : 'open', 'subscription_cycle');
    if (outcome === 'paid') {
      sub['status'] = 'active';
      emit('invoice.paid', inv);
    } else {
      sub['status'] = 'past_due';
      emit('invoice.payment_failed', inv);
    }
    emit('customer.subscription.updated', sub);
    return sub;
  }

  function payOpenInvoices(sub: Obj): void {
    for (const inv of store.invoices.values()) {
      if (inv['status'] === 'open' && (inv['parent'] as { subscription_details: { subscription: string } }).subscription_details.subscription === sub.id) {
        inv['status'] = 'paid';
        inv['amount_paid'] = inv['amount_due'];
        inv['amount_remaining'] = 0;
        inv['attempt_count'] = (inv['attempt_count'] as number) + 1;
        emit('invoice.paid', inv);
      }
    }
    if (sub['status'] === 'past_due') {
      sub['status'] = 'active';
      emit('customer.subscription.updated', sub);
    }
  }

  function completeCheckout(session: Obj): Obj {
    const price = prices.get(session['price_id'] as string) as Obj;
    const metadata = (session['subscription_metadata'] as Record<string, string>) ?? {};
    const sub = newSubscription(session['customer'] as string, price, metadata);
    const inv = newInvoice(sub, 'paid', 'subscription_create');
    session['status'] = 'complete';
    session['payment_status'] = 'paid';
    session['subscription'] = sub.id;
    session['invoice'] = inv.id;
    emit('customer.subscription.created', sub);
    emit('checkout.session.completed', session);
    emit('invoice.paid', inv);
    return sub;
  }

  // ------------------------------------------------------------------------------- app
  const app = express();
  app.disable('x-powered-by');
  app.use(express.urlencoded({ extended: true, limit: '100kb' }));
  app.use(express.json({ limit: '100kb' }));

  const v1 = express.Router();
  v1.use((req, res, next) => {
    const auth = req.get('authorization') ?? '';
    if (auth !== `Bearer ${options.secretKey}`) return providerError(res, 401, 'Invalid API key provided.', undefined, 'invalid_request_error', 'api_key_invalid');
    const key = req.get('idempotency-key');
    if (key && req.method === 'POST') {
      const cacheKey = `${req.method} ${req.path} ${key}`;
      const hit = store.idempotent.get(cacheKey);
      if (hit) {
        res.set('Idempotent-Replayed', 'true');
        return res.status(hit.status).json(hit.body);
      }
      const json = res.json.bind(res);
      res.json = (body: unknown) => {
        store.idempotent.set(cacheKey, { status: res.statusCode, body });
        return json(body);
      };
    }
    next();
  });

  v1.post('/customers', (req, res) => {
    res.json(newCustomer(req.body ?? {}));
  });
  v1.get('/customers/:id', (req, res) => {
    const c = store.customers.get(req.params.id);
    if (!c) return providerError(res, 404, `No such customer: '${req.params.id}'`, 'id', 'invalid_request_error', 'resource_missing');
    res.json(c);
  });
  v1.post('/customers/:id', (req, res) => {
    const c = store.customers.get(req.params.id);
    if (!c) return providerError(res, 404, `No such customer: '${req.params.id}'`, 'id', 'invalid_request_error', 'resource_missing');
    for (const k of ['email', 'name'] as const) if (typeof req.body?.[k] === 'string') c[k] = req.body[k];
    res.json(c);
  });
  v1.get('/prices', (_req, res) => {
    res.json(list([...prices.values()], '/v1/prices'));
  });
  v1.get('/prices/:id', (req, res) => {
    const p = prices.get(req.params.id);
    if (!p) return providerError(res, 404, `No such price: '${req.params.id}'`, 'id', 'invalid_request_error', 'resource_missing');
    res.json(p);
  });

  v1.post('/checkout/sessions', (req, res) => {
    const b = (req.body ?? {}) as Record<string, unknown>;
    const lineItems = (b['line_items'] as Array<Record<string, unknown>> | undefined) ?? [];
    const price = priceOr404(lineItems[0]?.['price']);
    if (b['mode'] !== 'subscription') return providerError(res, 400, 'Only mode=subscription is supported here.', 'mode');
    if (!price) return providerError(res, 400, `No such price: '${String(lineItems[0]?.['price'] ?? '')}'`, 'line_items[0][price]', 'invalid_request_error', 'resource_missing');
    if (typeof b['success_url'] !== 'string') return providerError(res, 400, 'Missing required param: success_url.', 'success_url');
    let customer = typeof b['customer'] === 'string' ? b['customer'] : null;
    if (customer && !store.customers.has(customer)) return providerError(res, 400, `No such customer: '${customer}'`, 'customer', 'invalid_request_error', 'resource_missing');
    if (!customer) customer = newCustomer({ email: b['customer_email'] }).id;
    const sid = id('cs_test');
    const session: Obj = {
      id: sid,
      object: 'checkout.session',
      mode: 'subscription',
      status: 'open',
      payment_status: 'unpaid',
      customer,
      client_reference_id: b['client_reference_id'] ?? null,
      metadata: b['metadata'] ?? {},
      subscription_metadata: ((b['subscription_data'] as Record<string, unknown> | undefined)?.['metadata'] as Record<string, string>) ?? {},
      price_id: price.id,
      amount_total: price['unit_amount'],
      currency: price['currency'],
      success_url: b['success_url'],
      cancel_url: b['cancel_url'] ?? null,
      subscription: null,
      invoice: null,
      url: `${baseUrl}/pay/${sid}`,
      created: now(),
      expires_at: now() + 86_400,
      livemode: false,
    };
    store.sessions.set(sid, session);
    res.json(session);
  });
  v1.get('/checkout/sessions/:id', (req, res) => {
    const s = store.sessions.get(req.params.id);
    if (!s) return providerError(res, 404, `No such checkout session: '${req.params.id}'`, 'id', 'invalid_request_error', 'resource_missing');
    res.json(s);
  });

  v1.get('/subscriptions/:id', (req, res) => {
    const s = store.subscriptions.get(req.params.id);
    if (!s) return providerError(res, 404, `No such subscription: '${req.params.id}'`, 'id', 'invalid_request_error', 'resource_missing');
    res.json(s);
  });
  v1.post('/subscriptions/:id', (req, res) => {
    const s = store.subscriptions.get(req.params.id);
    if (!s) return providerError(res, 404, `No such subscription: '${req.params.id}'`, 'id', 'invalid_request_error', 'resource_missing');
    if (s['status'] === 'canceled') return providerError(res, 400, 'A canceled subscription can only update its cancellation_details and metadata.', undefined, 'invalid_request_error', 'resource_missing');
    const b = (req.body ?? {}) as Record<string, unknown>;
    if (b['cancel_at_period_end'] !== undefined) {
      const on = b['cancel_at_period_end'] === 'true' || b['cancel_at_period_end'] === true;
      s['cancel_at_period_end'] = on;
      s['cancel_at'] = on ? (items(s)[0] as Obj)['current_period_end'] : null;
      s['canceled_at'] = on ? now() : null;
    }
    const newItems = b['items'] as Array<Record<string, unknown>> | undefined;
    if (newItems?.[0]) {
      const price = priceOr404(newItems[0]['price']);
      if (!price) return providerError(res, 400, `No such price: '${String(newItems[0]['price'] ?? '')}'`, 'items[0][price]', 'invalid_request_error', 'resource_missing');
      (items(s)[0] as Obj)['price'] = price;
    }
    if (b['metadata'] && typeof b['metadata'] === 'object') s['metadata'] = { ...(s['metadata'] as object), ...(b['metadata'] as object) };
    emit('customer.subscription.updated', s);
    res.json(s);
  });
  v1.delete('/subscriptions/:id', (req, res) => {
    const s = store.subscriptions.get(req.params.id);
    if (!s) return providerError(res, 404, `No such subscription: '${req.params.id}'`, 'id', 'invalid_request_error', 'resource_missing');
    s['status'] = 'canceled';
    s['canceled_at'] = now();
    s['ended_at'] = now();
    emit('customer.subscription.deleted', s);
    res.json(s);
  });

  v1.get('/invoices', (req, res) => {
    const customer = typeof req.query['customer'] === 'string' ? req.query['customer'] : null;
    const data = [...store.invoices.values()].filter((i) => !customer || i['customer'] === customer).reverse();
    res.json(list(data, '/v1/invoices'));
  });
  v1.get('/invoices/:id', (req, res) => {
    const i = store.invoices.get(req.params.id);
    if (!i) return providerError(res, 404, `No such invoice: '${req.params.id}'`, 'id', 'invalid_request_error', 'resource_missing');
    res.json(i);
  });

  v1.post('/billing_portal/sessions', (req, res) => {
    const b = (req.body ?? {}) as Record<string, unknown>;
    const customer = typeof b['customer'] === 'string' ? store.customers.get(b['customer']) : undefined;
    if (!customer) return providerError(res, 400, `No such customer: '${String(b['customer'] ?? '')}'`, 'customer', 'invalid_request_error', 'resource_missing');
    const pid = id('bps');
    const portal: Obj = { id: pid, object: 'billing_portal.session', customer: customer.id, return_url: b['return_url'] ?? null, url: `${baseUrl}/account/${pid}`, created: now(), livemode: false };
    store.portals.set(pid, portal);
    res.json(portal);
  });
  v1.use((req, res) => providerError(res, 404, `Unrecognized request URL (${req.method}: ${req.originalUrl}).`));
  app.use('/v1', v1);

  // ------------------------------------------------------------------------------- pages
  function checkoutPage(session: Obj, message?: { kind: 'error' | 'ok'; text: string }): string {
    const price = prices.get(session['price_id'] as string) as Obj;
    const cancel = session['cancel_url'] ? `<a class="button secondary" href="${escapeHtml(session['cancel_url'])}">Cancel and go back</a>` : '';
    return page(
      'Pay for your plan',
      `<h1>Pay for ${escapeHtml(price['nickname'])}</h1>
      <p><strong>${escapeHtml(money(price['unit_amount'] as number, price['currency'] as string))}</strong> per month, renewed monthly until cancelled.</p>
      ${message ? `<p class="${message.kind}" role="${message.kind === 'error' ? 'alert' : 'status'}">${escapeHtml(message.text)}</p>` : ''}
      <form method="post" action="/pay/${escapeHtml(session.id)}">
        <label for="card">Card number</label>
        <input id="card" name="card" inputmode="numeric" autocomplete="off" placeholder="4242 4242 4242 4242" required>
        <label for="holder">Name on card</label>
        <input id="holder" name="holder" autocomplete="off">
        <button type="submit">Pay ${escapeHtml(money(price['unit_amount'] as number, price['currency'] as string))}</button>
        ${cancel}
      </form>
      <p class="note">Test cards: 4242 4242 4242 4242 is accepted; 4000 0000 0000 0002 is declined.</p>`,
    );
  }

  app.get('/pay/:id', (req, res) => {
    const s = store.sessions.get(req.params.id);
    if (!s) return res.status(404).type('html').send(page('Not found', '<h1>This payment link is not known</h1>'));
    if (s['status'] !== 'open') return res.type('html').send(page('Already paid', `<h1>This payment is complete</h1><p><a class="button" href="${escapeHtml(String(s['success_url']).replace('{CHECKOUT_SESSION_ID}', s.id))}">Continue</a></p>`));
    res.type('html').send(checkoutPage(s));
  });
  app.post('/pay/:id', (req, res) => {
    const s = store.sessions.get(req.params.id);
    if (!s) return res.status(404).type('html').send(page('Not found', '<h1>This payment link is not known</h1>'));
    if (s['status'] !== 'open') return res.redirect(303, String(s['success_url']).replace('{CHECKOUT_SESSION_ID}', s.id));
    const card = String(req.body?.card ?? '').replace(/\D/g, '');
    if (card === TEST_CARD_DECLINED) {
      return res.status(402).type('html').send(checkoutPage(s, { kind: 'error', text: 'Your card was declined. Nothing was charged. Try another card, or cancel and go back.' }));
    }
    if (card !== TEST_CARD_OK) {
      return res.status(400).type('html').send(checkoutPage(s, { kind: 'error', text: 'That card number is not one of the test cards this service accepts.' }));
    }
    completeCheckout(s);
    res.redirect(303, String(s['success_url']).replace('{CHECKOUT_SESSION_ID}', s.id));
  });

  function portalPage(portal: Obj, message?: string): string {
    const subs = [...store.subscriptions.values()].filter((s) => s['customer'] === portal['customer']);
    const invoices = [...store.invoices.values()].filter((i) => i['customer'] === portal['customer']).reverse();
    const rows = subs
      .map((s) => {
        const item = items(s)[0] as Obj;
        const price = item['price'] as Obj;
        const end = new Date((item['current_period_end'] as number) * 1000).toISOString().slice(0, 10);
        const state = s['status'] === 'canceled' ? 'cancelled' : s['cancel_at_period_end'] ? `ends ${end}` : `${s['status'] as string}, renews ${end}`;
        const action =
          s['status'] === 'canceled'
            ? ''
            : s['cancel_at_period_end']
              ? `<form method="post" action="/account/${escapeHtml(portal.id)}/resume"><input type="hidden" name="subscription" value="${escapeHtml(s.id)}"><button type="submit" class="secondary">Keep renewing</button></form>`
              : `<form method="post" action="/account/${escapeHtml(portal.id)}/cancel"><input type="hidden" name="subscription" value="${escapeHtml(s.id)}"><button type="submit" class="secondary">Cancel at period end</button></form>`;
        return `<tr><td>${escapeHtml(price['nickname'])}</td><td>${escapeHtml(state)}</td><td>${action}</td></tr>`;
      })
      .join('');
    const invRows = invoices
      .map((i) => `<tr><td><a href="${escapeHtml(i['hosted_invoice_url'])}">${escapeHtml(i['number'])}</a></td><td>${escapeHtml(money(i['amount_due'] as number, i['currency'] as string))}</td><td>${escapeHtml(i['status'])}</td></tr>`)
      .join('');
    const back = portal['return_url'] ? `<p><a class="button" href="${escapeHtml(portal['return_url'])}">Back to Nadirline</a></p>` : '';
    return page(
      'Billing',
      `<h1>Billing</h1>${message ? `<p class="ok" role="status">${escapeHtml(message)}</p>` : ''}
      <table><thead><tr><th>Plan</th><th>State</th><th></th></tr></thead><tbody>${rows || '<tr><td colspan="3">No subscription.</td></tr>'}</tbody></table>
      <form method="post" action="/account/${escapeHtml(portal.id)}/card"><label for="card">Replace the card</label><input id="card" name="card" inputmode="numeric" autocomplete="off" placeholder="4242 4242 4242 4242"><button type="submit">Save card and pay what is due</button></form>
      <table><thead><tr><th>Invoice</th><th>Amount</th><th>Status</th></tr></thead><tbody>${invRows || '<tr><td colspan="3">No invoices yet.</td></tr>'}</tbody></table>${back}`,
    );
  }

  app.get('/account/:id', (req, res) => {
    const p = store.portals.get(req.params.id);
    if (!p) return res.status(404).type('html').send(page('Not found', '<h1>This billing link is not known</h1>'));
    res.type('html').send(portalPage(p));
  });
  app.post('/account/:id/:action', (req, res) => {
    const p = store.portals.get(req.params.id);
    if (!p) return res.status(404).type('html').send(page('Not found', '<h1>This billing link is not known</h1>'));
    const sub = store.subscriptions.get(String(req.body?.subscription ?? ''));
    if (req.params.action === 'card') {
      const card = String(req.body?.card ?? '').replace(/\D/g, '');
      if (card !== TEST_CARD_OK) return res.status(402).type('html').send(portalPage(p, 'That card was declined; nothing changed.'));
      for (const s of store.subscriptions.values()) if (s['customer'] === p['customer']) payOpenInvoices(s);
      return res.type('html').send(portalPage(p, 'Card saved; what was due is paid.'));
    }
    if (!sub || sub['customer'] !== p['customer']) return res.status(404).type('html').send(portalPage(p, 'No such subscription.'));
    if (req.params.action === 'cancel' || req.params.action === 'resume') {
      const on = req.params.action === 'cancel';
      sub['cancel_at_period_end'] = on;
      sub['cancel_at'] = on ? (items(sub)[0] as Obj)['current_period_end'] : null;
      sub['canceled_at'] = on ? now() : null;
      emit('customer.subscription.updated', sub);
      return res.type('html').send(portalPage(p, on ? 'The subscription ends at the end of the period.' : 'The subscription keeps renewing.'));
    }
    res.status(404).type('html').send(portalPage(p));
  });

  app.get('/receipt/:id', (req, res) => {
    const i = store.invoices.get(req.params.id);
    if (!i) return res.status(404).type('html').send(page('Not found', '<h1>No such invoice</h1>'));
    const amount = money(i['amount_due'] as number, i['currency'] as string);
    const day = (s: unknown) => new Date((s as number) * 1000).toISOString().slice(0, 10);
    if (req.query['format'] === 'text') {
      res.attachment(`${i['number'] as string}.txt`).type('text/plain').send(`Invoice ${i['number'] as string}\nAmount ${amount}\nStatus ${i['status'] as string}\nPeriod ${day(i['period_start'])} to ${day(i['period_end'])}\n`);
      return;
    }
    res.type('html').send(page(`Invoice ${i['number'] as string}`, `<h1>Invoice ${escapeHtml(i['number'])}</h1><p>${escapeHtml(amount)} · ${escapeHtml(i['status'])}</p><p>Period ${escapeHtml(day(i['period_start']))} to ${escapeHtml(day(i['period_end']))}</p>`));
  });

  // ------------------------------------------------------------------------------- test controls
  app.get('/_control/events', (_req, res) => {
    res.json({ events: store.events.map((e) => ({ id: e.id, type: e['type'], created: e['created'] })) });
  });
  app.post('/_control/events/:id/resend', (req, res) => {
    const e = store.events.find((x) => x.id === req.params.id);
    if (!e) return providerError(res, 404, 'No such event.');
    queue.push(e);
    pump();
    res.json({ ok: true });
  });
  app.post('/_control/subscriptions/:id/renew', (req, res) => {
    if (!store.subscriptions.has(req.params.id)) return providerError(res, 404, 'No such subscription.');
    res.json(renew(req.params.id, req.body?.outcome === 'failed' ? 'failed' : 'paid'));
  });

  return {
    app,
    store,
    url: () => baseUrl,
    async listen(port = 0, host = '127.0.0.1') {
      server = await new Promise<Server>((resolve, reject) => {
        const s = app.listen(port, host, (err?: Error) => (err ? reject(err) : resolve(s)));
      });
      const address = server.address() as AddressInfo;
      baseUrl = `http://${host}:${address.port}`;
      return baseUrl;
    },
    setWebhookUrl(url) {
      webhookUrl = url;
      pump();
    },
    async idle() {
      let last: Promise<void> | undefined;
      while (last !== delivering) {
        last = delivering;
        await last;
      }
    },
    async close() {
      const s = server;
      server = null;
      if (!s) return;
      s.closeAllConnections();
      await new Promise<void>((resolve) => s.close(() => resolve()));
    },
    createPaidSubscription(input) {
      const price = prices.get(input.priceId);
      if (!price) throw new Error(`no price ${input.priceId}`);
      const customer = newCustomer({ email: input.email, name: input.name, metadata: input.metadata });
      const subscription = newSubscription(customer.id, price, input.metadata);
      const invoice = newInvoice(subscription, 'paid', 'subscription_create');
      if (input.events !== false) {
        emit('customer.subscription.created', subscription);
        emit('invoice.paid', invoice);
      }
      return { customer, subscription, invoice };
    },
    restoreSubscription(input) {
      const price = prices.get(input.priceId);
      if (!price || store.subscriptions.has(input.subscriptionId)) return;
      if (!store.customers.has(input.customerId)) {
        const c = newCustomer({ email: input.email, name: input.name, metadata: input.metadata });
        store.customers.delete(c.id);
        c.id = input.customerId;
        store.customers.set(c.id, c);
      }
      const sub = newSubscription(input.customerId, price, input.metadata);
      store.subscriptions.delete(sub.id);
      sub.id = input.subscriptionId;
      sub['cancel_at_period_end'] = input.cancelAtPeriodEnd;
      const item = items(sub)[0] as Obj;
      item['current_period_end'] = input.periodEnd;
      item['current_period_start'] = input.periodEnd - period;
      store.subscriptions.set(sub.id, sub);
    },
    renew,
  };
}
