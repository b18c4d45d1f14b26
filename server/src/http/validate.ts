/**
 * Request validation with zod. Handlers call these and get typed values back; a failure throws
 * HttpError('validation-failed') whose `errors` list says where ({ where, message, field }):
 * `where` is a JSON pointer into the body ("/email") or the query/route parameter name.
 *
 *   const body = parseBody(SignupBody, req);
 *   const query = parseQuery(UsageQuery, req);   (req.query is read-only in Express 5: never assign)
 *
 * Messages are written here, in one place. A schema's own message (`.min(1, 'Enter a name.')`,
 * a refinement's text) is kept; where zod would answer with its generic text ("Invalid input:
 * expected number, received NaN"), the message says what the field expects, from the hint a
 * schema registers with `expects(schema, 'a number of seconds from 1 to 3600')` (from
 * @nadirline/shared/contract), and what came:
 *
 *   lat is required: the observer's latitude, a number of degrees from -90 to 90
 *   step must be a number of seconds from 1 to 3600; got 'abc'
 *   step was given twice; send it once
 *
 * A refinement's own message gets "; got '...'" appended in the sentence style unless it quotes
 * the value itself and says so: ctx.addIssue({ code: 'custom', message, params: { showsValue: true } }).
 *
 * Two styles: 'field' (the console API: messages sit beside a form field, so they do not repeat
 * its name; `where` is a JSON pointer or the parameter name) and 'sentence' (/v1: each message is
 * a sentence that names the field; `where` is "query.step" or "body.name").
 */
import type { Request } from 'express';
import { z } from 'zod';
import { expects, fieldHints } from '@nadirline/shared/contract';
import { HttpError, type ProblemFieldError } from './problem.ts';
import { MAX_PASSWORD_BYTES, MIN_PASSWORD_CHARS } from '../services/passwords.ts';

export type Where = 'body' | 'query' | 'params';
export type MessageStyle = 'field' | 'sentence';

/** The hints live in the contract (shared/src/contract/hints.ts), beside the /v1 schemas that register them. */
export { expects, fieldHints };

/** Marks messages zod wrote itself (the schema gave none); they are rewritten below. */
const GENERIC = '\u0000generic';
const markGeneric = { error: () => GENERIC };

interface ZodDefLike {
  type?: string;
  innerType?: z.ZodType;
  in?: z.ZodType;
  shape?: Record<string, z.ZodType>;
  element?: z.ZodType;
}
const defOf = (s: z.ZodType): ZodDefLike => (s as unknown as { _zod: { def: ZodDefLike } })._zod.def;

/** The hint registered for the value at `path` (through optional, default, pipe, object, array). */
export function hintAt(schema: z.ZodType | undefined, path: readonly PropertyKey[]): string | undefined {
  let s = schema;
  let i = 0;
  for (let guard = 0; s && guard < 64; guard++) {
    if (i === path.length) {
      const h = fieldHints.get(s);
      if (h) return h.expects;
    }
    const def = defOf(s);
    if (def.innerType) s = def.innerType;
    else if (def.type === 'pipe' && def.in) s = def.in;
    else if (i < path.length && def.type === 'object' && def.shape) s = def.shape[String(path[i++])];
    else if (i < path.length && def.type === 'array' && def.element) {
      s = def.element;
      i++;
    } else return undefined;
  }
  return undefined;
}

function valueAt(value: unknown, path: readonly PropertyKey[]): unknown {
  let v = value;
  for (const p of path) {
    if (v === null || typeof v !== 'object') return undefined;
    v = (v as Record<PropertyKey, unknown>)[p];
  }
  return v;
}

/** "; got 'abc'" — what came, short. */
function got(v: unknown): string {
  if (v === undefined) return '';
  if (typeof v === 'string') {
    const shown = v.length > 40 ? `${v.slice(0, 37)}\u2026` : v;
    return `; got '${shown}'`;
  }
  if (typeof v === 'number' || typeof v === 'boolean') return `; got ${String(v)}`;
  if (v === null) return '; got null';
  if (Array.isArray(v)) return '; got a list';
  return '; got an object';
}

const TYPE_WORDS: Record<string, string> = {
  number: 'a number',
  int: 'a whole number',
  string: 'text',
  boolean: 'true or false',
  object: 'a JSON object',
  array: 'a list',
  date: 'a date',
};

/** What zod's check wanted, in words, when the schema registered no hint. */
function expectedOf(issue: z.core.$ZodIssue): string {
  const i = issue as z.core.$ZodIssue & { expected?: string; minimum?: number | bigint; maximum?: number | bigint; inclusive?: boolean; origin?: string; values?: unknown[]; format?: string; divisor?: number };
  const unit = i.origin === 'string' ? ' characters' : i.origin === 'array' || i.origin === 'set' ? ' items' : '';
  switch (issue.code) {
    case 'invalid_type':
      return TYPE_WORDS[i.expected ?? ''] ?? `of type ${i.expected ?? 'unknown'}`;
    case 'too_small':
      return `${i.inclusive === false ? 'more than' : 'at least'} ${String(i.minimum)}${unit}`;
    case 'too_big':
      return `${i.inclusive === false ? 'less than' : 'at most'} ${String(i.maximum)}${unit}`;
    case 'invalid_value':
      return (i.values ?? []).length === 1 ? `${JSON.stringify(i.values?.[0])}` : `one of ${(i.values ?? []).map((v) => JSON.stringify(v)).join(', ')}`;
    case 'invalid_format':
      return i.format === 'email' ? 'an e-mail address' : i.format === 'url' ? 'a URL' : i.format === 'regex' ? 'in the documented format' : `a valid ${i.format ?? 'value'}`;
    case 'not_multiple_of':
      return `a multiple of ${String(i.divisor)}`;
    case 'unrecognized_keys':
      return 'free of unknown fields';
    default:
      return 'valid';
  }
}

export interface ReadableIssue {
  path: string[];
  /** The message without the field's name ("is required: ..." / "must be ...; got 'x'" / the schema's own). */
  phrase: string;
  /** The schema wrote the message itself (kept as it is). */
  own: boolean;
  /** "; got 'abc'" for a scalar value that came, else ''. */
  came: string;
}

/** One readable phrase per issue (duplicates dropped): what was expected and what came. */
export function readableIssues(schema: z.ZodType | undefined, value: unknown, issues: readonly z.core.$ZodIssue[], where: Where): ReadableIssue[] {
  const out: ReadableIssue[] = [];
  const seen = new Set<string>();
  for (const issue of issues) {
    const path = issue.path.map(String);
    const top = valueAt(value, issue.path.slice(0, 1));
    const v = valueAt(value, issue.path);
    let phrase: string;
    let own = false;
    if (where === 'query' && Array.isArray(top)) {
      phrase = `was given ${top.length === 2 ? 'twice' : `${top.length} times`}; send it once`;
    } else if (issue.message !== GENERIC) {
      own = true;
      phrase = issue.message;
    } else {
      const hint = hintAt(schema, issue.path) ?? (issue.path.length > 1 ? hintAt(schema, issue.path.slice(0, 1)) : undefined);
      if (v === undefined && (issue.code === 'invalid_type' || issue.code === 'invalid_value' || issue.code === 'invalid_union')) {
        phrase = hint ? `is required: ${hint}` : 'is required';
      } else {
        phrase = `must be ${hint ?? expectedOf(issue)}${got(v)}`;
      }
    }
    const k = `${path.join('.')}|${phrase}`;
    if (seen.has(k)) continue;
    seen.add(k);
    // A refinement that quotes the value itself says so with params: { showsValue: true }.
    const shows = (issue as { params?: { showsValue?: boolean } }).params?.showsValue === true;
    out.push({ path, phrase, own, came: typeof v === 'object' || shows ? '' : got(v) });
  }
  return out;
}

/** A whole sentence naming the field: "step must be ...", "name: Enter a name.", "body must be ...". */
function sentence(r: ReadableIssue, where: Where): string {
  const name = r.path.length ? r.path.join('.') : where === 'params' ? 'path' : where;
  // The schema's own messages are either predicates ("must lie within ...") or full sentences ("Enter a name.").
  if (r.own && /^[A-Z]/.test(r.phrase)) return `${name}: ${r.phrase}`;
  return `${name} ${r.phrase}${r.own && !r.phrase.includes('; got ') ? r.came : ''}`;
}

/** A message shown beside the field: the schema's own as it is, else the phrase as a sentence. */
function fieldMessage(r: ReadableIssue): string {
  if (r.own) return r.phrase;
  return `${r.phrase.charAt(0).toUpperCase()}${r.phrase.slice(1)}.`;
}

export function issuesToErrors(issues: readonly z.core.$ZodIssue[], where: Where, opts: { schema?: z.ZodType; value?: unknown; style?: MessageStyle } = {}): ProblemFieldError[] {
  return readableIssues(opts.schema, opts.value, issues, where).map((r) => {
    const field = r.path.length ? r.path.join('.') : undefined;
    if (opts.style === 'sentence') {
      const at = field ? `${where}.${field}` : where;
      return { where: at, message: sentence(r, where), ...(field ? { field } : {}) };
    }
    const at = where === 'body' ? `/${r.path.join('/')}` : (field ?? where);
    return { where: at, message: fieldMessage(r), ...(field ? { field } : {}) };
  });
}

/** The validation-failed problem for these issues. */
export function validationProblem(schema: z.ZodType, value: unknown, issues: readonly z.core.$ZodIssue[], where: Where, style: MessageStyle = 'field'): HttpError {
  const errors = issuesToErrors(issues, where, { schema, value, style });
  if (style === 'sentence') {
    const text = errors.map((e) => e.message).join('; ');
    // Sentences start with the field's name, as written (lat, ids, body): not capitalized.
    return new HttpError('validation-failed', text ? `${text}${/[.!?]$/.test(text) ? '' : '.'}` : `The ${where} is not valid.`, { errors });
  }
  const first = errors[0];
  const detail = first
    ? `${where === 'body' ? 'The request body' : `The ${where === 'query' ? 'query' : 'path'}`} is not valid: ${first.field ? `${first.field}: ` : ''}${first.message.replace(/\.$/, '')}${errors.length > 1 ? ` (and ${errors.length - 1} more)` : ''}.`
    : `The ${where} is not valid.`;
  return new HttpError('validation-failed', detail, { errors });
}

/** safeParse that marks zod's generic messages so validationProblem can rewrite them. */
export function safeParseMarked<S extends z.ZodType>(schema: S, value: unknown): z.ZodSafeParseResult<z.output<S>> {
  return schema.safeParse(value, markGeneric) as z.ZodSafeParseResult<z.output<S>>;
}

export function parseWith<S extends z.ZodType>(schema: S, value: unknown, where: Where, style: MessageStyle = 'field'): z.infer<S> {
  const result = safeParseMarked(schema, value);
  if (result.success) return result.data;
  throw validationProblem(schema, value, result.error.issues, where, style);
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
  /** Length rules only; services/passwords.ts also refuses guessable passwords (with the person's own words). */
  password: z
    .string()
    .min(MIN_PASSWORD_CHARS, { message: `Use at least ${MIN_PASSWORD_CHARS} characters.` })
    .refine((p) => Buffer.byteLength(p, 'utf8') <= MAX_PASSWORD_BYTES, {
      message: `Use at most ${MAX_PASSWORD_BYTES} bytes (letters outside A-Z take 2 to 4 bytes each); longer passwords would be cut.`,
    }),
  name: z.string().trim().min(1, { message: 'Enter a name.' }).max(200),
  token: z.string().trim().min(10).max(200),
};
