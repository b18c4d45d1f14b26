/**
 * What a field expects, in words, registered on the schema itself so a validation message can say
 * it ("step must be a number of seconds from 1 to 3600; got 'abc'"). The server's validation
 * (server/src/http/validate.ts) reads this registry to write its messages.
 */
import { z } from 'zod';

/** What a field expects, in words ("a number of seconds from 1 to 3600"). */
export const fieldHints = z.registry<{ expects: string }>();

/** Register what a field expects; returns the schema (use it in place). */
export function expects<S extends z.ZodType>(schema: S, what: string): S {
  fieldHints.add(schema, { expects: what });
  return schema;
}
