/** Session and account routes: /api/session, /api/auth/*, /api/me (docs/console-api.md). */
import type { Request } from 'express';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import { z } from 'zod';
import type { SessionInfo } from '@nadirline/shared/contract';
import type { AppContext } from '../../context.ts';
import { csrfToken, renewCsrfToken } from '../../http/csrf.ts';
import { HttpError } from '../../http/problem.ts';
import { userAuth } from '../../http/roles.ts';
import { currentUser, signIn, signOut } from '../../http/session.ts';
import { bodyEmail, clientKey, getThrottleStore, Throttle, throttle, tooManyAttempts } from '../../http/throttle.ts';
import { fields, parseBody } from '../../http/validate.ts';
import {
  checkCredentials,
  membershipsOf,
  requestPasswordReset,
  resendVerification,
  resetPassword,
  serializeUser,
  signUp,
  updateProfile,
  verifyEmail,
} from '../../services/accounts.ts';
import { afterResponse } from '../../services/after-response.ts';
import { ApiRoutes } from './routes.ts';

/** Sign-in throttling: this many failed tries per e-mail address and client address ... */
export const SIGNIN_MAX_FAILURES = 5;
/** ... within this window. */
export const SIGNIN_WINDOW_MS = 15 * 60 * 1000;
/** Messages (verification, reset) one client may ask for per window, per address. */
export const MAIL_REQUESTS_PER_WINDOW = 5;
/** Failed sign-ins for one account, from any number of client addresses, per window. */
export const SIGNIN_ACCOUNT_MAX_FAILURES = 20;
/** Mail requests (verification, reset) for one address from all clients together, per window. */
export const MAIL_REQUESTS_PER_ADDRESS = 5;
/** Mail requests (verification, reset) one client may make for all addresses together, per window. */
export const MAIL_REQUESTS_PER_CLIENT = 20;
/** Sign-ups one client may make per hour, and sign-ups naming one address per hour. */
export const SIGNUPS_PER_CLIENT_PER_HOUR = 10;
export const SIGNUPS_PER_ADDRESS_PER_HOUR = 3;
const HOUR_MS = 3600 * 1000;

const SignupBody = z.object({
  email: fields.email,
  name: fields.name,
  password: fields.password,
  /** Empty or absent: no organization yet (e.g. signing up from an invitation). */
  organizationName: z.string().trim().max(200).optional(),
  invitationToken: fields.token.optional(),
});
const TokenBody = z.object({ token: fields.token });
const EmailBody = z.object({ email: fields.email });
const SigninBody = z.object({ email: fields.email, password: z.string().min(1, { message: 'Enter your password.' }).max(200) });
const ResetBody = z.object({ token: fields.token, password: fields.password });
const MeBody = z
  .object({ name: fields.name.optional(), password: fields.password.optional(), currentPassword: z.string().max(200).optional() })
  .refine((b) => b.name !== undefined || b.password !== undefined, { message: 'Send a name or a password to change.' });

function clientAndEmail(req: Request): string {
  const email = typeof req.body?.email === 'string' ? req.body.email.trim().toLowerCase() : '';
  return `${ipKeyGenerator(req.ip ?? 'unknown')}|${email}`;
}

function tooMany(what: string) {
  return (_req: Request, res: { getHeader(name: string): unknown }, next: (err: unknown) => void) => {
    const retryAfter = Number(res.getHeader('Retry-After') ?? 0);
    const minutes = Math.max(1, Math.ceil(retryAfter / 60));
    next(new HttpError('too-many-attempts', `${what} Try again in ${minutes} minute${minutes === 1 ? '' : 's'}.`, { retryAfterSeconds: retryAfter }));
  };
}

export function accountRoutes(ctx: AppContext): ApiRoutes {
  const r = new ApiRoutes();

  const signinLimiter = rateLimit({
    windowMs: SIGNIN_WINDOW_MS,
    limit: SIGNIN_MAX_FAILURES,
    skipSuccessfulRequests: true,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: clientAndEmail,
    handler: tooMany('Too many failed sign-in attempts for this address.'),
  });
  const mailLimiter = rateLimit({
    windowMs: SIGNIN_WINDOW_MS,
    limit: MAIL_REQUESTS_PER_WINDOW,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: clientAndEmail,
    handler: tooMany('Too many e-mails asked for this address.'),
  });

  const store = getThrottleStore(ctx);
  const accountFailures = new Throttle(store, { name: 'signin-account', limit: SIGNIN_ACCOUNT_MAX_FAILURES, windowMs: SIGNIN_WINDOW_MS });
  const mailThrottle = throttle(
    [
      { throttle: new Throttle(store, { name: 'mail-client', limit: MAIL_REQUESTS_PER_CLIENT, windowMs: SIGNIN_WINDOW_MS }), key: clientKey },
      { throttle: new Throttle(store, { name: 'mail-address', limit: MAIL_REQUESTS_PER_ADDRESS, windowMs: SIGNIN_WINDOW_MS }), key: bodyEmail },
    ],
    'Too many e-mails asked for.',
  );
  const signupThrottle = throttle(
    [
      { throttle: new Throttle(store, { name: 'signup-client', limit: SIGNUPS_PER_CLIENT_PER_HOUR, windowMs: HOUR_MS }), key: clientKey },
      { throttle: new Throttle(store, { name: 'signup-address', limit: SIGNUPS_PER_ADDRESS_PER_HOUR, windowMs: HOUR_MS }), key: bodyEmail },
    ],
    'Too many sign-ups from here or for this address.',
  );

  r.get('/session', 'session.read', async (req, res) => {
    const user = await currentUser(req, res);
    const session: SessionInfo = {
      user: user ? serializeUser(user) : null,
      memberships: user ? await membershipsOf(user.id) : [],
      csrfToken: csrfToken(req, res, ctx.config),
    };
    res.json(session);
  });

  r.post('/auth/signup', 'account.signup', signupThrottle, async (req, res) => {
    const body = parseBody(SignupBody, req);
    // The same answer for a taken address (services/accounts.ts signUp).
    const { user, created, verified } = await signUp(ctx, body);
    if (created && verified && body.invitationToken) {
      // An invitation proved the address and made the membership: the new member is signed in at
      // once, with no second sign-in (the session and CSRF token are those of /auth/signin).
      await signIn(req, res, created);
      const csrfToken = renewCsrfToken(req);
      res.status(201).json({ user, signedIn: true, memberships: await membershipsOf(created.id), csrfToken });
      return;
    }
    res.status(201).json({ user, signedIn: false });
  });

  r.post('/auth/verify-email', 'account.verify-email', async (req, res) => {
    const { token } = parseBody(TokenBody, req);
    const user = await verifyEmail(ctx, token);
    res.json({ user: serializeUser(user) });
  });

  r.post('/auth/resend-verification', 'account.recover', mailLimiter, mailThrottle, async (req, res) => {
    const { email } = parseBody(EmailBody, req);
    // Answer first: whether the address has an account must not show in the timing.
    res.status(202).end();
    afterResponse(ctx, 'verification resend', () => resendVerification(ctx, email));
  });

  r.post('/auth/signin', 'account.signin', signinLimiter, async (req, res) => {
    const { email, password } = parseBody(SigninBody, req);
    // Per account, from every client address together (any address, so it tells nothing about which exist).
    const spent = await accountFailures.peek(email);
    if (spent.count >= SIGNIN_ACCOUNT_MAX_FAILURES) throw tooManyAttempts('Too many failed sign-in attempts for this account.', spent.retryAfterS);
    let user;
    try {
      user = await checkCredentials(ctx, email, password);
    } catch (err) {
      if (err instanceof HttpError && err.code === 'invalid-credentials') await accountFailures.hit(email);
      throw err;
    }
    await signIn(req, res, user);
    const token = renewCsrfToken(req);
    await signinLimiter.resetKey(clientAndEmail(req));
    await accountFailures.reset(email);
    const session: SessionInfo = { user: serializeUser(user), memberships: await membershipsOf(user.id), csrfToken: token };
    res.json(session);
  });

  r.post('/auth/signout', 'account.signout', async (req, res) => {
    await signOut(req, res);
    res.status(204).end();
  });

  r.post('/auth/forgot-password', 'account.recover', mailLimiter, mailThrottle, async (req, res) => {
    const { email } = parseBody(EmailBody, req);
    // Answer first: the same answer, at the same moment, for known and unknown addresses.
    res.status(202).end();
    afterResponse(ctx, 'password reset', () => requestPasswordReset(ctx, email));
  });

  r.post('/auth/reset-password', 'account.recover', async (req, res) => {
    const { token, password } = parseBody(ResetBody, req);
    await resetPassword(ctx, token, password);
    res.status(204).end();
  });

  r.patch('/me', 'account.update', async (req, res) => {
    const body = parseBody(MeBody, req);
    const user = await updateProfile(ctx, userAuth(res), body, req.sessionID);
    res.json({ user: serializeUser(user) });
  });

  return r;
}
