/**
 * Problem details (RFC 9457). Every error the server answers is application/problem+json with
 * `type`, `title`, `status`, `detail`, and a stable `code` extension member clients may rely on
 * (the widget maps codes to messages). Validation problems add `errors: [{ where, field, message }]`. `instance` is the request path, never its query string.
 */
import type { ErrorRequestHandler, RequestHandler, Response } from 'express';
import type { Logger } from 'pino';
import { BUSY_RETRY_AFTER_S, isDatabaseBusy } from '../db/write-lock.ts';

export interface ProblemFieldError {
  /** Where the problem is: a JSON pointer, a query parameter name, or "line 3, column 12". */
  where: string;
  message: string;
  line?: number;
  column?: number;
  field?: string;
}

/** Status and title per code, in one table. */
export const PROBLEM_TYPES = {
  'bad-request': { status: 400, title: 'Bad request' },
  'validation-failed': { status: 400, title: 'Request parameters are not valid' },
  'invalid-token': { status: 400, title: 'Link not valid or expired' },
  'signature-invalid': { status: 400, title: 'Signature not valid' },
  'unauthenticated': { status: 401, title: 'Authentication required' },
  'invalid-credentials': { status: 401, title: 'E-mail address or password not right' },
  'invalid-key': { status: 401, title: 'API key not recognised' },
  'key-expired': { status: 401, title: 'API key expired' },
  'key-revoked': { status: 401, title: 'API key revoked' },
  'key-rotated': { status: 401, title: 'API key replaced and retired' },
  'forbidden': { status: 403, title: 'Not allowed' },
  'origin-not-allowed': { status: 403, title: 'Origin not allowed for this key' },
  'scope-missing': { status: 403, title: 'Key lacks the required scope' },
  'browser-key-read-only': { status: 403, title: 'Browser keys are read-only' },
  'csrf-failed': { status: 403, title: 'Missing or wrong CSRF token' },
  'email-not-verified': { status: 403, title: 'E-mail address not verified' },
  'email-mismatch': { status: 403, title: 'Signed in with another e-mail address' },
  'not-found': { status: 404, title: 'Not found' },
  'method-not-allowed': { status: 405, title: 'Method not allowed' },
  'request-timeout': { status: 408, title: 'Request body not received in time' },
  'conflict': { status: 409, title: 'Conflict' },
  'owner-protected': { status: 409, title: 'The owner cannot be removed or demoted' },
  'key-in-use': { status: 409, title: 'Key still used by embeds' },
  'payload-too-large': { status: 413, title: 'Payload too large' },
  'unsupported-media-type': { status: 415, title: 'Unsupported media type' },
  'unprocessable-element-set': { status: 422, title: 'Element set could not be used' },
  'unprocessable': { status: 422, title: 'Request could not be processed' },
  'no-element-set': { status: 422, title: 'Satellite has no element set yet' },
  'decayed': { status: 422, title: 'Object has decayed according to its element set' },
  'propagation-failed': { status: 422, title: 'Position could not be computed' },
  'rate-limited': { status: 429, title: 'Too many requests' },
  'quota-exceeded': { status: 429, title: 'Monthly quota reached' },
  'too-many-attempts': { status: 429, title: 'Too many attempts' },
  'internal': { status: 500, title: 'Internal server error' },
  'busy': { status: 503, title: 'Busy with other writes' },
  'unavailable': { status: 503, title: 'Service unavailable' },
} as const;
export type ProblemCode = keyof typeof PROBLEM_TYPES;

/** Documentation base for problem `type` URIs (served by the app at /docs/problems). */
export const PROBLEM_TYPE_BASE = '/docs/problems#';

export class HttpError extends Error {
  readonly code: ProblemCode;
  readonly status: number;
  readonly detail: string;
  readonly extras: Record<string, unknown>;
  readonly headers: Record<string, string>;
  constructor(code: ProblemCode, detail: string, extras: Record<string, unknown> = {}, headers: Record<string, string> = {}) {
    super(detail);
    this.name = 'HttpError';
    this.code = code;
    this.status = PROBLEM_TYPES[code].status;
    this.detail = detail;
    this.extras = extras;
    this.headers = headers;
  }
}

/**
 * The `instance` member: the request's path only. The query string never goes back (a key sent
 * in `?key=` must not be echoed into answers, logs or screenshots), nor does an invitation token.
 */
export function problemInstance(url: string): string {
  const cut = url.search(/[?#]/);
  const path = cut === -1 ? url : url.slice(0, cut);
  return path.replace(/(\/(?:api\/invitations|invite)\/)[^/]+/i, '$1[hidden]');
}

export function sendProblem(
  res: Response,
  code: ProblemCode,
  detail: string,
  extras: Record<string, unknown> = {},
  instance?: string,
): void {
  const t = PROBLEM_TYPES[code];
  res
    .status(t.status)
    .type('application/problem+json')
    .json({ type: `${PROBLEM_TYPE_BASE}${code}`, title: t.title, status: t.status, detail, code, ...(instance ? { instance: problemInstance(instance) } : {}), ...extras });
}

export const notFoundHandler: RequestHandler = (req, res) => {
  sendProblem(res, 'not-found', `Nothing is served at ${req.method} ${req.path}.`, {}, req.originalUrl);
};

/** 2097152 -> "2 MiB", 1536 -> "1.5 KiB". */
export function formatBytes(n: number): string {
  if (n >= 1024 * 1024) return `${Number((n / 1024 / 1024).toFixed(2))} MiB`;
  if (n >= 1024) return `${Number((n / 1024).toFixed(1))} KiB`;
  return `${n} bytes`;
}

/**
 * Upload errors from multer with the limit they broke. Routes that know their limits wrap the
 * multer callback with this so the problem can name them (multer's own errors do not).
 */
export function withUploadLimits<E>(err: E, limits: { fileBytes?: number; files?: number }): E {
  if (err && typeof err === 'object') Object.assign(err as object, { limits });
  return err;
}

/** A broken percent-encoding in the URL, as the router or decodeURIComponent reports it. */
function badEncoding(e: { name?: string; message?: string }): string | null {
  const m = /^Failed to decode param '(.*)'$/s.exec(e.message ?? '');
  if (!m && e.name !== 'URIError') return null;
  const piece = m?.[1];
  return `The URL holds a broken percent-encoding${piece ? ` (${piece.slice(0, 60)})` : ''}: after each % come two hexadecimal digits, and together they must spell UTF-8 text. Write a literal % as %25.`;
}

/** The one error handler: everything becomes problem+json; internals only in development. */
export function errorHandler(opts: { exposeInternals: boolean; logger: Logger }): ErrorRequestHandler {
  return (err: unknown, req, res, _next) => {
    if (res.headersSent) {
      res.end();
      return;
    }
    if (err instanceof HttpError) {
      for (const [k, v] of Object.entries(err.headers)) res.setHeader(k, v);
      sendProblem(res, err.code, err.detail, err.extras, req.originalUrl);
      return;
    }
    const e = err as {
      name?: string;
      type?: string;
      status?: number;
      statusCode?: number;
      message?: string;
      code?: string;
      field?: string;
      filename?: string;
      limit?: number;
      length?: number;
      limits?: { fileBytes?: number; files?: number };
    };
    // Errors raised by body parsers and multer carry a status or a known type.
    if (e?.type === 'entity.parse.failed') {
      sendProblem(res, 'bad-request', `The request body is not valid JSON: ${e.message ?? ''}`.trim(), {}, req.originalUrl);
      return;
    }
    if (e?.type === 'entity.too.large') {
      const limit = typeof e.limit === 'number' ? e.limit : undefined;
      const size = typeof e.length === 'number' && Number.isFinite(e.length) && limit !== undefined && formatBytes(e.length) !== formatBytes(limit) ? ` (${formatBytes(e.length)})` : '';
      sendProblem(
        res,
        'payload-too-large',
        limit !== undefined ? `The request body${size} is larger than the ${formatBytes(limit)} limit.` : 'The request body is larger than this route accepts.',
        limit !== undefined ? { limitBytes: limit } : {},
        req.originalUrl,
      );
      return;
    }
    if (e?.code === 'LIMIT_FILE_SIZE') {
      const limit = e.limits?.fileBytes;
      const name = e.filename ? e.filename : 'A file';
      sendProblem(
        res,
        'payload-too-large',
        `${name} is larger than the ${limit !== undefined ? `${formatBytes(limit)} ` : ''}limit per file. Split it into several files.`,
        { ...(limit !== undefined ? { limitBytes: limit } : {}), ...(e.filename ? { file: e.filename } : {}) },
        req.originalUrl,
      );
      return;
    }
    if (e?.code === 'LIMIT_FILE_COUNT' && e.limits?.files !== undefined) {
      sendProblem(res, 'payload-too-large', `At most ${e.limits.files} files per upload; send the rest in another request.`, { limitFiles: e.limits.files }, req.originalUrl);
      return;
    }
    if (e?.code?.startsWith?.('LIMIT_')) {
      sendProblem(res, 'bad-request', `Upload refused: ${e.message ?? e.code}${e.field ? ` (field ${e.field})` : ''}.`, {}, req.originalUrl);
      return;
    }
    const encoding = e && typeof e === 'object' ? badEncoding(e) : null;
    if (encoding) {
      sendProblem(res, 'bad-request', encoding, {}, req.originalUrl);
      return;
    }
    const status = e?.status ?? e?.statusCode;
    if (typeof status === 'number' && status >= 400 && status < 500) {
      sendProblem(res, 'bad-request', e.message ?? 'Bad request.', {}, req.originalUrl);
      return;
    }
    if (isDatabaseBusy(err)) {
      opts.logger.warn({ err, url: req.originalUrl }, 'database busy');
      res.setHeader('Retry-After', String(BUSY_RETRY_AFTER_S));
      sendProblem(res, 'busy', `The database is busy with other writes and this request could not get its turn in time; nothing was changed by it. Send it again in ${BUSY_RETRY_AFTER_S} s.`, {}, req.originalUrl);
      return;
    }
    opts.logger.error({ err, url: req.originalUrl }, 'unhandled error');
    const detail = opts.exposeInternals && err instanceof Error ? `${err.message}\n${err.stack ?? ''}` : 'Something went wrong on our side. It has been logged.';
    sendProblem(res, 'internal', detail, {}, req.originalUrl);
  };
}
