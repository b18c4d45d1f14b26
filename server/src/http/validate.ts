/**
 * Request validation with zod. Handlers call these and get typed values back; a failure throws
 * HttpError('validation-failed') whose `errors` list says where ({ where, message, field }):
 * `where` is a JSON pointer into the body ("/email") or the query/route parameter name.
 *
 *   const body = parseBody(SignupBody, req);
 *   const query = parseQuery(UsageQuery, req);   (req.query is read-only in Express 5: never assign)
 */
import type { Request } from 'express';
import { z } from 'zod';
import { HttpError, type ProblemFieldError } from './problem.ts';

export type Where = 'body' | 'query' | 'params';

export function issuesToErrors(issues: readonly z.core.$ZodIssue[], where: Where): ProblemFieldError[] {
  return issues.map((issue) => {
    const path = issue.path.map(String);
    const field = path.length ? path.join('.') : undefined;
    const at = where === 'body' ? `/${path.join('/')}` : (field ?? where);
    return { where: at, message: issue.message, ...(field ? { field } : {}) };
  });
}

export function parseWith<S extends z.ZodType>(schema: S, value: unknown, where: Where): z.infer<S> {
  const result = schema.safeParse(value);
  if (result.success) return result.data;
  const errors = issuesToErrors(result.error.issues, where);
  const first = errors[0];
  const detail = first
    ? `${where === 'body' ? 'The request body' : `The ${where === 'query' ? 'query' : 'path'}`} is not valid: ${first.field ? `${first.field}: ` : ''}${first.message}${errors.length > 1 ? ` (and ${errors.length - 1} more)` : ''}.`
    : `The ${where} is not valid.`;
  throw new HttpError('validation-failed', detail, { errors });
}

export const parseBody = <S extends z.ZodType>(schema: S, req: Request): z.infer<S> => parseWith(schema, req.body ?? {}, 'body');
export const parseQuery = <S extends z.ZodType>(schema: S, req: Request): z.infer<S> => parseWith(schema, req.query, 'query');
export const parseParams = <S extends z.ZodType>(schema: S, req: Request): z.infer<S> => parseWith(schema, req.params, 'params');

/** Common field schemas of the console API. */
export const fields = {
  email: z
    .string()
    .trim()
    .toLowerCase()
    .max(320)
    .pipe(z.email({ message: 'Enter an e-mail address like name@example.org.' })),
  password: z
    .string()
    .min(10, { message: 'Use at least 10 characters.' })
    .max(200, { message: 'Use at most 200 characters.' }),
  name: z.string().trim().min(1, { message: 'Enter a name.' }).max(200),
  token: z.string().trim().min(10).max(200),
};
