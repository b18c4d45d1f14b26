/**
 * Guards that turn malformed requests into 4xx problems before any route or the database sees
 * them (docs/security.md, "Malformed requests"):
 *
 *   bodyTimeout(ms)        a request whose body has not arrived within `ms` answers 408 and its
 *                          connection is closed (a Content-Length longer than the body sent
 *                          would otherwise hold the connection for minutes)
 *   refuseControlChars     a URL path with a control character (%00-%1F, %7F) answers 404, a
 *                          query string with a NUL (%00) 400: no id or parameter holds one, and
 *                          SQLite cuts a statement at a NUL
 *   refuseNulInJson        a JSON body with a NUL in any string answers 400, naming the field
 *   readMultipart(mw)      multer's middleware with busboy's errors ("Boundary not found",
 *                          "Unexpected end of form", "Malformed part header") as 400 problems
 */
import type { RequestHandler } from 'express';
import { HttpError, sendProblem } from './problem.ts';

/** Answer 408 (and close the connection) when the body is not in `ms` after the headers. 0 turns it off. */
export function bodyTimeout(ms: number): RequestHandler {
  return (req, res, next) => {
    if (ms <= 0 || req.complete) return next();
    let settled = false;
    const settle = () => {
      settled = true;
      clearTimeout(timer);
    };
    const timer = setTimeout(() => {
      if (settled || req.complete) return;
      settled = true;
      const socket = req.socket;
      if (res.headersSent) {
        socket.destroy();
        return;
      }
      // Answered here, not through next(): the route is still waiting for the body.
      res.setHeader('Connection', 'close');
      res.once('finish', () => socket.destroy());
      sendProblem(
        res,
        'request-timeout',
        `The request body did not arrive within ${ms / 1000} s of the headers (is Content-Length longer than the body?). Send the whole body at once.`,
        { timeoutMs: ms },
        req.originalUrl,
      );
    }, ms);
    timer.unref();
    req.once('end', settle);
    req.once('close', settle);
    next();
  };
}

/** Percent-encoded control characters: %00-%1F and %7F. */
const ENCODED_CONTROL = /%(?:[01][0-9a-f]|7f)/i;

export const refuseControlChars: RequestHandler = (req, _res, next) => {
  const url = req.url;
  const q = url.indexOf('?');
  const path = q < 0 ? url : url.slice(0, q);
  if (ENCODED_CONTROL.test(path)) {
    throw new HttpError('not-found', 'Nothing is served at this path: it holds a control character (such as %00), which no id or name here contains.');
  }
  if (q >= 0 && /%00/.test(url.slice(q))) {
    throw new HttpError('bad-request', 'The query string holds a NUL character (%00); no parameter takes one.', {
      errors: [{ where: 'query', message: 'holds a NUL character (%00)' }],
    });
  }
  next();
};

/** The path (`body.name`, `body.items[2]`) of the first string holding a NUL, or null. */
function nulPath(value: unknown, path: string, depth = 0): string | null {
  if (typeof value === 'string') return value.includes('\u0000') ? path : null;
  if (depth > 64 || value === null || typeof value !== 'object') return null;
  if (Array.isArray(value)) {
    for (let i = 0; i < value.length; i++) {
      const p = nulPath(value[i], `${path}[${i}]`, depth + 1);
      if (p) return p;
    }
    return null;
  }
  for (const [k, v] of Object.entries(value)) {
    if (k.includes('\u0000')) return `${path} (a key)`;
    const p = nulPath(v, `${path}.${k}`, depth + 1);
    if (p) return p;
  }
  return null;
}

export const refuseNulInJson: RequestHandler = (req, _res, next) => {
  const where = nulPath(req.body as unknown, 'body');
  if (where) {
    throw new HttpError('validation-failed', `${where} holds a NUL character (\\u0000); no field takes one.`, {
      errors: [{ where, message: 'holds a NUL character (\\u0000)' }],
    });
  }
  next();
};

/** busboy's own errors, in plain words (their messages are fixed strings in busboy 1.6). */
const MULTIPART_ERRORS: Array<[RegExp, string]> = [
  [/Boundary not found/i, 'the Content-Type names no boundary; send multipart/form-data; boundary=... as form libraries do'],
  [/Unexpected end of form/i, 'the body ends before the closing boundary (--boundary--); the upload may have been cut short'],
  [/Unexpected end of file/i, 'the body ends inside a file; the upload may have been cut short'],
  [/Malformed part header/i, 'a part header is malformed; each part needs its Content-Disposition header, then a blank line'],
  [/Malformed content type/i, 'the Content-Type header is malformed'],
  [/Missing Content-Type/i, 'the Content-Type header is missing'],
  [/Unsupported content type/i, 'the Content-Type is not multipart/form-data'],
  [/Malformed urlencoded form/i, 'the form body is malformed'],
];

/** Wrap a multer middleware so that a body busboy cannot read answers 400, never 500. */
export function readMultipart(mw: RequestHandler, decorate: (err: unknown) => unknown = (e) => e): RequestHandler {
  return (req, res, next) => {
    mw(req, res, (err?: unknown) => {
      if (!err) return next();
      const e = err as { name?: string; message?: string; code?: string };
      if (e.name === 'MulterError') return next(decorate(err));
      const known = MULTIPART_ERRORS.find(([re]) => re.test(e.message ?? ''));
      if (known) {
        return next(new HttpError('bad-request', `The multipart/form-data body could not be read: ${known[1]}.`, { reason: e.message }));
      }
      if (/^Request (aborted|closed)$/.test(e.message ?? '')) {
        return next(new HttpError('bad-request', 'The request was closed before its body arrived.'));
      }
      next(err);
    });
  };
}
