/**
 * Accounts: sign-up, e-mail verification, sign-in checks, password reset, profile.
 * Passwords are bcrypt hashes (bcryptjs); e-mail tokens are random 256-bit strings of which only
 * the SHA-256 is stored, usable once and until they expire.
 *
 *   signUp(ctx, { email, name, password, organizationName?, invitationToken? }) -> { user, organization? }
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
import bcrypt from 'bcryptjs';
import { nanoid } from 'nanoid';
import { Op, type Transaction } from 'sequelize';
import type { AppContext } from '../context.ts';
import { HttpError } from '../http/problem.ts';
import { destroyUserSessions } from '../http/session.ts';
import { EmailToken, Membership, Organization, User } from '../models/index.ts';
import { getMailService, resetPasswordMail, verificationMail } from './mail.ts';
import { acceptInvitationForUser, createOrganization, invitationOrThrow } from './orgs.ts';
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

export async function signUp(ctx: AppContext, input: SignUpInput): Promise<{ user: User; organization: Organization | null; verified: boolean }> {
  const email = normalizeEmail(input.email);
  if (await User.findOne({ where: { email } })) {
    throw new HttpError('conflict', 'An account with this e-mail address already exists. Sign in, or reset its password.', {
      errors: [{ where: '/email', field: 'email', message: 'Already registered.' }],
    });
  }
  const passwordHash = await hashPassword(ctx, input.password);
  // An invitation that no longer works is said so, rather than silently making a plain account.
  const invitation = input.invitationToken ? await invitationOrThrow(input.invitationToken) : null;
  if (invitation && normalizeEmail(invitation.email) !== email) {
    throw new HttpError('email-mismatch', `This invitation was sent to ${invitation.email}; sign up with that address to accept it.`);
  }
  // Signing up from an invitation link proves the address: the invitation went to it.
  const verified = invitation !== null;
  const result = await ctx.sequelize.transaction(async (transaction) => {
    const user = await User.create(
      { id: nanoid(), email, name: input.name, passwordHash, emailVerifiedAt: verified ? new Date() : null },
      { transaction },
    );
    const organization = input.organizationName?.trim() ? await createOrganization(ctx, user, input.organizationName, transaction) : null;
    if (invitation) await acceptInvitationForUser(ctx, invitation, user, transaction);
    const token = verified ? null : await issueEmailToken(user.id, 'verify-email', VERIFY_TOKEN_TTL_MS, transaction);
    return { user, organization, token };
  });
  if (result.token) await sendSafely(ctx, verificationMail(email, input.name, link(ctx, `/verify-email?token=${result.token}`)));
  return { user: result.user, organization: result.organization, verified };
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

export async function requestPasswordReset(ctx: AppContext, email: string): Promise<void> {
  const user = await User.findOne({ where: { email: normalizeEmail(email) } });
  if (!user) return;
  const token = await issueEmailToken(user.id, 'reset-password', RESET_TOKEN_TTL_MS);
  await sendSafely(ctx, resetPasswordMail(user.email, user.name, link(ctx, `/reset-password?token=${token}`)));
}

export async function resetPassword(ctx: AppContext, token: string, password: string): Promise<User> {
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
    user.passwordHash = await hashPassword(ctx, input.password);
  }
  if (input.name !== undefined) user.name = input.name;
  await user.save();
  // A new password signs out every other session of this user.
  if (input.password !== undefined) await destroyUserSessions(ctx, user.id, currentSid);
  return user;
}
