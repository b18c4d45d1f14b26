/**
 * The OpenAPI 3.1 document of /v1, generated from the route table and the zod schemas that
 * validate the requests (@nadirline/shared/contract, shared/src/contract/v1.ts), so the document and the checks cannot drift.
 *
 * Exported API:
 *   buildOpenApi(serverUrl) -> OpenApiDocument (plain JSON object)
 *   PROBLEM_DOCS: { code, status, title, meaning }[] (also rendered at /docs/problems)
 */
import { z } from 'zod';
import { PROBLEM_TYPES, type ProblemCode } from '../http/problem.ts';
import { CAPS, V1_ROUTES, problemSchema, type RouteSpec } from '@nadirline/shared/contract';
import { MAX_SETS_PER_UPLOAD } from './satellites.ts';

export type OpenApiDocument = Record<string, unknown> & {
  openapi: string;
  paths: Record<string, Record<string, unknown>>;
};

type JsonSchema = Record<string, unknown>;

function schemaOf(s: z.ZodType, io: 'input' | 'output'): JsonSchema {
  const js = z.toJSONSchema(s, { io, target: 'draft-2020-12', unrepresentable: 'any' }) as JsonSchema;
  delete js.$schema;
  return js;
}

/** Per problem code: what it means and what to do (every code has one; /docs/problems shows them). */
const MEANINGS: Record<ProblemCode, string> = {
  'bad-request': 'The request could not be read: the body is not valid JSON, the URL holds a broken percent-encoding, or a form upload is malformed. The detail names which; fix the request and send it again.',
  'validation-failed': 'A query parameter or body field is missing, malformed, given twice or outside its cap; `errors` names each one with what it expects. Correct them and send again.',
  'invalid-token': 'A link from an e-mail (address confirmation, password reset, invitation) is unknown, used already or expired. Ask for a new one: from the sign-in page, or from the admin who invited you.',
  'signature-invalid': 'A payment provider webhook came without a signature, with one that does not match the body, or with one older than five minutes. It was not handled; the provider sends it again with a fresh signature.',
  'unauthenticated': 'No credential was sent. For /v1 use `Authorization: Bearer <key>`, or `?key=` with a browser key on GET; in the console, sign in again.',
  'invalid-credentials': 'The e-mail address and password do not match an account. Check both, or reset the password from the sign-in page.',
  'invalid-key': 'The key text is unknown (mistyped, cut short, or deleted), a server key was put in a URL, or an embed id names no embed. Copy the key again, or create a new one in the console; send server keys only in the Authorization header.',
  'key-expired': 'The key passed its expiry date. Create a new key or extend the expiry in the console.',
  'key-revoked': 'The key was revoked; it stopped working at once. Use another key.',
  'key-rotated': 'The key was replaced by a new one and has retired (it was quiet for the spell its owner chose, or its retire-by date came); the detail says when. Use the key that replaced it.',
  'forbidden': 'Your role in this organization does not allow this action (the console lists what each role may do). Ask an admin or the owner to do it, or to give you another role.',
  'origin-not-allowed': 'A browser key (or an embed) was used from a page whose origin the key does not list, or without any origin; or a server key was used from a web page. A member adds the page\u2019s origin to the key in the console; server keys belong on a backend.',
  'scope-missing': 'The server key lacks the element-sets:write scope needed for this write. An admin can add the scope in the console, or use a key that has it.',
  'browser-key-read-only': 'Browser keys and embeds only read; writes need a server key with the element-sets:write scope, from a backend.',
  'csrf-failed': 'A console request lacked its CSRF token, or the token belongs to another session (tokens change at sign-in). Reload the page and try again.',
  'email-not-verified': 'The account\u2019s e-mail address is not confirmed yet. Open the confirmation link sent to it; the sign-in page can send a new one.',
  'email-mismatch': 'The invitation was sent to another e-mail address than the one signed in. Sign in, or sign up, with the invited address to accept it.',
  'not-found': 'No such route, satellite, element set or embed visible to this credential. Check the id (GET /v1/satellites lists them) and that the key belongs to the satellite\u2019s organization.',
  'method-not-allowed': 'The path exists but not for this method; the `Allow` header lists the methods it takes.',
  'request-timeout': 'The request body did not arrive in time after the headers (the server waits BODY_TIMEOUT_MS, 10 s unless configured), usually because Content-Length promised more bytes than were sent. The connection is closed; send the request again with its whole body.',
  'conflict': 'The change clashes with what exists (an account or member that exists already, a key rotated or revoked already, the plan already chosen). The detail says what; reload and decide again.',
  'owner-protected': 'The owner cannot be removed or given another role. The owner can first transfer the organization to another member.',
  'key-in-use': 'A key cannot be deleted while an embed reads with it (an embed without a key would show nothing); `embeds` lists them by id and name. Choose another browser key for each in the embed builder, then delete the key.',
  'payload-too-large': `Bodies and files are limited to ${CAPS.uploadMaxBytes / 1024 / 1024} MiB each (${CAPS.uploadMaxFiles} files per upload), and one upload holds at most ${MAX_SETS_PER_UPLOAD} element sets (counted over all its files; \`limitSets\` and \`line\`, with \`file\`, say where set ${MAX_SETS_PER_UPLOAD + 1} starts). Split the upload into smaller files or several requests.`,
  'unsupported-media-type': 'Element sets go as text/plain, application/xml, application/json or multipart/form-data; set the Content-Type header to one of them.',
  'unprocessable-element-set': 'No submitted element set could be used; `errors` gives file, line, column and field of each problem. Fix those and upload again.',
  'unprocessable': 'The request was well formed but cannot be carried out as asked; the detail says why and what to change.',
  'no-element-set': 'The satellite has no element set yet; upload one (TLE or OMM) first.',
  'decayed': 'SGP4 says the object has decayed at the requested time. Upload a fresh element set if it is still in orbit.',
  'propagation-failed': 'SGP4 could not compute this time (for example more than a year from the epoch); `reason` names the engine code. Ask for a time nearer the epoch, or upload a fresher set.',
  'rate-limited': 'The key sent more requests per minute than its limit. Wait `Retry-After` seconds; the RateLimit headers show the budget.',
  'quota-exceeded': 'The organization used its plan\u2019s monthly requests. The quota resets on the first day of the next month (UTC); the owner can move to a larger plan.',
  'too-many-attempts': 'Too many sign-in, sign-up or e-mail attempts in a short time. Wait the minutes the detail names, then try again.',
  'internal': 'Something failed on the server\u2019s side; it is logged. Retry later, and tell the operator if it keeps happening.',
  'busy': 'The database was busy with other writes for longer than the server waits; nothing was stored by this request. Send it again after `Retry-After` seconds.',
  'unavailable': 'A part of this server is not ready (the console or widget is not built, or a provider is not set up); the detail says which. Retry later, or ask the server\u2019s operator.',
};

export const PROBLEM_DOCS = (Object.keys(PROBLEM_TYPES) as ProblemCode[]).map((code) => ({
  code,
  status: PROBLEM_TYPES[code].status,
  title: PROBLEM_TYPES[code].title,
  meaning: MEANINGS[code],
}));

const AUTH_PROBLEMS = ['unauthenticated', 'invalid-key', 'key-expired', 'key-revoked', 'key-rotated', 'origin-not-allowed', 'rate-limited', 'quota-exceeded'];

function problemResponses(route: RouteSpec): Record<string, unknown> {
  const codes = new Set<string>([...(route.access === 'public' ? [] : AUTH_PROBLEMS), ...(route.problems ?? [])]);
  if (route.access === 'write') {
    codes.add('browser-key-read-only');
    codes.add('scope-missing');
  }
  if (route.path === '/embeds/{id}') {
    for (const c of ['invalid-key', 'key-expired', 'key-revoked', 'key-rotated', 'rate-limited', 'quota-exceeded']) codes.add(c);
  }
  const byStatus = new Map<number, string[]>();
  for (const c of codes) {
    const t = PROBLEM_TYPES[c as ProblemCode];
    if (!t) continue;
    byStatus.set(t.status, [...(byStatus.get(t.status) ?? []), c]);
  }
  const out: Record<string, unknown> = {};
  for (const [status, list] of [...byStatus].sort((a, b) => a[0] - b[0])) {
    out[String(status)] = {
      description: `Problem: ${list.map((c) => `\`${c}\``).join(', ')}`,
      ...(status === 429 ? { headers: { 'Retry-After': { schema: { type: 'integer' }, description: 'Seconds to wait' } } } : {}),
      content: { 'application/problem+json': { schema: { $ref: '#/components/schemas/Problem' } } },
    };
  }
  return out;
}

function parametersOf(route: RouteSpec): unknown[] {
  const params: unknown[] = [];
  for (const m of route.path.matchAll(/\{([A-Za-z]+)\}/g)) {
    const description = route.path.startsWith('/embeds') ? 'Embed id, as the console shows it (the snippet\u2019s embed attribute).' : 'Satellite id, as GET /v1/satellites lists it.';
    params.push({ name: m[1], in: 'path', required: true, description, schema: { type: 'string', maxLength: 40 } });
  }
  if (route.query) {
    const js = schemaOf(route.query, 'input');
    const props = (js.properties ?? {}) as Record<string, JsonSchema>;
    const required = new Set((js.required as string[] | undefined) ?? []);
    for (const [name, schema] of Object.entries(props)) {
      const { description, ...rest } = schema;
      params.push({ name, in: 'query', required: required.has(name), ...(description ? { description } : {}), schema: rest });
    }
  }
  if (route.access === 'read') {
    params.push(
      { name: 'key', in: 'query', required: false, description: 'Browser key (GET only), instead of the Authorization header.', schema: { type: 'string' } },
      { name: 'embed', in: 'query', required: false, description: 'Embed id (GET only): reads with the embed\u2019s browser key, limited to its satellites.', schema: { type: 'string' } },
    );
  }
  return params;
}

export function buildOpenApi(serverUrl: string): OpenApiDocument {
  const paths: Record<string, Record<string, unknown>> = {};
  for (const route of V1_ROUTES) {
    const responses: Record<string, unknown> = {};
    for (const [status, r] of Object.entries(route.responses)) {
      const types = r.mediaTypes ?? ['application/json'];
      responses[status] = {
        description: r.description,
        ...(r.schema ? { content: Object.fromEntries(types.map((t) => [t, { schema: t === 'application/geo+json' ? { type: 'object', description: 'GeoJSON FeatureCollection (RFC 7946)' } : schemaOf(r.schema as z.ZodType, 'output') }])) } : {}),
        ...(route.path.endsWith('/track') && status === '200'
          ? {
              headers: {
                ETag: { schema: { type: 'string' }, description: 'Validator of this answer: send it back as If-None-Match to get 304 while the answer is unchanged' },
                'Cache-Control': { schema: { type: 'string' }, description: `public when start and end are whole multiples of ${CAPS.trackCacheQuantumS} s` },
              },
            }
          : {}),
      };
    }
    Object.assign(responses, problemResponses(route));
    const op: Record<string, unknown> = {
      operationId: route.operationId,
      summary: route.summary,
      ...(route.description ? { description: route.description } : {}),
      tags: [route.path.startsWith('/embeds') ? 'Embeds' : route.path === '/openapi.json' ? 'Meta' : 'Satellites'],
      parameters: parametersOf(route),
      responses,
      security: route.access === 'public' ? [] : route.access === 'write' ? [{ serverKey: [] }] : [{ bearerKey: [] }, { browserKeyQuery: [] }, { embedQuery: [] }],
    };
    if (route.body) {
      op.requestBody = { required: true, content: { 'application/json': { schema: schemaOf(route.body, 'input') } } };
    } else if (route.bodies) {
      op.requestBody = {
        required: true,
        content: Object.fromEntries(
          Object.entries(route.bodies).map(([type, description]) => [
            type,
            type === 'multipart/form-data'
              ? { schema: { type: 'object', properties: { 'files[]': { type: 'array', items: { type: 'string', format: 'binary' }, maxItems: CAPS.uploadMaxFiles, description: `Element-set files (TLE, OMM KVN, XML or JSON; the format from the extension or the content), at most ${CAPS.uploadMaxFiles} files of ${CAPS.uploadMaxBytes / 1024 / 1024} MiB each` }, text: { type: 'string', description: 'Element-set text as a form field, beside or instead of files[]' } } }, description }
              : { schema: { type: 'string', maxLength: CAPS.uploadMaxBytes, description } },
          ]),
        ),
      };
    }
    const p = `/v1${route.path}`;
    paths[p] = { ...(paths[p] ?? {}), [route.method]: op };
  }
  return {
    openapi: '3.1.0',
    jsonSchemaDialect: 'https://json-schema.org/draft/2020-12/schema',
    info: {
      title: 'Nadirline API',
      version: '1.0.0',
      description:
        'Ground tracks, positions, passes and derived orbital elements of your satellites, computed with SGP4 from the element sets you upload. ' +
        'JSON uses camelCase, ISO 8601 UTC times, degrees, kilometres and km/s unless a field name says otherwise. Errors are application/problem+json (RFC 9457) with a stable `code`. ' +
        'Positions come from mean element sets: good to kilometres near epoch and worse as sets age; not for collision avoidance, navigation or safety-of-life decisions.',
    },
    servers: [{ url: serverUrl }],
    'x-caps': { ...CAPS },
    tags: [{ name: 'Satellites' }, { name: 'Embeds' }, { name: 'Meta' }],
    paths,
    components: {
      securitySchemes: {
        bearerKey: { type: 'http', scheme: 'bearer', description: 'A browser key (nlb_…) or server key (nls_…).' },
        serverKey: { type: 'http', scheme: 'bearer', description: 'A server key (nls_…) with the element-sets:write scope.' },
        browserKeyQuery: { type: 'apiKey', in: 'query', name: 'key', description: 'A browser key on GET, from a page of one of its origins.' },
        embedQuery: { type: 'apiKey', in: 'query', name: 'embed', description: 'An embed id on GET.' },
      },
      schemas: { Problem: schemaOf(problemSchema, 'output') },
    },
  };
}
