/** Organizations, members and invitations (docs/console-api.md "Organizations and members"). */
import { z } from 'zod';
import type { AppContext } from '../../context.ts';
import { orgAuth, userAuth } from '../../http/roles.ts';
import { fields, parseBody } from '../../http/validate.ts';
import {
  ASSIGNABLE_ROLES,
  acceptInvitation,
  changeMemberRole,
  createOrganization,
  deleteOrganization,
  describeInvitation,
  inviteMember,
  listMembers,
  removeMember,
  renameOrganization,
  revokeInvitation,
  serializeOrganization,
  transferOwnership,
} from '../../services/orgs.ts';
import { recordAudit } from '../../services/audit.ts';
import { param } from './params.ts';
import { ApiRoutes } from './routes.ts';
import { bodyEmail, clientKey, getThrottleStore, Throttle, throttle } from '../../http/throttle.ts';

/** Invitations one client may send per hour, and invitations to one address (from any organization) per hour. */
export const INVITATIONS_PER_CLIENT_PER_HOUR = 30;
export const INVITATIONS_PER_ADDRESS_PER_HOUR = 5;

const NameBody = z.object({ name: fields.name });
const TransferBody = z.object({ userId: z.string().min(1).max(40) });
const roleField = z.enum(ASSIGNABLE_ROLES, { message: 'Choose admin, editor or viewer (the owner role moves only by transfer).' });
const InviteBody = z.object({ email: fields.email, role: roleField });
const RoleBody = z.object({ role: roleField });
const SettingsBody = z.object({
  confirmSuspiciousSets: z.boolean({ message: 'confirmSuspiciousSets must be true or false.' }),
});


export function orgRoutes(ctx: AppContext): ApiRoutes {
  const r = new ApiRoutes();

  r.post('/orgs', 'org.create', async (req, res) => {
    const { name } = parseBody(NameBody, req);
    const org = await createOrganization(ctx, userAuth(res), name);
    res.status(201).json({ organization: serializeOrganization(org) });
  });

  r.get('/orgs/:org', 'org.read', (_req, res) => {
    const auth = orgAuth(res);
    res.json({ organization: serializeOrganization(auth.organization), role: auth.role });
  });

  r.patch('/orgs/:org', 'org.rename', async (req, res) => {
    const { name } = parseBody(NameBody, req);
    const org = await renameOrganization(ctx, orgAuth(res), name);
    res.json({ organization: serializeOrganization(org) });
  });

  r.patch('/orgs/:org/settings', 'org.settings', async (req, res) => {
    const auth = orgAuth(res);
    const body = parseBody(SettingsBody, req);
    const was = Boolean(auth.organization.confirmSuspiciousSets);
    await auth.organization.update({ confirmSuspiciousSets: body.confirmSuspiciousSets });
    if (was !== body.confirmSuspiciousSets) {
      await recordAudit(ctx, {
        organizationId: auth.organization.id,
        actorUserId: auth.user.id,
        action: 'org.settings',
        targetType: 'organization',
        targetId: auth.organization.id,
        detail: { confirmSuspiciousSets: body.confirmSuspiciousSets },
      });
    }
    res.json({ organization: serializeOrganization(auth.organization) });
  });

  r.delete('/orgs/:org', 'org.delete', async (_req, res) => {
    await deleteOrganization(ctx, orgAuth(res));
    res.status(204).end();
  });

  r.post('/orgs/:org/transfer', 'org.transfer', async (req, res) => {
    const { userId } = parseBody(TransferBody, req);
    await transferOwnership(ctx, orgAuth(res), userId);
    res.status(204).end();
  });

  r.get('/orgs/:org/members', 'members.read', async (_req, res) => {
    res.json(await listMembers(orgAuth(res).organization.id));
  });

  const store = getThrottleStore(ctx);
  const inviteThrottle = throttle(
    [
      { throttle: new Throttle(store, { name: 'invite-client', limit: INVITATIONS_PER_CLIENT_PER_HOUR, windowMs: 3600_000 }), key: clientKey },
      { throttle: new Throttle(store, { name: 'invite-address', limit: INVITATIONS_PER_ADDRESS_PER_HOUR, windowMs: 3600_000 }), key: bodyEmail },
    ],
    'Too many invitations sent from here or to this address.',
  );

  r.post('/orgs/:org/invitations', 'members.manage', inviteThrottle, async (req, res) => {
    const { email, role } = parseBody(InviteBody, req);
    const invitation = await inviteMember(ctx, orgAuth(res), email, role);
    res.status(201).json({ invitation });
  });

  r.delete('/orgs/:org/invitations/:id', 'members.manage', async (req, res) => {
    await revokeInvitation(ctx, orgAuth(res), param(req, 'id'));
    res.status(204).end();
  });

  r.get('/invitations/:token', 'invitation.read', async (req, res) => {
    res.json(await describeInvitation(param(req, 'token')));
  });

  r.post('/invitations/:token/accept', 'invitation.accept', async (req, res) => {
    const membership = await acceptInvitation(ctx, userAuth(res), param(req, 'token'));
    res.json({ membership });
  });

  r.patch('/orgs/:org/members/:userId', 'members.manage', async (req, res) => {
    const { role } = parseBody(RoleBody, req);
    const member = await changeMemberRole(ctx, orgAuth(res), param(req, 'userId'), role);
    res.json({ member });
  });

  r.delete('/orgs/:org/members/:userId', 'members.manage', async (req, res) => {
    await removeMember(ctx, orgAuth(res), param(req, 'userId'));
    res.status(204).end();
  });

  return r;
}
