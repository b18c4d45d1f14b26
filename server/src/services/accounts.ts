/**
 * Accounts: sign-up, e-mail verification, sign-in checks, password reset, profile.
 * Passwords are bcrypt hashes made by the native `bcrypt` package, whose async hash and compare
 * run in libuv's thread pool, never on the event loop (hashes made before with bcryptjs, $2a$ or
 * $2b$, verify the same); e-mail tokens are random 256-bit strings of which only the SHA-256 is
 * stored, usable once and until they expire.
 *
 *   signUp(ctx, { email, name, password, organizationName?, invitationToken? }) -> { user (JSON), created, organization, verified }
 *       (a taken address answers the same, creates nothing and mails its owner)
 *   verifyEmail(ctx, token) -> User                       (400 invalid-token)
 *   resendVerification(ctx, email) -> void                (silent when nothing to send)
 *   checkCredentials(ctx, email, password) -> User        (401 invalid-credentials, 403 email-not-verified)
 *   requestPasswordReset(ctx, email) -> void              (silent when no such account)
 *   resetPassword(ctx, token, password) -> User           (400 invalid-token; signs the user out everywhere)
 *   updateProfile(ctx, user, { name?, password?, currentPassword? }) -> User
 *   serializeUser(user) -> UserJson; membershipsOf(userId) -> MembershipJson[]
 *   hashPassword / passwordMatches / newToken / hashToken
 */
import crypto from 'node:crypto';
import bcrypt from 'bcrypt';
import { nanoid } from 'nanoid';
import { Op, UniqueConstraintError, type Transaction } from 'sequelize';
import type { AppContext } from '../context.ts';
import { HttpError } from '../http/problem.ts';
import { destroyUserSessions } from '../http/session.ts';
import { EmailToken, Membership, Organization, User } from '../models/index.ts';
import { afterResponse } from './after-response.ts';
import { accountExistsMail, getMailService, resetPasswordMail, verificationMail } from './mail.ts';
import { acceptInvitationForUser, createOrganization, invitationOrThrow } from './orgs.ts';
import { passwordProblem, personalWords } from './passwords.ts';
import type { Membership as MembershipOfContract, User as UserOfContract } from '@nadirline/shared/contract';

export const VERIFY_TOKEN_TTL_MS = 48 * 3600 * 1000;
export const RESET_TOKEN_TTL_MS = 3600 * 1000;

export type UserJson = UserOfContract;

export type MembershipJson = MembershipOfContract;

export function serializeUser(user: User): UserJson {
  return {
    id: user.id,
    email: user.email,
    name: user.name,
    emailVerified: user.emailVerifiedAt !== null,
    createdAt: new Date(user.createdAt).toISOString(),
  };
}

export async function membershipsOf(userId: string): Promise<MembershipJson[]> {
  const rows = await Membership.findAll({
    where: { userId },
    include: [{ model: Organization, as: 'organization' }],
    order: [['createdAt', 'ASC']],
  });
  return rows.flatMap((m) => {
    const org = (m as Membership & { organization?: Organization }).organization;
    return org ? [{ organization: { id: org.id, name: org.name, plan: org.plan }, role: m.role }] : [];
  });
}

/** bcrypt cost: lower in tests only, to keep them quick. */
function cost(ctx: AppContext): number {
  return ctx.config.isTest ? 4 : ctx.config.isProduction ? 12 : 10;
}

export async function hashPassword(ctx: AppContext, password: string): Promise<string> {
  return bcrypt.hash(password, cost(ctx));
}

export async function passwordMatches(password: string, hash: string): Promise<boolean> {
  return bcrypt.compare(password, hash);
}

export function hashToken(token: string): string {
  return crypto.createHash('sha256').update(token).digest('hex');
}

export function newToken(): { token: string; tokenHash: string } {
  const token = crypto.randomBytes(32).toString('base64url');
  return { token, tokenHash: hashToken(token) };
}

/** 400 validation-failed on /password when the password is guessable (services/passwords.ts). */
export function assertPasswordAcceptable(password: string, ...personal: Array<string | undefined>): void {
  const problem = passwordProblem(password, personalWords(...personal));
  if (problem) throw new HttpError('validation-failed', problem, { errors: [{ where: '/password', field: 'password', message: problem }] });
}

export function normalizeEmail(email: string): string {
  return email.trim().toLowerCase();
}

async function issueEmailToken(userId: string, purpose: EmailToken['purpose'], ttlMs: number, transaction?: Transaction): Promise<string> {
  const { token, tokenHash } = newToken();
  await EmailToken.create(
    { id: nanoid(), userId, purpose, tokenHash, expiresAt: new Date(Date.now() + ttlMs), usedAt: null },
    transaction ? { transaction } : {},
  );
  return token;
}

/** Finds an unused, unexpired token; 400 invalid-token (with `reason`) otherwise. */
async function consumeEmailToken(token: string, purpose: EmailToken['purpose'], transaction: Transaction): Promise<EmailToken> {
  const row = await EmailToken.findOne({ where: { tokenHash: hashToken(token), purpose }, transaction });
  const what = purpose === 'verify-email' ? 'confirmation' : 'password reset';
  if (!row) throw new HttpError('invalid-token', `This ${what} link is not valid. Ask for a new one.`, { reason: 'unknown' });
  if (row.usedAt) throw new HttpError('invalid-token', `This ${what} link was already used. Ask for a new one if you need it.`, { reason: 'used' });
  if (row.expiresAt.getTime() < Date.now()) throw new HttpError('invalid-token', `This ${what} link has expired. Ask for a new one.`, { reason: 'expired' });
  row.usedAt = new Date();
  await row.save({ transaction });
  return row;
}

function link(ctx: AppContext, path: string): string {
  return `${ctx.config.publicUrl}${path}`;
}

async function sendSafely(ctx: AppContext, mail: Parameters<Awaited<ReturnType<typeof getMailService>>['send']>[0]): Promise<void> {
  try {
    const service = await getMailService(ctx);
    await service.send(mail);
  } catch (err) {
    // The account change stands; the person can ask for the message again.
    ctx.logger.error({ err, subject: mail.subject }, 'could not send e-mail');
  }
}

export interface SignUpInput {
  email: string;
  name: string;
  password: string;
  organizationName?: string | undefined;
  invitationToken?: string | undefined;
}

/**
 * Answers the same for a new address and for one that has an account already (no probing who
 * has an account): the same work (a password hash, one e-mail sent after the answer) and the
 * same answer shape. For a taken address nothing is created; its owner gets a note instead.
 */
export async function signUp(ctx: AppContext, input: SignUpInput): Promise<{ user: UserJson; created: User | null; organization: Organization | null; verified: boolean }> {
  const email = normalizeEmail(input.email);
  assertPasswordAcceptable(input.password, email, input.name);
  // An invitation that no longer works is said so, rather than silently making a plain account.
  const invitation = input.invitationToken ? await invitationOrThrow(input.invitationToken) : null;
  if (invitation && normalizeEmail(invitation.email) !== email) {
    throw new HttpError('email-mismatch', `This invitation was sent to ${invitation.email}; sign up with that address to accept it.`);
  }
  // Signing up from an invitation link proves the address: the invitation went to it.
  const verified = invitation !== null;
  const passwordHash = await hashPassword(ctx, input.password);
  const existing = await User.findOne({ where: { email } });
  const asIfNew = (): UserJson => ({ id: nanoid(), email, name: input.name, emailVerified: verified, createdAt: new Date().toISOString() });
  const tellOwner = (owner: User) =>
    afterResponse(ctx, 'account-exists e-mail', () => sendSafely(ctx, accountExistsMail(owner.email, owner.name, link(ctx, '/sign-in'), link(ctx, '/forgot-password'))));
  if (existing) {
    tellOwner(existing);
    return { user: asIfNew(), created: null, organization: null, verified };
  }
  let result: { user: User; organization: Organization | null; token: string | null };
  try {
    result = await ctx.sequelize.transaction(async (transaction) => {
      const user = await User.create(
        { id: nanoid(), email, name: input.name, passwordHash, emailVerifiedAt: verified ? new Date() : null },
        { transaction },
      );
      const organization = input.organizationName?.trim() ? await createOrganization(ctx, user, input.organizationName, transaction) : null;
      if (invitation) await acceptInvitationForUser(ctx, invitation, user, transaction);
      const token = verified ? null : await issueEmailToken(user.id, 'verify-email', VERIFY_TOKEN_TTL_MS, transaction);
      return { user, organization, token };
    });
  } catch (err) {
    // Two sign-ups for one new address at once: the second finds it taken, as above.
    if (!(err instanceof UniqueConstraintError)) throw err;
    const owner = await User.findOne({ where: { email } });
    if (owner) tellOwner(owner);
    return { user: asIfNew(), created: null, organization: null, verified };
  }
  const token = result.token;
  if (token) afterResponse(ctx, 'verification e-mail', () => sendSafely(ctx, verificationMail(email, input.name, link(ctx, `/verify-email?token=${token}`))));
  return { user: serializeUser(result.user), created: result.user, organization: result.organization, verified };
}

export async function verifyEmail(ctx: AppContext, token: string): Promise<User> {
  return ctx.sequelize.transaction(async (transaction) => {
    const row = await consumeEmailToken(token, 'verify-email', transaction);
    const user = await User.findByPk(row.userId, { transaction });
    if (!user) throw new HttpError('invalid-token', 'This confirmation link belongs to an account that no longer exists.', { reason: 'unknown' });
    if (!user.emailVerifiedAt) {
      user.emailVerifiedAt = new Date();
      await user.save({ transaction });
    }
    return user;
  });
}

/** Runs after the answer (afterResponse): the answer is the same whether or not the address has an account. */
export async function resendVerification(ctx: AppContext, email: string): Promise<void> {
  const user = await User.findOne({ where: { email: normalizeEmail(email) } });
  if (!user || user.emailVerifiedAt) return;
  // Older unused links stop working: only the newest message counts.
  await EmailToken.update({ usedAt: new Date() }, { where: { userId: user.id, purpose: 'verify-email', usedAt: null } });
  const token = await issueEmailToken(user.id, 'verify-email', VERIFY_TOKEN_TTL_MS);
  await sendSafely(ctx, verificationMail(user.email, user.name, link(ctx, `/verify-email?token=${token}`)));
}

/** A hash of a random password, compared against when the account does not exist (same timing). */
let decoyHash: string | null = null;

export async function checkCredentials(ctx: AppContext, email: string, password: string): Promise<User> {
  const user = await User.findOne({ where: { email: normalizeEmail(email) } });
  decoyHash ??= await bcrypt.hash(crypto.randomBytes(16).toString('hex'), cost(ctx));
  const ok = await passwordMatches(password, user?.passwordHash ?? decoyHash);
  if (!user || !ok) throw new HttpError('invalid-credentials', 'That e-mail address and password do not match an account.');
  if (!user.emailVerifiedAt) {
    throw new HttpError('email-not-verified', 'Confirm your e-mail address first: follow the link we sent you, or ask for a new one.', { email: user.email });
  }
  return user;
}

/** Runs after the answer (afterResponse): the answer and its timing are the same for known and unknown addresses. */
export async function requestPasswordReset(ctx: AppContext, email: string): Promise<void> {
  const user = await User.findOne({ where: { email: normalizeEmail(email) } });
  if (!user) return;
  const token = await issueEmailToken(user.id, 'reset-password', RESET_TOKEN_TTL_MS);
  await sendSafely(ctx, resetPasswordMail(user.email, user.name, link(ctx, `/reset-password?token=${token}`)));
}

export async function resetPassword(ctx: AppContext, token: string, password: string): Promise<User> {
  // The person's own e-mail address and name do not make a password.
  const holder = await EmailToken.findOne({ where: { tokenHash: hashToken(token), purpose: 'reset-password' }, attributes: ['userId'] });
  const owner = holder ? await User.findByPk(holder.userId, { attributes: ['email', 'name'] }) : null;
  assertPasswordAcceptable(password, owner?.email, owner?.name);
  const passwordHash = await hashPassword(ctx, password);
  const user = await ctx.sequelize.transaction(async (transaction) => {
    const row = await consumeEmailToken(token, 'reset-password', transaction);
    const found = await User.findByPk(row.userId, { transaction });
    if (!found) throw new HttpError('invalid-token', 'This link belongs to an account that no longer exists.', { reason: 'unknown' });
    found.passwordHash = passwordHash;
    // The link came to this address: it is confirmed now.
    found.emailVerifiedAt ??= new Date();
    await found.save({ transaction });
    // Other reset links sent earlier stop working.
    await EmailToken.update(
      { usedAt: new Date() },
      { where: { userId: found.id, purpose: 'reset-password', usedAt: null, id: { [Op.ne]: row.id } }, transaction },
    );
    return found;
  });
  await destroyUserSessions(ctx, user.id);
  return user;
}

export async function updateProfile(
  ctx: AppContext,
  user: User,
  input: { name?: string | undefined; password?: string | undefined; currentPassword?: string | undefined },
  currentSid?: string,
): Promise<User> {
  if (input.password !== undefined) {
    if (!input.currentPassword || !(await passwordMatches(input.currentPassword, user.passwordHash))) {
      throw new HttpError('validation-failed', 'To change your password, enter your current password correctly.', {
        errors: [{ where: '/currentPassword', field: 'currentPassword', message: 'Not your current password.' }],
      });
    }
    assertPasswordAcceptable(input.password, user.email, input.name ?? user.name);
    user.passwordHash = await hashPassword(ctx, input.password);
  }
  if (input.name !== undefined) user.name = input.name;
  await user.save();
  // A new password signs out every other session of this user.
  if (input.password !== undefined) await destroyUserSessions(ctx, user.id, currentSid);
  return user;
}
