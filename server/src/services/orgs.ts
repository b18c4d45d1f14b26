/**
 * Organizations, memberships and invitations. Rules that are not the role table's business live
 * here: nobody sets `owner` except by transfer; the owner cannot be removed or demoted (409
 * owner-protected); invitations are one-time links to the invited address, valid 7 days.
 *
 *   createOrganization(ctx, user, name, transaction?) -> Organization   (user becomes owner)
 *   renameOrganization / deleteOrganization / transferOwnership
 *   listMembers(orgId) -> { members, invitations }
 *   inviteMember(ctx, auth, email, role) -> InvitationJson            (sends the e-mail)
 *   revokeInvitation(ctx, auth, invitationId)
 *   describeInvitation(token) -> { organization: { name }, email, role, expiresAt }
 *   invitationOrThrow(token) -> Invitation                             (400 invalid-token with reason)
 *   acceptInvitation(ctx, user, token) -> MembershipJson
 *   changeMemberRole(ctx, auth, userId, role) -> MemberJson
 *   removeMember(ctx, auth, userId)
 */
import crypto from 'node:crypto';
import { nanoid } from 'nanoid';
import { Op, type Transaction } from 'sequelize';
import type { AppContext } from '../context.ts';
import { HttpError } from '../http/problem.ts';
import type { OrgAuth } from '../http/roles.ts';
import { Invitation, Membership, Organization, User, type Plan, type Role } from '../models/index.ts';
import { recordAudit } from './audit.ts';
import { getMailService, invitationMail } from './mail.ts';
import type { InvitationPreview, Invitation as InvitationOfContract, Member as MemberOfContract, Organization as OrganizationOfContract } from '@nadirline/shared/contract';

export const INVITATION_TTL_MS = 7 * 24 * 3600 * 1000;
/** Roles that can be given by invitation or role change (owner only by transfer). */
export const ASSIGNABLE_ROLES = ['admin', 'editor', 'viewer'] as const;
export type AssignableRole = (typeof ASSIGNABLE_ROLES)[number];

export type OrganizationJson = OrganizationOfContract;

export type MemberJson = MemberOfContract;

export type InvitationJson = InvitationOfContract;

export function serializeOrganization(org: Organization): OrganizationJson {
  return { id: org.id, name: org.name, plan: org.plan, confirmSuspiciousSets: Boolean(org.confirmSuspiciousSets), createdAt: new Date(org.createdAt).toISOString() };
}

function hashToken(token: string): string {
  return crypto.createHash('sha256').update(token).digest('hex');
}

export async function createOrganization(ctx: AppContext, user: User, name: string, transaction?: Transaction): Promise<Organization> {
  const run = async (t: Transaction) => {
    const org = await Organization.create({ id: nanoid(), name }, { transaction: t });
    await Membership.create({ id: nanoid(), userId: user.id, organizationId: org.id, role: 'owner' }, { transaction: t });
    await recordAudit(ctx, { organizationId: org.id, actorUserId: user.id, action: 'org.create', targetType: 'organization', targetId: org.id, detail: { name } }, { transaction: t });
    return org;
  };
  return transaction ? run(transaction) : ctx.sequelize.transaction(run);
}

export async function renameOrganization(ctx: AppContext, auth: OrgAuth, name: string): Promise<Organization> {
  const from = auth.organization.name;
  auth.organization.name = name;
  await auth.organization.save();
  await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'org.rename', targetType: 'organization', targetId: auth.organization.id, detail: { from, to: name } });
  return auth.organization;
}

/** Deletes the organization and (by foreign-key cascade) everything it holds. */
export async function deleteOrganization(ctx: AppContext, auth: OrgAuth): Promise<void> {
  ctx.logger.info({ organizationId: auth.organization.id, by: auth.user.id }, 'organization deleted');
  await auth.organization.destroy();
}

export async function transferOwnership(ctx: AppContext, auth: OrgAuth, toUserId: string): Promise<void> {
  if (toUserId === auth.user.id) throw new HttpError('conflict', 'You already own this organization.');
  await ctx.sequelize.transaction(async (transaction) => {
    const target = await Membership.findOne({ where: { organizationId: auth.organization.id, userId: toUserId }, transaction });
    if (!target) throw new HttpError('not-found', 'That person is not a member of this organization; invite them first.');
    const from = target.role;
    target.role = 'owner';
    await target.save({ transaction });
    await Membership.update({ role: 'admin' }, { where: { id: auth.membership.id }, transaction });
    await recordAudit(
      ctx,
      { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'org.transfer', targetType: 'member', targetId: toUserId, detail: { previousRole: from, previousOwnerNowAdmin: auth.user.id } },
      { transaction },
    );
  });
}

export async function listMembers(organizationId: string): Promise<{ members: MemberJson[]; invitations: InvitationJson[] }> {
  const rows = await Membership.findAll({ where: { organizationId }, include: [{ model: User, as: 'user' }], order: [['createdAt', 'ASC']] });
  const order: Record<Role, number> = { owner: 0, admin: 1, editor: 2, viewer: 3 };
  const members = rows
    .flatMap((m) => {
      const u = (m as Membership & { user?: User }).user;
      return u ? [{ userId: u.id, name: u.name, email: u.email, role: m.role, joinedAt: new Date(m.createdAt).toISOString() }] : [];
    })
    .sort((a, b) => order[a.role] - order[b.role] || a.joinedAt.localeCompare(b.joinedAt));
  const pending = await Invitation.findAll({
    where: { organizationId, acceptedAt: null, expiresAt: { [Op.gt]: new Date() } },
    order: [['createdAt', 'DESC']],
  });
  const inviterIds = [...new Set(pending.map((i) => i.invitedById).filter((v): v is string => !!v))];
  const inviters = inviterIds.length ? await User.findAll({ where: { id: inviterIds }, attributes: ['id', 'name'] }) : [];
  const nameOf = new Map(inviters.map((u) => [u.id, u.name]));
  return { members, invitations: pending.map((i) => serializeInvitation(i, i.invitedById ? (nameOf.get(i.invitedById) ?? null) : null)) };
}

function serializeInvitation(i: Invitation, invitedBy: string | null): InvitationJson {
  return { id: i.id, email: i.email, role: i.role, expiresAt: new Date(i.expiresAt).toISOString(), invitedBy };
}

export async function inviteMember(ctx: AppContext, auth: OrgAuth, emailIn: string, role: AssignableRole): Promise<InvitationJson> {
  const email = emailIn.trim().toLowerCase();
  const orgId = auth.organization.id;
  const existingUser = await User.findOne({ where: { email } });
  if (existingUser && (await Membership.findOne({ where: { organizationId: orgId, userId: existingUser.id } }))) {
    throw new HttpError('conflict', `${email} is already a member of ${auth.organization.name}.`, {
      errors: [{ where: '/email', field: 'email', message: 'Already a member.' }],
    });
  }
  const token = crypto.randomBytes(32).toString('base64url');
  const invitation = await ctx.sequelize.transaction(async (transaction) => {
    // Inviting again replaces the earlier pending invitation (and its link).
    await Invitation.destroy({ where: { organizationId: orgId, email, acceptedAt: null }, transaction });
    const created = await Invitation.create(
      { id: nanoid(), organizationId: orgId, email, role, tokenHash: hashToken(token), invitedById: auth.user.id, expiresAt: new Date(Date.now() + INVITATION_TTL_MS), acceptedAt: null },
      { transaction },
    );
    await recordAudit(ctx, { organizationId: orgId, actorUserId: auth.user.id, action: 'member.invite', targetType: 'invitation', targetId: created.id, detail: { email, role } }, { transaction });
    return created;
  });
  try {
    const mail = await getMailService(ctx);
    await mail.send(invitationMail(email, auth.user.name, auth.organization.name, role, `${ctx.config.publicUrl}/invite/${token}`));
  } catch (err) {
    ctx.logger.error({ err }, 'could not send the invitation e-mail');
  }
  return serializeInvitation(invitation, auth.user.name);
}

export async function revokeInvitation(ctx: AppContext, auth: OrgAuth, invitationId: string): Promise<void> {
  const invitation = await Invitation.findOne({ where: { id: invitationId, organizationId: auth.organization.id, acceptedAt: null } });
  if (!invitation) throw new HttpError('not-found', 'No such pending invitation.');
  await invitation.destroy();
  await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'member.invite-revoke', targetType: 'invitation', targetId: invitation.id, detail: { email: invitation.email } });
}

/** The pending invitation for this token; 400 invalid-token (reason unknown / used / expired) otherwise. */
export async function invitationOrThrow(token: string): Promise<Invitation> {
  const invitation = await Invitation.findOne({ where: { tokenHash: hashToken(token) } });
  if (!invitation) throw new HttpError('invalid-token', 'This invitation link is not valid (it may have been withdrawn or replaced by a newer one).', { reason: 'unknown' });
  if (invitation.acceptedAt) throw new HttpError('invalid-token', 'This invitation was already accepted.', { reason: 'used' });
  if (invitation.expiresAt.getTime() < Date.now()) throw new HttpError('invalid-token', 'This invitation has expired; ask for a new one.', { reason: 'expired' });
  return invitation;
}

export async function describeInvitation(token: string): Promise<InvitationPreview> {
  const invitation = await invitationOrThrow(token);
  const org = await Organization.findByPk(invitation.organizationId);
  if (!org) throw new HttpError('invalid-token', 'The organization of this invitation no longer exists.', { reason: 'unknown' });
  return { organization: { name: org.name }, email: invitation.email, role: invitation.role, expiresAt: new Date(invitation.expiresAt).toISOString() };
}

/** Makes `user` a member per the invitation (keeps a higher existing role) and marks it accepted. */
export async function acceptInvitationForUser(ctx: AppContext, invitation: Invitation, user: User, transaction: Transaction): Promise<Membership> {
  let membership = await Membership.findOne({ where: { organizationId: invitation.organizationId, userId: user.id }, transaction });
  if (!membership) {
    membership = await Membership.create({ id: nanoid(), organizationId: invitation.organizationId, userId: user.id, role: invitation.role }, { transaction });
  }
  invitation.acceptedAt = new Date();
  await invitation.save({ transaction });
  await recordAudit(
    ctx,
    { organizationId: invitation.organizationId, actorUserId: user.id, action: 'member.join', targetType: 'member', targetId: user.id, detail: { email: user.email, role: membership.role, invitationId: invitation.id } },
    { transaction },
  );
  return membership;
}

export async function acceptInvitation(ctx: AppContext, user: User, token: string): Promise<{ organization: { id: string; name: string; plan: Plan }; role: Role }> {
  const invitation = await invitationOrThrow(token);
  if (invitation.email.toLowerCase() !== user.email.toLowerCase()) {
    throw new HttpError('email-mismatch', `This invitation was sent to ${invitation.email}, but you are signed in as ${user.email}. Sign in with that address (or sign up with it) to accept.`, {
      invitedEmail: invitation.email,
    });
  }
  const membership = await ctx.sequelize.transaction((transaction) => acceptInvitationForUser(ctx, invitation, user, transaction));
  const org = await Organization.findByPk(membership.organizationId);
  if (!org) throw new HttpError('not-found', 'The organization of this invitation no longer exists.');
  return { organization: { id: org.id, name: org.name, plan: org.plan }, role: membership.role };
}

async function memberOrThrow(organizationId: string, userId: string): Promise<{ membership: Membership; user: User }> {
  const membership = await Membership.findOne({ where: { organizationId, userId } });
  const user = membership ? await User.findByPk(userId) : null;
  if (!membership || !user) throw new HttpError('not-found', 'No such member in this organization.');
  return { membership, user };
}

export async function changeMemberRole(ctx: AppContext, auth: OrgAuth, userId: string, role: AssignableRole): Promise<MemberJson> {
  const { membership, user } = await memberOrThrow(auth.organization.id, userId);
  if (membership.role === 'owner') {
    throw new HttpError('owner-protected', 'The owner keeps the owner role; to hand it over, the owner transfers the organization.');
  }
  const from = membership.role;
  if (from !== role) {
    membership.role = role;
    await membership.save();
    await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'member.role', targetType: 'member', targetId: userId, detail: { email: user.email, from, to: role } });
  }
  return { userId, name: user.name, email: user.email, role: membership.role, joinedAt: new Date(membership.createdAt).toISOString() };
}

export async function removeMember(ctx: AppContext, auth: OrgAuth, userId: string): Promise<void> {
  const { membership, user } = await memberOrThrow(auth.organization.id, userId);
  if (membership.role === 'owner') {
    throw new HttpError('owner-protected', 'The owner cannot be removed; the owner may transfer the organization first.');
  }
  await membership.destroy();
  await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'member.remove', targetType: 'member', targetId: userId, detail: { email: user.email, role: membership.role } });
}
