/**
 * The API reference people read at /docs/api: every route shows a runnable example request, and
 * every field of /v1/openapi.json (parameters, bodies, answers, nested objects, array items and
 * each shape of a union) carries a description that the page shows.
 */
import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { buildOpenApi } from '@nadirline/server/services/openapi.ts';
import { exampleRequest, fieldRows } from '@nadirline/server/routes/site.ts';
import { startKeyedApp } from '../support/app.ts';

type Json = Record<string, unknown>;
const doc = buildOpenApi('/') as unknown as { paths: Record<string, Record<string, Json>> };

/** Where a field sits and whether it says what it is. */
interface FieldSeen {
  where: string;
  described: boolean;
}

const described = (s: Json | undefined) => typeof s?.description === 'string' && s.description.trim().length > 0;

/**
 * Every field below a JSON schema: each property (its description may sit on the property or,
 * for `X | null`, on the anyOf around it), recursively through properties, array items, tuple
 * items, additionalProperties, $defs and every anyOf / oneOf / allOf branch. A union of two or
 * more shapes must also say what each shape is.
 */
function schemaFields(schema: unknown, where: string, out: FieldSeen[]): FieldSeen[] {
  if (!schema || typeof schema !== 'object') return out;
  const s = schema as Json;
  for (const [name, prop] of Object.entries((s.properties ?? {}) as Record<string, Json>)) {
    out.push({ where: `${where}.${name}`, described: described(prop) });
    schemaFields(prop, `${where}.${name}`, out);
  }
  if (s.items) schemaFields(s.items, `${where}[]`, out);
  if (Array.isArray(s.prefixItems)) s.prefixItems.forEach((x, i) => schemaFields(x, `${where}[${i}]`, out));
  if (s.additionalProperties && typeof s.additionalProperties === 'object') schemaFields(s.additionalProperties, `${where}{}`, out);
  for (const [name, def] of Object.entries((s.$defs ?? {}) as Record<string, Json>)) schemaFields(def, `${where}$defs.${name}`, out);
  for (const key of ['anyOf', 'oneOf', 'allOf'] as const) {
    const branches = s[key];
    if (!Array.isArray(branches)) continue;
    const shapes = (branches as Json[]).filter((b) => b.type !== 'null');
    shapes.forEach((b, i) => {
      const at = `${where}<${key} ${i + 1}>`;
      if (shapes.length > 1 && (b.type === 'object' || b.properties)) out.push({ where: at, described: described(b) });
      schemaFields(b, at, out);
    });
  }
  return out;
}

/** Every parameter, body field, answer field and component field of an OpenAPI document. */
function documentFields(openapi: { paths: Record<string, Record<string, Json>>; components?: Json }): FieldSeen[] {
  const out: FieldSeen[] = [];
  for (const [p, ops] of Object.entries(openapi.paths)) {
    for (const [method, op] of Object.entries(ops)) {
      const at = `${method.toUpperCase()} ${p}`;
      for (const param of (op.parameters ?? []) as Json[]) {
        out.push({ where: `${at} ${String(param.in)} parameter ${String(param.name)}`, described: described(param) });
        schemaFields(param.schema, `${at} ${String(param.in)} parameter ${String(param.name)}`, out);
      }
      const body = op.requestBody as Json | undefined;
      for (const [type, media] of Object.entries((body?.content ?? {}) as Record<string, Json>)) {
        out.push({ where: `${at} body ${type}`, described: described(media) || described(media.schema as Json) });
        schemaFields(media.schema, `${at} body ${type}`, out);
      }
      for (const [status, r] of Object.entries((op.responses ?? {}) as Record<string, Json>)) {
        for (const [name, header] of Object.entries((r.headers ?? {}) as Record<string, Json>)) out.push({ where: `${at} ${status} header ${name}`, described: described(header) });
        for (const [type, media] of Object.entries((r.content ?? {}) as Record<string, Json>)) schemaFields(media.schema, `${at} ${status} ${type}`, out);
      }
    }
  }
  for (const [name, schema] of Object.entries(((openapi.components?.schemas ?? {}) as Record<string, Json>))) schemaFields(schema, `components.schemas.${name}`, out);
  return out;
}

describe('API reference', () => {
  it('shows a runnable curl example for every route, with its credential and ids', () => {
    for (const [p, ops] of Object.entries(doc.paths)) {
      for (const [method, op] of Object.entries(ops)) {
        const line = exampleRequest(method, p, op, 'http://localhost:8080');
        expect(line, `${method} ${p}`).toMatch(/^curl /);
        expect(line).not.toMatch(/\{\w+\}/);
        if (p.includes('{id}') && !p.startsWith('/v1/embeds')) expect(line).toContain('$SAT');
        if (method === 'post') expect(line).toContain('$SERVER_KEY');
      }
    }
    const track = exampleRequest('get', '/v1/satellites/{id}/track', doc.paths['/v1/satellites/{id}/track']!.get!, 'http://localhost:8080');
    expect(track).toBe('curl -H "Authorization: Bearer $KEY" "http://localhost:8080/v1/satellites/$SAT/track?step=60"');
  });

  it('renders the examples on the reference page', async () => {
    const t = await startKeyedApp();
    try {
      const page = await request(t.app).get('/docs/api').expect(200);
      const examples = page.text.match(/<h3>Example<\/h3>/g) ?? [];
      const routes = Object.values(doc.paths).reduce((n, ops) => n + Object.keys(ops).length, 0);
      expect(examples.length).toBe(routes);
      expect(page.text).toContain('Trying the examples');
    } finally {
      await t.close();
    }
  });

  it('describes every field of /v1/openapi.json: parameters, bodies, answers, nested ones, array items and union shapes', async () => {
    const t = await startKeyedApp();
    try {
      const served = await request(t.app).get('/v1/openapi.json').expect(200);
      const fields = documentFields(served.body as Parameters<typeof documentFields>[0]);
      // The walk reaches deep: a blank list would pass for the wrong reason.
      expect(fields.length).toBeGreaterThan(500);
      for (const deep of ['GET /v1/satellites/{id}/track 200 application/json.parts[].firstIndex', 'GET /v1/tracks 200 application/json.tracks[]<anyOf 2>.error.status', 'GET /v1/satellites/{id}/passes 200 application/json.passes[].culmination.rangeKm']) {
        expect(fields.map((f) => f.where)).toContain(deep);
      }
      const blank = fields.filter((f) => !f.described).map((f) => f.where);
      expect(blank, `fields without a description:\n${blank.join('\n')}`).toEqual([]);
    } finally {
      await t.close();
    }
  });

  it('names a field without a description, however deep it sits', () => {
    const broken = {
      paths: {
        '/v1/x': {
          get: {
            parameters: [{ name: 'q', in: 'query', schema: { type: 'string' } }],
            responses: {
              '200': {
                content: {
                  'application/json': {
                    schema: {
                      type: 'object',
                      properties: {
                        list: { type: 'array', description: 'A list', items: { type: 'object', properties: { stepS: { type: 'number' } } } },
                        either: { description: 'One of two', anyOf: [{ type: 'object', properties: { a: { type: 'number', description: 'A' } } }, { type: 'object', description: 'B', properties: { b: { type: 'number' } } }] },
                        maybe: { description: 'Maybe', anyOf: [{ type: 'object', properties: { c: { type: 'string' } } }, { type: 'null' }] },
                      },
                    },
                  },
                },
              },
            },
          },
        },
      },
    };
    const blank = documentFields(broken).filter((f) => !f.described).map((f) => f.where);
    expect(blank).toEqual([
      'GET /v1/x query parameter q',
      'GET /v1/x 200 application/json.list[].stepS',
      'GET /v1/x 200 application/json.either<anyOf 1>',
      'GET /v1/x 200 application/json.either<anyOf 2>.b',
      'GET /v1/x 200 application/json.maybe<anyOf 1>.c',
    ]);
  });

  it('shows every answer and body field on the reference page with its description', async () => {
    const t = await startKeyedApp();
    try {
      const page = await request(t.app).get('/docs/api').expect(200);
      const text = (html: string) => html.replace(/<[^>]+>/g, '').replace(/&quot;/g, '"').replace(/&#39;/g, "'").replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&amp;/g, '&');
      // Rows of the field tables: the field's dotted path and its meaning, as a reader sees them.
      const rows = new Set([...page.text.matchAll(/<tr><td class="lead">(.*?)<\/td>.*?<td data-label="meaning">(.*?)<\/td><\/tr>/g)].map((m) => `${text(m[1]!)} = ${text(m[2]!)}`));
      let checked = 0;
      for (const ops of Object.values(doc.paths)) {
        for (const op of Object.values(ops)) {
          const schemas: Json[] = [];
          for (const [status, r] of Object.entries(op.responses as Record<string, Json>)) {
            const json = ((r.content as Record<string, Json> | undefined)?.['application/json']?.schema ?? undefined) as Json | undefined;
            if (status.startsWith('2') && json) schemas.push(json);
          }
          for (const media of Object.values(((op.requestBody as Json | undefined)?.content ?? {}) as Record<string, Json>)) if ((media.schema as Json).properties) schemas.push(media.schema as Json);
          for (const schema of schemas) {
            for (const row of fieldRows(schema)) {
              const inner = (row.schema.anyOf as Json[] | undefined)?.find((b) => b.type !== 'null');
              const meaning = String(row.schema.description ?? inner?.description ?? '').replace(/`/g, '');
              expect(meaning, row.path).not.toBe('');
              expect(rows.has(`${row.path}${row.variant ? ` ${row.variant}` : ''} = ${meaning}`), `${row.path}: ${meaning}`).toBe(true);
              checked++;
            }
          }
        }
      }
      expect(checked).toBeGreaterThan(400);
      expect(rows).toContain('parts[].firstIndex = Index in points of the part\u2019s first point (0 for the first part)');
    } finally {
      await t.close();
    }
  });
});
