/**
 * The API reference people read at /docs/api: every route shows a runnable example request.
 */
import { describe, expect, it } from 'vitest';
import request from 'supertest';
import { buildOpenApi } from '@nadirline/server/services/openapi.ts';
import { exampleRequest } from '@nadirline/server/routes/site.ts';
import { startKeyedApp } from '../support/app.ts';

type Json = Record<string, unknown>;
const doc = buildOpenApi('/') as unknown as { paths: Record<string, Record<string, Json>> };

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
});
