/**
 * Who may do what on the console API: ONE table (brief.md "Roles"), one middleware.
 *
 *   ACCESS[action]        'anyone' | 'signed-in' | the roles allowed in the organization `:org`
 *   requireRole(action)   guards every /api route (routes/api declares one action per route):
 *                           anyone     -> passes
 *                           signed-in  -> 401 `unauthenticated` without a session
 *                           roles      -> 401 without a session, 404 `not-found` when the user is
 *                                         not a member of :org, 403 `forbidden` when the role is not listed
 *   orgAuth(res)          { user, organization, membership, role } set by requireRole for org routes
 *   userAuth(res)         the signed-in User set by requireRole for signed-in routes
 *
 * The console only hides what this table forbids; it never decides on its own.
 */
import type { RequestHandler, Response } from 'express';
import { Membership, Organization, type Role, type User } from '../models/index.ts';
import { HttpError } from './problem.ts';
import { currentUser } from './session.ts';

const ALL: readonly Role[] = ['owner', 'admin', 'editor', 'viewer'];
const EDITORS: readonly Role[] = ['owner', 'admin', 'editor'];
const MANAGERS: readonly Role[] = ['owner', 'admin'];
const OWNER: readonly Role[] = ['owner'];

export type Access = 'anyone' | 'signed-in' | readonly Role[];

/** action -> who. brief.md: see (all), edit satellites/sets/embeds (editor+), keys and members (admin+), plan/billing/delete/transfer (owner). */
export const ACCESS = {
  // Account: no organization involved.
  'session.read': 'anyone',
  'account.signup': 'anyone',
  'account.verify-email': 'anyone',
  'account.signin': 'anyone',
  'account.signout': 'anyone',
  'account.recover': 'anyone',
  'account.update': 'signed-in',
  'invitation.read': 'anyone',
  'invitation.accept': 'signed-in',
  'org.create': 'signed-in',
  // Each member's own e-mail switches per kind of notice (services/notices.ts).
  'account.notices': 'signed-in',
  // Organization: by the caller's role in :org.
  'org.read': ALL,
  'members.read': ALL,
  'satellites.read': ALL,
  'embeds.read': ALL,
  'keys.read': ALL,
  'usage.read': ALL,
  'activity.read': ALL,
  // Notices in the console; each role sees the kinds it receives (services/notices.ts NOTICE_KINDS).
  'notices.read': ALL,
  // A short-lived read-only /v1 token for the console's live previews (services/preview-token.ts).
  'preview.issue': ALL,
  'satellites.write': EDITORS,
  'element-sets.write': EDITORS,
  // Let a held element set (organization setting confirmSuspiciousSets) be used.
  'element-sets.confirm': EDITORS,
  'embeds.write': EDITORS,
  'keys.write': MANAGERS,
  'members.manage': MANAGERS,
  // Webhooks out to the organization's own systems (services/webhooks.ts): see and change, admin+.
  'webhooks.read': MANAGERS,
  'webhooks.write': MANAGERS,
  'org.rename': OWNER,
  // Organization settings besides the name (confirmSuspiciousSets), like the name: the owner's.
  'org.settings': OWNER,
  'org.delete': OWNER,
  'org.transfer': OWNER,
  'billing.read': OWNER,
  'billing.manage': OWNER,
} as const satisfies Record<string, Access>;

export type Action = keyof typeof ACCESS;

/** True when `role` may perform `action` (org actions only; account actions answer true for any role). */
export function roleAllows(action: Action, role: Role): boolean {
  const access: Access = ACCESS[action];
  return typeof access === 'string' ? true : access.includes(role);
}

export interface OrgAuth {
  user: User;
  organization: Organization;
  membership: Membership;
  role: Role;
}

const ROLE_WORDS: Record<Role, string> = { owner: 'the owner', admin: 'admins', editor: 'editors', viewer: 'viewers' };

function describeRoles(roles: readonly Role[]): string {
  const words = roles.map((r) => ROLE_WORDS[r]);
  return words.length <= 1 ? (words[0] ?? 'nobody') : `${words.slice(0, -1).join(', ')} and ${words.at(-1)}`;
}

export function requireRole(action: Action): RequestHandler {
  const access: Access = ACCESS[action];
  return async (req, res, next) => {
    if (access === 'anyone') return next();
    const user = await currentUser(req, res);
    if (!user) throw new HttpError('unauthenticated', 'Sign in first: this needs a signed-in session.');
    if (access === 'signed-in') return next();
    const orgId = req.params['org'];
    if (typeof orgId !== 'string') throw new Error(`requireRole(${action}) used on a route without :org`);
    const membership = await Membership.findOne({ where: { userId: user.id, organizationId: orgId } });
    const organization = membership ? await Organization.findByPk(orgId) : null;
    if (!membership || !organization) throw new HttpError('not-found', 'No such organization among yours.');
    if (!access.includes(membership.role)) {
      throw new HttpError('forbidden', `Your role in ${organization.name} is ${membership.role}; this is for ${describeRoles(access)} only.`, {
        action,
        role: membership.role,
        allowedRoles: access,
      });
    }
    const auth: OrgAuth = { user, organization, membership, role: membership.role };
    res.locals['auth'] = auth;
    next();
  };
}

export function orgAuth(res: Response): OrgAuth {
  const auth = res.locals['auth'] as OrgAuth | undefined;
  if (!auth) throw new Error('orgAuth() used on a route without requireRole(<org action>)');
  return auth;
}

export function userAuth(res: Response): User {
  const user = res.locals['user'] as User | null | undefined;
  if (!user) throw new Error('userAuth() used on a route without requireRole(<signed-in action>)');
  return user;
}
