import type { Request } from 'express';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { HttpError } from './problem.ts';
import { expects, fields, hintAt, parseBody, parseQuery, parseWith } from './validate.ts';

function caught(fn: () => unknown): HttpError {
  try {
    fn();
  } catch (err) {
    if (err instanceof HttpError) return err;
    throw err;
  }
  throw new Error('expected an HttpError');
}

describe('request validation', () => {
  it('normalizes an e-mail address to lower case without spaces', () => {
    const body = parseBody(z.object({ email: fields.email }), { body: { email: '  Ada@Example.TEST ' } } as Request);
    expect(body.email).toBe('ada@example.test');
  });

  it('says where each body problem is as a JSON pointer with the field name', () => {
    const err = caught(() => parseBody(z.object({ email: fields.email, password: fields.password }), { body: { email: 'nope', password: 'short' } } as Request));
    expect(err.code).toBe('validation-failed');
    expect(err.extras['errors']).toEqual([
      { where: '/email', field: 'email', message: 'Enter an e-mail address like name@example.org.' },
      { where: '/password', field: 'password', message: 'Use at least 10 characters.' },
    ]);
    expect(err.detail).toBe('The request body is not valid: email: Enter an e-mail address like name@example.org (and 1 more).');
  });

  it('names the query parameter for query problems', () => {
    const err = caught(() => parseQuery(z.object({ limit: z.coerce.number().int().max(5) }), { query: { limit: '9' } } as unknown as Request));
    expect((err.extras['errors'] as Array<{ where: string }>)[0]!.where).toBe('limit');
  });

  it('treats a missing body as an empty object', () => {
    const err = caught(() => parseBody(z.object({ name: fields.name }), {} as Request));
    expect((err.extras['errors'] as Array<{ field: string }>)[0]!.field).toBe('name');
  });

  it('rewrites zod\u2019s generic messages from the field\u2019s hint, keeping the schema\u2019s own', () => {
    const schema = z.object({ step: expects(z.coerce.number().min(1).max(3600), 'a number of seconds from 1 to 3600'), name: fields.name });
    const err = caught(() => parseWith(schema, { step: 'abc', name: '' }, 'query'));
    expect(err.extras['errors']).toEqual([
      { where: 'step', field: 'step', message: 'Must be a number of seconds from 1 to 3600; got \'abc\'.' },
      { where: 'name', field: 'name', message: 'Enter a name.' },
    ]);
  });

  it('writes /v1 sentences that name the field, say what it expects and what came', () => {
    const schema = z.object({
      lat: expects(z.coerce.number().min(-90).max(90), 'a latitude in degrees, -90 to 90'),
      step: expects(z.coerce.number().min(1).max(3600), 'a number of seconds from 1 to 3600').optional(),
      day: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'must be a day such as 2025-01-31').optional(),
    });
    const err = caught(() => parseWith(schema, { step: ['60', '30'], day: 'monday' }, 'query', 'sentence'));
    expect((err.extras['errors'] as Array<{ where: string; message: string }>).map((e) => [e.where, e.message])).toEqual([
      ['query.lat', 'lat is required: a latitude in degrees, -90 to 90'],
      ['query.step', 'step was given twice; send it once'],
      ['query.day', "day must be a day such as 2025-01-31; got 'monday'"],
    ]);
    expect(err.detail).toBe("lat is required: a latitude in degrees, -90 to 90; step was given twice; send it once; day must be a day such as 2025-01-31; got 'monday'.");
  });

  it('names what a body must be when it is not an object at all', () => {
    const schema = expects(z.object({ name: z.string() }), 'a JSON object with a name');
    const err = caught(() => parseWith(schema, [], 'body', 'sentence'));
    expect(err.extras['errors']).toEqual([{ where: 'body', message: 'body must be a JSON object with a name; got a list' }]);
  });

  it('finds hints through optional, default and pipe wrappers', () => {
    const inner = expects(z.coerce.number(), 'a number of days');
    const schema = z.object({ days: inner.default(3), ids: expects(z.string().transform((v) => v.split(',')), 'comma-separated ids') });
    expect(hintAt(schema, ['days'])).toBe('a number of days');
    expect(hintAt(schema, ['ids'])).toBe('comma-separated ids');
    expect(hintAt(schema, ['other'])).toBeUndefined();
  });
});
