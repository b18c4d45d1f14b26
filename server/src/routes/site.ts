/**
 * Static hosting and pages served by the app:
 *   /widget/*          widget/dist: hashed files cached for a year (immutable), nadir-track.js and
 *                      nadir-track.iife.js for 5 minutes (revalidated by ETag); readable from any
 *                      origin (CORS *, CORP cross-origin), since pages on other sites load them.
 *                      /widget/nadir-track.<version>.js and nadir-track.iife.<version>.js are the
 *                      same scripts under a versioned name (the first 10 hex digits of the file's
 *                      SHA-256), cached for a year; /widget/versions.json names the current ones.
 *                      A version that is no longer built redirects (302, short cache) to the plain URL.
 *                      Text answers are compressed (gzip or brotli) by the app (app.ts).
 *   /embed/:id         a page holding only <nadir-track embed="ID"> for a saved embed; framable by
 *                      the origins of the embed's key. Framed by a page of another origin (its
 *                      Referer) the key does not list, it answers our own short refusal page,
 *                      framable anywhere, instead of a frame the browser would blank. Framed by
 *                      another origin that sends no Referer (Referrer-Policy: no-referrer), it
 *                      first answers a framable check page whose script (/embed/frame-check.js)
 *                      reads the framing origins (location.ancestorOrigins, else
 *                      document.referrer) and reloads /embed/:id?framers=<origins>: an origin
 *                      there that the key does not list gets the refusal page, anything else the
 *                      map under the key's frame-ancestors, so the browser still enforces the lock.
 *   /examples/*        examples/: in demo mode, {{BROWSER_KEY}}, {{SATELLITE_IDS}}, {{EMBED_ID}} and
 *                      {{API_BASE}} in .html/.js files are replaced from the demo credentials.
 *   /docs/api          API reference rendered from the OpenAPI document; /docs/problems the problem codes;
 *                      /docs/webhooks webhooks out (events, signature, retries).
 *   /fonts/*.woff2     Work Sans (from @fontsource/work-sans) for the server's own pages.
 *   /                  console/dist, a single-page app: other GETs that accept HTML and are not
 *                      under /v1, /api, /dev get index.html (history fallback).
 * Missing builds answer a clear page (HTML) or problem (anything else).
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { escapeMarkup as esc } from '@nadirline/shared';
import express, { Router, type Request, type Response } from 'express';
import { repoRoot } from '../config.ts';
import type { AppContext } from '../context.ts';
import { HttpError, PROBLEM_TYPE_BASE, sendProblem } from '../http/problem.ts';
import { securityHeaders } from '../http/security.ts';
import { getEmbedService } from '../services/embeds.ts';
import { getKeyService, originAllowed } from '../services/keys.ts';
import { buildOpenApi, PROBLEM_DOCS } from '../services/openapi.ts';
import { ATTEMPT_TIMEOUT_MS, MAX_ATTEMPTS, RETRY_DELAYS_MS, VERIFY_SNIPPET_NODE, WEBHOOK_EVENT_TYPES } from '../services/webhooks.ts';
import { PAGE_CSS } from './page-style.ts';

/** The Nadirline mark: a ring (the orbit) with the point beneath it (the nadir). */
const FAVICON_SVG =
  "<svg xmlns='http://www.w3.org/2000/svg' viewBox='0 0 32 32'><circle cx='16' cy='16' r='13' fill='none' stroke='#08646f' stroke-width='3'/><circle cx='16' cy='27' r='3' fill='#08646f'/></svg>";

const YEAR_S = 31_536_000;
const HASHED = /[.-][A-Za-z0-9_-]{8,}\.[a-z0-9]+$/;


/** Escaped text with `backticks` shown as code. */
function prose(s: string): string {
  return esc(s).replace(/`([^`]+)`/g, '<code>$1</code>');
}

function fontDir(): string | null {
  try {
    const require = createRequire(import.meta.url);
    return path.join(path.dirname(require.resolve('@fontsource/work-sans/package.json')), 'files');
  } catch {
    const p = path.join(repoRoot, 'node_modules', '@fontsource', 'work-sans', 'files');
    return fs.existsSync(p) ? p : null;
  }
}


/** A table that stacks on narrow screens: the first column leads each block, the others carry their column's name. */
function stackTable(headers: readonly string[], rows: ReadonlyArray<{ id?: string; cells: readonly string[] }>): string {
  const head = `<tr class="head">${headers.map((h) => `<th scope="col">${esc(h)}</th>`).join('')}</tr>`;
  const body = rows
    .map((r) => `<tr${r.id ? ` id="${esc(r.id)}"` : ''}>${r.cells.map((c, i) => (i === 0 ? `<td class="lead">${c}</td>` : `<td data-label="${esc(headers[i] ?? '')}">${c}</td>`)).join('')}</tr>`)
    .join('');
  return `<table class="stack">${head}${body}</table>`;
}

function page(title: string, body: string): string {
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="color-scheme" content="light dark"><title>${esc(title)} · Nadirline</title>
<style>${PAGE_CSS}</style></head>
<body><main>${body}</main></body></html>`;
}

// ---------------------------------------------------------------------------------------------
// API reference, rendered from the OpenAPI document.

type Json = Record<string, unknown>;

/** The one non-null branch of `X | null` (zod writes it as anyOf [X, { type: null }]), and whether null was allowed. */
function unwrapNull(schema: Json): { inner: Json; nullable: boolean } {
  const branches = schema.anyOf as Json[] | undefined;
  if (!Array.isArray(branches)) return { inner: schema, nullable: false };
  const real = branches.filter((b) => b.type !== 'null');
  if (real.length === 1 && real.length < branches.length) return { inner: { ...real[0], ...(schema.description ? { description: schema.description } : {}) }, nullable: true };
  return { inner: schema, nullable: false };
}

/** The branches of a union of several shapes (anyOf / oneOf), or none. */
function variantsOf(schema: Json): Json[] {
  const list = (schema.oneOf ?? schema.anyOf) as Json[] | undefined;
  return Array.isArray(list) ? list.filter((b) => b.type !== 'null') : [];
}

function schemaText(schema: Json | undefined): string {
  if (!schema) return '';
  const { inner, nullable } = unwrapNull(schema);
  if (nullable) return `${schemaText(inner)} <span class="muted">or null</span>`;
  const parts: string[] = [];
  const items = schema.items as Json | undefined;
  const type = schema.type === 'array' && items?.type ? `array of ${String(items.type)}` : (schema.type ?? (schema.enum ? 'enum' : variantsOf(schema).length ? 'one of' : schema.const !== undefined ? 'constant' : ''));
  parts.push(Array.isArray(type) ? type.map(String).join(' or ') : String(type));
  if (Array.isArray(schema.enum)) parts.push(`(${schema.enum.map((v) => `<code>${esc(String(v))}</code>`).join(' | ')})`);
  if (schema.const !== undefined) parts.push(`<code>${esc(String(schema.const))}</code>`);
  if (schema.format) parts.push(`<span class="muted">${esc(String(schema.format))}</span>`);
  const bounded = (v: unknown) => v !== undefined && Math.abs(Number(v)) < Number.MAX_SAFE_INTEGER;
  if (bounded(schema.minimum) || bounded(schema.maximum)) parts.push(`<span class="muted">${bounded(schema.minimum) ? schema.minimum : '…'} to ${bounded(schema.maximum) ? schema.maximum : '…'}</span>`);
  if (schema.default !== undefined) parts.push(`<span class="muted">default ${esc(JSON.stringify(schema.default))}</span>`);
  return parts.join(' ');
}

interface FieldRow {
  /** Dotted path from the top of the body: `parts[].elementSet.id`. */
  path: string;
  schema: Json;
  /** "variant 1 of 2" for a row that introduces one shape of a union. */
  variant?: string;
}

/** Rows for every field below `schema`, nested objects, array items and each shape of a union included. */
export function fieldRows(schema: Json | undefined, prefix = '', out: FieldRow[] = []): FieldRow[] {
  if (!schema) return out;
  const { inner } = unwrapNull(schema);
  const props = inner.properties as Record<string, Json> | undefined;
  if (props) {
    for (const [k, v] of Object.entries(props)) {
      const path = prefix ? `${prefix}.${k}` : k;
      out.push({ path, schema: v });
      below(v, path, out);
    }
  }
  return out;
}

function below(field: Json, path: string, out: FieldRow[]): void {
  const { inner } = unwrapNull(field);
  if (inner.type === 'array' && inner.items) {
    below(inner.items as Json, `${path}[]`, out);
    return;
  }
  const variants = variantsOf(inner);
  if (variants.length > 1) {
    variants.forEach((v, i) => {
      out.push({ path, schema: v, variant: `variant ${i + 1} of ${variants.length}` });
      fieldRows(v, path, out);
    });
    return;
  }
  fieldRows(inner, path, out);
}

function fieldsTable(schema: Json | undefined): string {
  const rows = fieldRows(schema).map((r) => {
    // Each segment unbroken, a break allowed after each dot; the parents muted, the field itself plain.
    const segments = r.path.split('.');
    const name = segments.map((seg, i) => `<span${i < segments.length - 1 ? ' class="muted"' : ''}>${esc(seg)}${i < segments.length - 1 ? '.' : ''}</span>`).join('<wbr>');
    const { inner } = unwrapNull(r.schema);
    const description = String(r.schema.description ?? inner.description ?? '');
    return {
      cells: [`<code class="field">${name}</code>${r.variant ? ` <span class="muted">${esc(r.variant)}</span>` : ''}`, r.variant ? 'object' : schemaText(r.schema), prose(description)],
    };
  });
  return rows.length ? stackTable(['field', 'type', 'meaning'], rows) : '';
}

/** Values that make each route's example runnable against the demo data (the README shows how to set KEY and SAT). */
const EXAMPLE_VALUES: Record<string, string> = {
  id: '$SAT',
  ids: '$SAT,$SAT2',
  lat: '51.38',
  lon: '-2.36',
  step: '60',
  days: '2',
};

/**
 * A curl line for one route: the base URL, the path with its ids, the required query parameters
 * (and a telling optional one), the credential the route takes, and a body for uploads.
 */
export function exampleRequest(method: string, p: string, op: Json, baseUrl: string): string {
  const params = (op.parameters as Json[] | undefined) ?? [];
  const path = p.replace(/\{(\w+)\}/g, (_m, name: string) => (name === 'id' && p.startsWith('/v1/embeds') ? '$EMBED' : (EXAMPLE_VALUES[name] ?? `$${name.toUpperCase()}`)));
  const query = params
    .filter((x) => x.in === 'query' && x.name !== 'key' && x.name !== 'embed' && (x.required || x.name === 'step' || x.name === 'days'))
    .map((x) => `${String(x.name)}=${EXAMPLE_VALUES[String(x.name)] ?? String((x.schema as Json | undefined)?.example ?? (x as Json).example ?? '')}`);
  const url = `${baseUrl}${path}${query.length ? `?${query.join('&')}` : ''}`;
  const secured = ((op.security as unknown[] | undefined) ?? []).length > 0;
  const parts = ['curl'];
  if (method === 'post') parts.push('-X POST');
  if (secured) parts.push(method === 'post' ? '-H "Authorization: Bearer $SERVER_KEY"' : '-H "Authorization: Bearer $KEY"');
  const body = op.requestBody as Json | undefined;
  const types = body ? Object.keys(body.content as Json) : [];
  if (types.includes('text/plain')) parts.push('-H "Content-Type: text/plain" --data-binary @elements.tle');
  else if (types.includes('application/json')) parts.push(`-H "Content-Type: application/json" -d '{"name": "Kestrel-2", "elements": "<TLE or OMM text>"}'`);
  parts.push(`"${url}"`);
  return parts.join(' ');
}

/** A request body: each media type with what it holds, and the fields of JSON and form bodies. */
function bodyText(body: Json): string {
  return Object.entries(body.content as Record<string, Json>)
    .map(([type, media]) => {
      const schema = media.schema as Json | undefined;
      const what = String(media.description ?? (schema?.properties ? '' : (schema?.description ?? '')));
      return `<p><code>${esc(type)}</code>${what ? ` ${prose(what)}` : ''}</p>${fieldsTable(schema)}`;
    })
    .join('');
}

export function renderApiReference(doc: ReturnType<typeof buildOpenApi>, baseUrl: string): string {
  const info = doc.info as Json;
  const sections: string[] = [];
  const index: string[] = [];
  for (const [p, ops] of Object.entries(doc.paths)) {
    for (const [method, opRaw] of Object.entries(ops)) {
      const op = opRaw as Json;
      const anchor = String(op.operationId);
      index.push(`<li><a href="#${esc(anchor)}"><span class="method">${method.toUpperCase()}</span> <code>${esc(p)}</code></a> <span class="muted">${esc(String(op.summary))}</span></li>`);
      const params = (op.parameters as Json[]).filter((x) => x.in !== 'query' || (x.name !== 'key' && x.name !== 'embed'));
      const paramRows = params.map((x) => ({
        cells: [`<code>${esc(String(x.name))}</code>`, `${esc(String(x.in))}${x.required ? ', required' : ''}`, schemaText(x.schema as Json), prose(String(x.description ?? ''))],
      }));
      const responses = Object.entries(op.responses as Record<string, Json>)
        .map(([status, r]) => {
          const content = r.content as Record<string, Json> | undefined;
          const json = content?.['application/json']?.schema as Json | undefined;
          const other = json ? undefined : (Object.values(content ?? {})[0]?.schema as Json | undefined);
          const otherText = other?.description ? `<p class="muted">${prose(String(other.description))}</p>` : '';
          return `<h3>${esc(status)} <span class="muted">${prose(String(r.description ?? ''))}</span></h3>${status.startsWith('2') ? fieldsTable(json) || otherText : ''}`;
        })
        .join('');
      const body = op.requestBody as Json | undefined;
      const bodyTypes = body ? Object.keys(body.content as Json) : [];
      sections.push(`<section id="${esc(anchor)}">
<h2><span class="method">${method.toUpperCase()}</span> <code>${esc(p)}</code></h2>
<p>${esc(String(op.summary))}</p>
${op.description ? `<p class="muted">${prose(String(op.description))}</p>` : ''}
<p class="muted">Credential: ${(op.security as unknown[]).length === 0 ? 'none' : method === 'post' ? 'server key with <code>element-sets:write</code> (Authorization: Bearer)' : 'any key (Authorization: Bearer), or <code>?key=</code> with a browser key, or <code>?embed=</code>'}</p>
${paramRows.length ? stackTable(['parameter', 'in', 'type', 'meaning'], paramRows) : ''}
${bodyTypes.length ? `<h3>Body</h3>${bodyText(body!)}` : ''}
<h3>Example</h3>
<pre><code>${esc(exampleRequest(method, p, op, baseUrl))}</code></pre>
${responses}
</section>`);
    }
  }
  const caps = doc['x-caps'] as Json;
  return page(
    'API reference',
    `<nav class="top"><a href="/">Console</a><a href="/docs/problems">Problem codes</a><a href="/docs/webhooks">Webhooks</a><a href="/v1/openapi.json">openapi.json</a></nav>
<h1>${esc(String(info.title))}</h1>
<p class="muted">Version ${esc(String(info.version))} · base URL <code>${esc(baseUrl)}/v1</code></p>
<p>${prose(String(info.description))}</p>
<h2>Trying the examples</h2>
<p>Each route below has a <code>curl</code> example. With the demo data (<code>npm start</code>), set the shell variables from <code>data/demo-credentials.json</code> first:</p>
<pre><code>KEY=$(node -p "require('./data/demo-credentials.json').serverKey")
SERVER_KEY=$KEY
SAT=$(node -p "require('./data/demo-credentials.json').satellites[0].id")
SAT2=$(node -p "require('./data/demo-credentials.json').satellites[1].id")
EMBED=$(node -p "require('./data/demo-credentials.json').embedId")</code></pre>
<h2>Keys</h2>
<p><strong>Browser keys</strong> (<code>nlb_…</code>) are read-only and work only from web pages of the origins they list (exact, like <code>https://www.example.org</code>, or a wildcard, like <code>https://*.example.org</code>, which matches subdomains at any depth but not <code>https://example.org</code> itself); they may go in page source and in <code>?key=</code> on GET. A request with a browser key that names no origin (no Origin or Referer header, as from curl) is refused. <strong>Server keys</strong> (<code>nls_…</code>) are secret and belong on your backend, in the <code>Authorization: Bearer</code> header only; with the <code>element-sets:write</code> scope they may upload element sets. A replaced (rotated) key retires when quiet: it keeps answering until no request has used it for the quiet spell its owner chose, and at the latest by the owner’s retire-by date; embeds move to the new key at once. A revoked key stops at once.</p>
<h2>Limits</h2>
<table><tr><th>limit</th><th>value</th></tr>
<tr><td>track window</td><td>at most ${Number(caps.trackMaxWindowS) / 3600} h</td></tr>
<tr><td>track points</td><td>at most ${esc(String(caps.trackMaxPoints))}; step ${esc(String(caps.trackMinStepS))} to ${esc(String(caps.trackMaxStepS))} s</td></tr>
<tr><td>passes</td><td>at most ${esc(String(caps.passesMaxDays))} days per request</td></tr>
<tr><td>positions</td><td>at most ${esc(String(caps.positionsMaxIds))} ids per request</td></tr>
<tr><td>uploads</td><td>${Number(caps.uploadMaxBytes) / 1024 / 1024} MiB per body or file, ${esc(String(caps.uploadMaxFiles))} files</td></tr>
<tr><td>rate</td><td>per key, requests per minute as set on the key; 429 with <code>Retry-After</code> and the <code>RateLimit</code> / <code>RateLimit-Policy</code> headers</td></tr>
<tr><td>quota</td><td>requests per calendar month (UTC) per organization, by plan; 429 <code>quota-exceeded</code> when spent</td></tr></table>
<p class="note">Positions come from mean element sets and SGP4: good to kilometres near epoch and worse as sets age. Not for collision avoidance, navigation, safety-of-life or operational decisions. Never point optics at or near the Sun.</p>
<h2>Webhooks</h2>
<p>Besides answering calls, Nadirline can call your systems: signed <code>POST</code>s when element sets are stored or turn stale, when the monthly quota reaches 80 % or 100 %, and when the plan changes. The signature scheme, the events and the retry schedule are on <a href="/docs/webhooks">the webhooks page</a>.</p>
<h2>Routes</h2>
<ul class="routes">${index.join('')}</ul>
${sections.join('\n')}`,
  );
}

export function renderProblems(): string {
  const rows = PROBLEM_DOCS.map((p) => ({ id: p.code, cells: [`<code>${esc(p.code)}</code>`, String(p.status), esc(p.title), prose(p.meaning)] }));
  return page(
    'Problem codes',
    `<nav class="top"><a href="/">Console</a><a href="/docs/api">API reference</a></nav>
<h1>Problem codes</h1>
<p>Every error is <code>application/problem+json</code> (RFC 9457): <code>type</code> (this page and the code as fragment, <code>${esc(PROBLEM_TYPE_BASE)}&lt;code&gt;</code>), <code>title</code>, <code>status</code>, <code>detail</code> (a sentence for people), and <code>code</code> (stable, for programs). Validation problems add <code>errors: [{ where, message, field?, line?, column? }]</code>. <code>instance</code> is the request\u2019s path, without its query string.</p>
${stackTable(['code', 'status', 'title', 'meaning and what to do'], rows)}`,
  );
}

/** Webhooks out: what is sent, how it is signed, how to check it, and the retry schedule. */
export function renderWebhooks(): string {
  const wait = (ms: number) => (ms >= 3_600_000 ? `${ms / 3_600_000} h` : `${ms / 60_000} min`);
  const examples: Record<string, object> = {
    'element-set.accepted': { satellite: { id: 'sat_…', name: 'Wren-2', catalogNumber: '90777' }, elementSets: [{ id: 'es_…', epoch: '2030-05-20T04:12:00.000Z', source: 'tle', continuity: 'continues', awaitingConfirmation: false }], currentElementSetId: 'es_…', uploadedBy: { keyId: 'key_…' } },
    'element-set.stale': { day: '2030-05-20', satellites: [{ id: 'sat_…', name: 'Kestrel-1', catalogNumber: '90001', elementSetId: 'es_…', epoch: '2030-05-17T01:12:00.000Z', ageDays: 3.2, staleness: 'aging' }] },
    'quota.threshold': { threshold: 80, used: 81000, limit: 100000, plan: 'starter', month: '2030-05', resetsAt: '2030-06-01T00:00:00.000Z' },
    'plan.changed': { from: 'starter', to: 'mission', reason: 'checkout', monthlyRequests: 1000000 },
  };
  const rows = WEBHOOK_EVENT_TYPES.map((t) => ({ id: t.type, cells: [`<code>${esc(t.type)}</code>`, esc(t.label), `<pre><code>${esc(JSON.stringify(examples[t.type], null, 2))}</code></pre>`] }));
  const sample = '{"id":"evt_3oQm1xV9bq2Zk4TfYp7c","type":"plan.changed","createdAt":"2030-05-20T06:00:00.000Z","organizationId":"org_…","data":{"from":"starter","to":"mission","reason":"checkout","monthlyRequests":1000000}}';
  return page(
    'Webhooks',
    `<nav class="top"><a href="/">Console</a><a href="/docs/api">API reference</a><a href="/docs/problems">Problem codes</a></nav>
<h1>Webhooks</h1>
<p>Nadirline tells your own systems what happened in your organization: it sends an HTTPS <code>POST</code> with a JSON body to each endpoint that chose the kind of event. Owners and admins add endpoints on the console’s <strong>Webhooks</strong> page (or through <code>/api/orgs/{org}/webhooks</code>, see <code>docs/console-api.md</code>), pick the events, pause and resume them, and see every delivery with its attempts.</p>
<h2>Events</h2>
<p>Every body has the same five fields; <code>data</code> depends on <code>type</code>:</p>
<pre><code>${esc(sample)}</code></pre>
${stackTable(['type', 'sent when', 'data'], rows)}
<p>The console’s <em>Send a test event</em> sends <code>webhook.test</code> to one endpoint, whatever events it chose.</p>
<h2>Signature</h2>
<p>Each endpoint has its own signing secret (<code>nlwh_…</code>), shown once when the endpoint is added and when a new one is made; Nadirline keeps it encrypted and never shows it again. Each attempt carries:</p>
<table><tr><th>header</th><th>value</th></tr>
<tr><td><code>Nadirline-Webhook-Id</code></td><td>the event id, the same as <code>id</code> in the body, on every attempt and every “send again”: use it to handle an event once</td></tr>
<tr><td><code>Nadirline-Webhook-Timestamp</code></td><td>Unix time in seconds when this attempt was signed</td></tr>
<tr><td><code>Nadirline-Webhook-Signature</code></td><td><code>v1=</code> and the lowercase hex of <code>HMAC-SHA256(secret, id + "." + timestamp + "." + body)</code>, where <code>body</code> is the raw request body, byte for byte</td></tr>
<tr><td><code>Nadirline-Webhook-Delivery</code></td><td>the delivery id (one per event and endpoint; a “send again” is a new delivery)</td></tr></table>
<p>Check the signature on the raw body before parsing it, compare in constant time, and refuse a timestamp more than a few minutes away from your clock (a replayed capture). In Node, with no package:</p>
<pre><code>${esc(VERIFY_SNIPPET_NODE)}</code></pre>
<h2>Delivery and retries</h2>
<p>Any <code>2xx</code> answer within ${ATTEMPT_TIMEOUT_MS / 1000} s counts as delivered. Anything else (another status, a redirect, no answer, a refused connection) is tried again after ${RETRY_DELAYS_MS.map(wait).join(', ')}; after ${MAX_ATTEMPTS} attempts the delivery is marked failed, and the console offers to send it again. Events of one endpoint may arrive out of order and, rarely, twice: order by <code>createdAt</code> and skip ids you have handled. A paused endpoint gets nothing; what happened meanwhile is held and sent when it is resumed.</p>
<h2>Addresses</h2>
<p>Endpoints are <code>https://</code> URLs on public addresses. Private, loopback and link-local addresses are refused, when the endpoint is added and again when each attempt connects. While a Nadirline server runs in development or tests, a receiver on the same machine (<code>http://127.0.0.1:…</code>, <code>http://localhost:…</code>) is accepted for trying things out.</p>`,
  );
}

// ---------------------------------------------------------------------------------------------

interface DemoCredentialsFile {
  browserKey?: string;
  satellites?: Array<{ id: string }>;
  embedId?: string;
}

function substituteDemo(text: string, creds: DemoCredentialsFile | null, apiBase: string): string {
  return text
    .replaceAll('{{BROWSER_KEY}}', creds?.browserKey ?? 'YOUR_BROWSER_KEY')
    .replaceAll('{{SATELLITE_IDS}}', (creds?.satellites ?? []).map((s) => s.id).join(',') || 'YOUR_SATELLITE_IDS')
    .replaceAll('{{EMBED_ID}}', creds?.embedId ?? 'YOUR_EMBED_ID')
    .replaceAll('{{API_BASE}}', apiBase);
}

/** The built widget scripts under their versioned names, re-read when a build changes them. */
export interface WidgetVersions {
  /** versioned file name -> plain file name in widget/dist */
  files: Map<string, string>;
  module: string;
  classic: string;
}

const WIDGET_SCRIPTS = [
  { plain: 'nadir-track.js', stem: 'nadir-track' },
  { plain: 'nadir-track.iife.js', stem: 'nadir-track.iife' },
] as const;
const VERSIONED = /^nadir-track(?:\.iife)?\.([0-9a-f]{10})\.js$/;

export function widgetVersionReader(dist: string): () => WidgetVersions | null {
  let cached: { stamp: string; value: WidgetVersions } | undefined;
  return () => {
    let stamp = '';
    try {
      stamp = WIDGET_SCRIPTS.map((f) => {
        const st = fs.statSync(path.join(dist, f.plain));
        return `${st.mtimeMs}:${st.size}`;
      }).join('|');
    } catch {
      return null;
    }
    if (cached?.stamp === stamp) return cached.value;
    const files = new Map<string, string>();
    const names: string[] = [];
    for (const f of WIDGET_SCRIPTS) {
      const hash = createHash('sha256').update(fs.readFileSync(path.join(dist, f.plain))).digest('hex').slice(0, 10);
      const name = `${f.stem}.${hash}.js`;
      files.set(name, f.plain);
      names.push(name);
    }
    cached = { stamp, value: { files, module: names[0]!, classic: names[1]! } };
    return cached.value;
  };
}

/** Our own page for a hosted embed framed by a site its key does not list. */
function refusedEmbedPage(origin: string): string {
  const where = origin === 'null' ? 'the page showing it is not one of them' : `<code>${esc(origin)}</code> is not one of them`;
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="color-scheme" content="light dark"><title>Not allowed on this site · Nadirline</title>
<style>${PAGE_CSS} body{background:transparent} main{padding:1.25rem;max-width:36rem} h1{font-size:1.15rem;margin:0 0 .5rem} p{margin:.25rem 0}</style></head>
<body><main role="alert"><h1>This map is not allowed on this site</h1>
<p>The Nadirline embed shown here may only appear on the sites its key lists, and ${where}.</p>
<p class="muted">The site owner can add this address to the key’s allowed origins in the Nadirline console.</p></main></body></html>`;
}

/**
 * The page a framed embed answers when its framer sent no Referer: no map yet, only the check
 * (an external script, as the policy allows no inline one), framable anywhere, never cached.
 */
const FRAME_CHECK_PAGE = `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="color-scheme" content="light dark"><title>Nadirline map</title>
<style>html,body{margin:0;background:transparent}</style>
<script src="/embed/frame-check.js"></script></head>
<body><noscript><p style="font:1rem system-ui,sans-serif;padding:1rem">This map needs JavaScript.</p></noscript></body></html>`;

/**
 * Runs in the check page: names the origins framing it (Chromium and Safari say them in
 * location.ancestorOrigins whatever the framer's referrer policy; other browsers only through
 * document.referrer) and reloads the embed with them in ?framers= (empty when unknown).
 */
const FRAME_CHECK_SCRIPT = `(function () {
  var own = location.origin, seen = [];
  var a = location.ancestorOrigins;
  if (a && a.length) {
    for (var i = 0; i < a.length; i++) if (a[i] !== own && seen.indexOf(a[i]) < 0) seen.push(a[i]);
  } else if (document.referrer) {
    try { var o = new URL(document.referrer).origin; if (o !== own) seen.push(o); } catch (e) {}
  }
  var u = new URL(location.href);
  u.searchParams.set('framers', seen.join(' '));
  location.replace(u.toString());
})();
`;

/** Upper bound of framing origins read from ?framers= (nesting deeper than this is not checked by us, only by frame-ancestors). */
const MAX_FRAMERS = 8;

/** The origins the check page found (`?framers=`); null when the request does not carry the parameter. */
function reportedFramers(req: Request): string[] | null {
  const raw = req.query['framers'];
  if (raw === undefined) return null;
  const text = Array.isArray(raw) ? String(raw[0] ?? '') : String(raw);
  return text
    .split(' ')
    .filter((o) => o === 'null' || /^https?:\/\/[^\s/]+$/.test(o))
    .slice(0, MAX_FRAMERS);
}

/** Framed by a page of another origin that named none (no Referer): only the check page can learn who frames it. */
function framedWithoutReferer(req: Request): boolean {
  const dest = req.get('sec-fetch-dest');
  if (dest !== 'iframe' && dest !== 'frame') return false;
  const site = req.get('sec-fetch-site');
  return (site === 'cross-site' || site === 'same-site') && !req.get('referer');
}

function missingBuild(res: Response, req: Request, what: string, command: string): void {
  if (req.accepts(['html', 'json']) === 'html') {
    res
      .status(503)
      .type('html')
      .send(page(`${what} not built`, `<h1>The ${esc(what)} is not built yet</h1><p>Run <code>${esc(command)}</code> (or <code>npm start</code>, which builds everything) and reload.</p><p>The API works meanwhile: see <a href="/docs/api">the API reference</a>.</p>`));
    return;
  }
  sendProblem(res, 'unavailable', `The ${what} is not built; run ${command}.`, {}, req.originalUrl);
}

/**
 * The origin of the page framing this request, when the browser says it is framed (Sec-Fetch-Dest)
 * and names the page (Referer) and that page is of another origin. Null otherwise: a framer
 * that sends no Referer is left to the frame-ancestors policy.
 */
function framingOrigin(req: Request): string | null {
  if (req.get('sec-fetch-dest') !== 'iframe' && req.get('sec-fetch-dest') !== 'frame') return null;
  if (req.get('sec-fetch-site') === 'same-origin') return null;
  const referer = req.get('referer');
  if (!referer) return null;
  try {
    const origin = new URL(referer).origin;
    const host = req.get('host');
    if (!origin || origin === 'null' || (host && origin === `${req.protocol}://${host}`)) return null;
    return origin;
  } catch {
    return null;
  }
}

export async function createSiteRouter(ctx: AppContext): Promise<Router> {
  const router = Router();
  const { config } = ctx;
  const widgetDist = path.join(repoRoot, 'widget', 'dist');
  const consoleDist = path.join(repoRoot, 'console', 'dist');
  const examplesDir = path.join(repoRoot, 'examples');
  const consoleHeaders = securityHeaders(config, 'console');

  // -- the Nadirline mark as the site icon (pages that name none get it at /favicon.ico) --------
  router.get(['/favicon.ico', '/favicon.svg'], (_req, res) => {
    res.type('image/svg+xml').set('Cache-Control', 'public, max-age=86400').send(FAVICON_SVG);
  });

  // -- fonts for the server's own pages --------------------------------------------------------
  const fonts = fontDir();
  if (fonts) {
    router.use('/fonts', express.static(fonts, { immutable: true, maxAge: YEAR_S * 1000, index: false }));
  }

  // -- widget ----------------------------------------------------------------------------------
  router.use('/widget', (req, res, next) => {
    res.setHeader('Access-Control-Allow-Origin', '*');
    res.setHeader('Cross-Origin-Resource-Policy', 'cross-origin');
    res.setHeader('X-Content-Type-Options', 'nosniff');
    if (!fs.existsSync(path.join(widgetDist, 'nadir-track.js'))) {
      missingBuild(res, req, 'widget', 'npm run build -w widget');
      return;
    }
    next();
  });
  const widgetVersions = widgetVersionReader(widgetDist);
  router.get('/widget/versions.json', (_req, res) => {
    const v = widgetVersions();
    res.setHeader('Cache-Control', 'public, max-age=300, must-revalidate');
    res.json({ module: `/widget/${v?.module}`, classic: `/widget/${v?.classic}` });
  });
  router.get('/widget/:file', (req, res, next) => {
    const file = String(req.params.file);
    if (!VERSIONED.test(file)) return next();
    const v = widgetVersions();
    const plain = v?.files.get(file);
    if (!plain) {
      // an older build: the current script under its plain name keeps the page working
      res.setHeader('Cache-Control', 'public, max-age=300');
      res.redirect(302, `/widget/${file.includes('.iife.') ? 'nadir-track.iife.js' : 'nadir-track.js'}`);
      return;
    }
    res.sendFile(path.join(widgetDist, plain), { headers: { 'Cache-Control': `public, max-age=${YEAR_S}, immutable` }, cacheControl: false });
  });
  router.use(
    '/widget',
    express.static(widgetDist, {
      index: false,
      fallthrough: true,
      setHeaders: (res, file) => {
        const base = path.basename(file);
        res.setHeader('Cache-Control', HASHED.test(base) && !base.startsWith('nadir-track.') ? `public, max-age=${YEAR_S}, immutable` : 'public, max-age=300, must-revalidate');
      },
    }),
  );
  router.use('/widget', (req, res) => sendProblem(res, 'not-found', `No widget file ${req.path}.`, {}, req.originalUrl));

  // -- hosted embed page -----------------------------------------------------------------------
  router.get('/embed/frame-check.js', (_req, res) => {
    res.setHeader('Cache-Control', 'public, max-age=300');
    res.setHeader('X-Content-Type-Options', 'nosniff');
    res.type('text/javascript').send(FRAME_CHECK_SCRIPT);
  });
  router.get('/embed/:id', async (req, res) => {
    const embeds = getEmbedService(ctx);
    const embed = await embeds.findEmbed(String(req.params.id));
    if (!embed) {
      consoleHeaders(req, res, () => undefined);
      res.status(404).type('html').send(page('Embed not found', '<h1>This embed does not exist</h1><p>It may have been deleted. Ask the site that showed it for a new link.</p>'));
      return;
    }
    // The origins of the key the embed reads with (its current successor, when its key was replaced).
    const key = embed.apiKeyId ? await getKeyService(ctx).currentSuccessor(embed.apiKeyId) : null;
    const ancestors = ["'self'", ...(key?.origins ?? [])].join(' ');
    const own = new Set(config.selfOrigins);
    const host = req.get('host');
    if (host) own.add(`${req.protocol}://${host}`);
    // Framed by another site's page: a site the key does not list gets our words, not a blanked frame.
    const reported = reportedFramers(req);
    const framer = framingOrigin(req) ?? reported?.find((o) => !own.has(o) && !originAllowed(key?.origins ?? [], o)) ?? null;
    if (framer && !originAllowed(key?.origins ?? [], framer)) {
      res.setHeader('Content-Security-Policy', "default-src 'none'; style-src 'unsafe-inline'; base-uri 'none'; form-action 'none'; frame-ancestors *");
      res.setHeader('X-Content-Type-Options', 'nosniff');
      res.setHeader('Cache-Control', 'no-store');
      res.setHeader('Vary', 'Referer, Sec-Fetch-Dest, Sec-Fetch-Site');
      res.status(403).type('html').send(refusedEmbedPage(framer));
      return;
    }
    // Framed by another site that sent no Referer: let the page find out who frames it first.
    if (reported === null && framedWithoutReferer(req)) {
      res.setHeader('Content-Security-Policy', "default-src 'none'; script-src 'self'; style-src 'unsafe-inline'; base-uri 'none'; form-action 'none'; frame-ancestors *");
      res.setHeader('X-Content-Type-Options', 'nosniff');
      res.setHeader('Cache-Control', 'no-store');
      res.setHeader('Vary', 'Referer, Sec-Fetch-Dest, Sec-Fetch-Site');
      res.type('html').send(FRAME_CHECK_PAGE);
      return;
    }
    const size = (v: unknown, d: string) => (typeof v === 'string' && /^[0-9.]+(px|rem|em|vh|vw|%)$/.test(v) ? v : d);
    res.setHeader(
      'Content-Security-Policy',
      `default-src 'self'; script-src 'self'; style-src 'self' 'unsafe-inline'; img-src 'self' data: blob:; font-src 'self' data:; connect-src 'self'; object-src 'none'; base-uri 'none'; frame-ancestors ${ancestors}`,
    );
    res.setHeader('X-Content-Type-Options', 'nosniff');
    res.setHeader('Referrer-Policy', 'strict-origin-when-cross-origin');
    res.setHeader('Cache-Control', 'no-cache');
    const template = path.join(repoRoot, 'widget', 'embed.html');
    if (fs.existsSync(template)) {
      const v = widgetVersions();
      const html = fs
        .readFileSync(template, 'utf8')
        .replaceAll('{{EMBED_ID}}', esc(embed.id))
        .replaceAll('{{EMBED_NAME}}', esc(embed.name))
        .replaceAll('/widget/nadir-track.js', `/widget/${v?.module ?? 'nadir-track.js'}`)
        .replaceAll('/widget/nadir-track.iife.js', `/widget/${v?.classic ?? 'nadir-track.iife.js'}`);
      res.type('html').send(html);
      return;
    }
    res.type('html').send(`<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>${esc(embed.name)} · Nadirline</title>
<style>html,body{margin:0;height:100%;background:transparent}nadir-track{display:block;width:${size(embed.options.width, '100%')};height:${size(embed.options.height, '100%')}}</style>
<script type="module" src="/widget/nadir-track.js"></script></head>
<body><nadir-track embed="${esc(embed.id)}" api-base="/"></nadir-track></body></html>`);
  });

  // -- examples --------------------------------------------------------------------------------
  let demoCreds: { at: number; value: DemoCredentialsFile | null } | undefined;
  const credentials = (): DemoCredentialsFile | null => {
    if (!config.demo) return null;
    if (!demoCreds || Date.now() - demoCreds.at > 5_000) {
      const file = path.join(config.dataDir, 'demo-credentials.json');
      let value: DemoCredentialsFile | null = null;
      try {
        value = JSON.parse(fs.readFileSync(file, 'utf8')) as DemoCredentialsFile;
      } catch {
        value = null;
      }
      demoCreds = { at: Date.now(), value };
    }
    return demoCreds.value;
  };
  router.get('/examples', (req, res, next) => {
    // Non-strict routing also matches "/examples/" here: redirect only the bare path.
    if (req.path.endsWith('/')) return next();
    res.redirect(301, '/examples/');
  });
  router.use('/examples', async (req, res, next) => {
    if (req.method !== 'GET' && req.method !== 'HEAD') return next();
    let rel = decodeURIComponent(req.path);
    if (rel.endsWith('/')) rel += 'index.html';
    const file = path.resolve(examplesDir, `.${rel}`);
    if (!file.startsWith(examplesDir + path.sep) || rel.includes('\0')) throw new HttpError('not-found', 'No such example.');
    if (/(^|\/)(node_modules|package\.json|tsconfig)/.test(rel)) throw new HttpError('not-found', 'No such example.');
    let stat: fs.Stats;
    try {
      stat = await fs.promises.stat(file);
    } catch {
      if (rel === '/index.html') {
        res.type('html').send(page('Examples', '<h1>Examples</h1><p>No examples are installed yet.</p>'));
        return;
      }
      throw new HttpError('not-found', `No example ${rel}.`);
    }
    if (!stat.isFile()) throw new HttpError('not-found', `No example ${rel}.`);
    res.setHeader('Cache-Control', 'no-cache');
    res.setHeader('X-Content-Type-Options', 'nosniff');
    if (/\.(html|js|mjs|css|json|txt|md)$/.test(file)) {
      const text = await fs.promises.readFile(file, 'utf8');
      const host = req.get('host');
      const apiBase = host ? `${req.protocol}://${host}` : config.publicUrl;
      // Markdown as plain text, so browsers show it instead of downloading it.
      if (file.endsWith('.md')) res.setHeader('Content-Type', 'text/plain; charset=utf-8');
      else res.type(path.extname(file));
      res.send(substituteDemo(text, credentials(), apiBase));
      return;
    }
    res.sendFile(file);
  });

  // -- docs ------------------------------------------------------------------------------------
  const doc = buildOpenApi(config.PUBLIC_URL ? config.publicUrl : '/');
  const references = new Map<string, string>();
  const problems = renderProblems();
  router.get('/docs', (_req, res) => res.redirect(302, '/docs/api'));
  router.get('/docs/api', consoleHeaders, (req, res) => {
    const host = req.get('host');
    const base = config.PUBLIC_URL || !host ? config.publicUrl : `${req.protocol}://${host}`;
    let html = references.get(base);
    if (!html) {
      html = renderApiReference(doc, base);
      if (references.size > 20) references.clear();
      references.set(base, html);
    }
    res.setHeader('Cache-Control', 'public, max-age=300');
    res.type('html').send(html);
  });
  router.get('/docs/problems', consoleHeaders, (_req, res) => {
    res.setHeader('Cache-Control', 'public, max-age=300');
    res.type('html').send(problems);
  });
  const webhooks = renderWebhooks();
  router.get('/docs/webhooks', consoleHeaders, (_req, res) => {
    res.setHeader('Cache-Control', 'public, max-age=300');
    res.type('html').send(webhooks);
  });

  // -- console SPA -----------------------------------------------------------------------------
  const indexFile = path.join(consoleDist, 'index.html');
  router.use(
    consoleHeaders,
    express.static(consoleDist, {
      index: false,
      setHeaders: (res, file) => {
        res.setHeader('Cache-Control', file.includes(`${path.sep}assets${path.sep}`) ? `public, max-age=${YEAR_S}, immutable` : 'no-cache');
      },
    }),
  );
  router.use((req, res, next) => {
    if (req.method !== 'GET' && req.method !== 'HEAD') return next();
    if (/^\/(v1|api|dev|widget|examples|fonts|assets)(\/|$)/.test(req.path) || /\.[a-z0-9]+$/i.test(req.path)) return next();
    if (req.accepts(['html', 'json']) !== 'html') return next();
    if (!fs.existsSync(indexFile)) {
      missingBuild(res, req, 'console', 'npm run build -w console');
      return;
    }
    res.setHeader('Cache-Control', 'no-cache');
    res.sendFile(indexFile);
  });
  return router;
}
