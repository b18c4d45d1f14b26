import type { Request } from 'express';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { HttpError } from './problem.ts';
import { fields, parseBody, parseQuery } from './validate.ts';

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
    expect(err.detail).toBe('The request body is not valid: email: Enter an e-mail address like name@example.org. (and 1 more).');
  });

  it('names the query parameter for query problems', () => {
    const err = caught(() => parseQuery(z.object({ limit: z.coerce.number().int().max(5) }), { query: { limit: '9' } } as unknown as Request));
    expect((err.extras['errors'] as Array<{ where: string }>)[0]!.where).toBe('limit');
  });

  it('treats a missing body as an empty object', () => {
    const err = caught(() => parseBody(z.object({ name: fields.name }), {} as Request));
    expect((err.extras['errors'] as Array<{ field: string }>)[0]!.field).toBe('name');
  });
});
