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
import { ApiRoutes } from './routes.ts';

/** Sign-in throttling: this many failed tries per e-mail address and client address ... */
export const SIGNIN_MAX_FAILURES = 5;
/** ... within this window. */
export const SIGNIN_WINDOW_MS = 15 * 60 * 1000;
/** Messages (verification, reset) one client may ask for per window, per address. */
export const MAIL_REQUESTS_PER_WINDOW = 5;

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

  r.get('/session', 'session.read', async (req, res) => {
    const user = await currentUser(req, res);
    const session: SessionInfo = {
      user: user ? serializeUser(user) : null,
      memberships: user ? await membershipsOf(user.id) : [],
      csrfToken: csrfToken(req, res, ctx.config),
    };
    res.json(session);
  });

  r.post('/auth/signup', 'account.signup', async (req, res) => {
    const body = parseBody(SignupBody, req);
    const { user } = await signUp(ctx, body);
    res.status(201).json({ user: serializeUser(user) });
  });

  r.post('/auth/verify-email', 'account.verify-email', async (req, res) => {
    const { token } = parseBody(TokenBody, req);
    const user = await verifyEmail(ctx, token);
    res.json({ user: serializeUser(user) });
  });

  r.post('/auth/resend-verification', 'account.recover', mailLimiter, async (req, res) => {
    const { email } = parseBody(EmailBody, req);
    await resendVerification(ctx, email);
    res.status(202).end();
  });

  r.post('/auth/signin', 'account.signin', signinLimiter, async (req, res) => {
    const { email, password } = parseBody(SigninBody, req);
    const user = await checkCredentials(ctx, email, password);
    await signIn(req, res, user);
    const token = renewCsrfToken(req);
    await signinLimiter.resetKey(clientAndEmail(req));
    const session: SessionInfo = { user: serializeUser(user), memberships: await membershipsOf(user.id), csrfToken: token };
    res.json(session);
  });

  r.post('/auth/signout', 'account.signout', async (req, res) => {
    await signOut(req, res);
    res.status(204).end();
  });

  r.post('/auth/forgot-password', 'account.recover', mailLimiter, async (req, res) => {
    const { email } = parseBody(EmailBody, req);
    await requestPasswordReset(ctx, email);
    res.status(202).end();
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
