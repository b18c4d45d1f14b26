/**
 * Server-side sessions for /api: express-session with connect-session-sequelize on the `Sessions`
 * table (created by migration 0001; the store is never synced). Cookie `nadir.sid`: httpOnly,
 * SameSite=Lax, Secure in production, rolling 14 days.
 *
 * The table never holds a session id as the cookie carries it: the store keys rows by
 * storedSid(id), a SHA-256 of the id, so someone who can read the database cannot sign in as
 * anyone. Only signed-in sessions are stored (anonymous visitors get their CSRF token from a
 * cookie, see csrf.ts).
 *
 *   createSessionMiddleware(ctx)      the middleware (one store per app; stopped on close)
 *   currentUser(req, res)             the signed-in User or null (cached per request)
 *   signIn(req, userId) / signOut(req, res)
 *   destroyUserSessions(userId, exceptSid?)  sign a user out everywhere (after a password reset)
 */
import crypto from 'node:crypto';
import type { Request, RequestHandler, Response } from 'express';
import session from 'express-session';
import connectSessionSequelize from 'connect-session-sequelize';
import { Op } from 'sequelize';
import type { AppContext } from '../context.ts';
import { User } from '../models/index.ts';

declare module 'express-session' {
  interface SessionData {
    userId?: string;
    csrfToken?: string;
  }
}

export const SESSION_COOKIE = 'nadir.sid';
export const SESSION_MAX_AGE_MS = 14 * 24 * 3600 * 1000;

/** Model name the store registers on the Sequelize instance. */
export const SESSION_MODEL = 'Session';

/**
 * The key a session is stored under: SHA-256 of its id, base64url, cut to the 36 characters of the
 * `Sessions.sid` column (216 bits).
 */
export function storedSid(sid: string): string {
  return crypto.createHash('sha256').update(sid).digest('base64url').slice(0, 36);
}

export function createSessionMiddleware(ctx: AppContext): RequestHandler {
  const SequelizeStore = connectSessionSequelize(session.Store);
  const store = new SequelizeStore({
    db: ctx.sequelize,
    tableName: 'Sessions',
    modelKey: SESSION_MODEL,
    checkExpirationInterval: 15 * 60 * 1000,
    expiration: SESSION_MAX_AGE_MS,
  });
  ctx.onClose(() => store.stopExpiringSessions());
  // The same store, keyed by storedSid(id) instead of the id (none of these calls another).
  const methods = store as unknown as Record<'get' | 'set' | 'touch' | 'destroy', (sid: string, ...rest: unknown[]) => unknown>;
  for (const name of ['get', 'set', 'touch', 'destroy'] as const) {
    const original = methods[name].bind(store);
    methods[name] = (sid: string, ...rest: unknown[]) => original(storedSid(sid), ...rest);
  }
  return session({
    name: SESSION_COOKIE,
    secret: ctx.config.sessionSecret,
    store,
    resave: false,
    saveUninitialized: false,
    rolling: true,
    cookie: {
      httpOnly: true,
      sameSite: 'lax',
      secure: ctx.config.isProduction,
      maxAge: SESSION_MAX_AGE_MS,
      path: '/',
    },
  });
}

/** The signed-in user, or null. A session whose user is gone counts as signed out. */
export async function currentUser(req: Request, res: Response): Promise<User | null> {
  if (res.locals['user'] !== undefined) return res.locals['user'] as User | null;
  const userId = req.session?.userId;
  const user = userId ? await User.findByPk(userId) : null;
  res.locals['user'] = user;
  return user;
}

function promisified(fn: (cb: (err?: unknown) => void) => void): Promise<void> {
  return new Promise((resolve, reject) => fn((err) => (err ? reject(err instanceof Error ? err : new Error(String(err))) : resolve())));
}

/** New session id on sign-in (no fixation), bound to the user. The caller sets a fresh CSRF token. */
export async function signIn(req: Request, res: Response, user: User): Promise<void> {
  await promisified((cb) => req.session.regenerate(cb));
  req.session.userId = user.id;
  res.locals['user'] = user;
}

export async function signOut(req: Request, res: Response): Promise<void> {
  if (req.session) await promisified((cb) => req.session.destroy(cb));
  res.locals['user'] = null;
  res.clearCookie(SESSION_COOKIE, { path: '/', httpOnly: true, sameSite: 'lax', secure: req.secure });
}

/** Removes every stored session of a user (except the one with id exceptSid, as req.sessionID gives it), e.g. after a password reset. */
export async function destroyUserSessions(ctx: AppContext, userId: string, exceptSid?: string): Promise<number> {
  const model = ctx.sequelize.models[SESSION_MODEL];
  if (!model) return 0;
  // The session data is JSON text. LIKE (portable SQL) narrows the rows; `_` in an id is a LIKE
  // wildcard that also matches itself, so the exact check on the parsed data follows.
  const where: Record<string | symbol, unknown> = { data: { [Op.like]: `%"userId":"${userId.replace(/[%\\"]/g, '')}"%` } };
  if (exceptSid) where['sid'] = { [Op.ne]: storedSid(exceptSid) };
  const rows = (await model.findAll({ where, attributes: ['sid', 'data'] })) as unknown as Array<{ sid: string; data: string | null }>;
  const sids = rows.filter((r) => {
    try {
      return (JSON.parse(r.data ?? '{}') as { userId?: unknown }).userId === userId;
    } catch {
      return false;
    }
  }).map((r) => r.sid);
  if (sids.length === 0) return 0;
  return model.destroy({ where: { sid: sids } });
}
