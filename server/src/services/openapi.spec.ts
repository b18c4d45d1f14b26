import { describe, expect, it } from 'vitest';
import { CAPS, V1_ROUTES, routeTemplate } from '@nadirline/shared/contract';
import { PROBLEM_TYPES } from '../http/problem.ts';
import { buildOpenApi, PROBLEM_DOCS } from './openapi.ts';
import { monthStart, nextMonthStart, PLAN_CATALOG, planOf } from './quota.ts';
import { daysBetween, utcDay } from './usage.ts';

describe('OpenAPI document', () => {
  const doc = buildOpenApi('/');

  it('has an operation for every route of the table, with a unique operationId', () => {
    const ids = new Set<string>();
    for (const r of V1_ROUTES) {
      const op = doc.paths[`/v1${r.path}`]?.[r.method] as { operationId: string } | undefined;
      expect(op, `${r.method} ${r.path}`).toBeDefined();
      expect(ids.has(op!.operationId)).toBe(false);
      ids.add(op!.operationId);
    }
  });

  it('publishes the caps on the parameters that the schemas enforce', () => {
    const params = (path: string) => (doc.paths[path]?.get as { parameters: Array<{ name: string; schema: { maximum?: number; minimum?: number } }> }).parameters;
    expect(params('/v1/satellites/{id}/track').find((p) => p.name === 'step')?.schema).toMatchObject({ minimum: CAPS.trackMinStepS, maximum: CAPS.trackMaxStepS });
    expect(params('/v1/satellites/{id}/passes').find((p) => p.name === 'days')?.schema.maximum).toBe(CAPS.passesMaxDays);
    expect(params('/v1/satellites/{id}/passes').find((p) => p.name === 'lat')?.schema).toMatchObject({ minimum: -90, maximum: 90 });
  });

  it('documents a meaning for every problem a /v1 route may answer', () => {
    const codes = new Set<string>();
    for (const ops of Object.values(doc.paths)) {
      for (const op of Object.values(ops) as Array<{ responses: Record<string, { description: string }> }>) {
        for (const r of Object.values(op.responses)) if (r.description.startsWith('Problem:')) for (const m of r.description.matchAll(/`([a-z-]+)`/g)) codes.add(m[1]!);
      }
    }
    expect(codes.size).toBeGreaterThan(10);
    for (const c of codes) expect(PROBLEM_DOCS.find((p) => p.code === c)?.meaning, c).toBeTruthy();
  });

  it('gives every problem code, console ones included, a meaning and what to do', () => {
    expect(PROBLEM_DOCS.map((p) => p.code).sort()).toEqual(Object.keys(PROBLEM_TYPES).sort());
    for (const p of PROBLEM_DOCS) {
      expect(p.meaning.length, p.code).toBeGreaterThan(40);
      // Two sentences at least, or one that says what to do after a semicolon: the meaning, then the remedy.
      expect(p.meaning, p.code).toMatch(/\. \S|; /);
    }
  });

  it('describes every path parameter', () => {
    for (const ops of Object.values(doc.paths)) {
      for (const op of Object.values(ops) as Array<{ parameters: Array<{ in: string; name: string; description?: string }> }>) {
        for (const p of op.parameters.filter((x) => x.in === 'path')) expect(p.description, p.name).toMatch(/ id/);
      }
    }
  });

  it('names usage endpoints by route template', () => {
    expect(routeTemplate({ method: 'get', path: '/satellites/{id}/track' })).toBe('GET /v1/satellites/{id}/track');
  });
});

describe('plans and days', () => {
  it('orders plans by size and falls back to Starter', () => {
    expect(PLAN_CATALOG.map((p) => p.name)).toEqual(['Starter', 'Mission', 'Constellation']);
    for (let i = 1; i < PLAN_CATALOG.length; i++) expect(PLAN_CATALOG[i]!.monthlyRequests).toBeGreaterThan(PLAN_CATALOG[i - 1]!.monthlyRequests);
    expect(planOf('nonsense').id).toBe('starter');
  });

  it('computes UTC months and days across year ends', () => {
    const d = new Date('2025-12-31T23:59:59Z');
    expect(monthStart(d).toISOString()).toBe('2025-12-01T00:00:00.000Z');
    expect(nextMonthStart(d).toISOString()).toBe('2026-01-01T00:00:00.000Z');
    expect(utcDay(d)).toBe('2025-12-31');
    expect(utcDay(d.getTime() + 1000)).toBe('2026-01-01');
    expect(daysBetween('2024-02-28', '2024-03-01')).toEqual(['2024-02-28', '2024-02-29', '2024-03-01']);
  });
});
