/**
 * The role matrix of brief.md, once. The server checks every call; the console only hides or
 * disables what the server would refuse, so people are not offered actions that cannot work.
 */
import type { Role } from '../api/types.ts';

export type Action =
  | 'read' // see satellites, element sets, embeds, usage, members, activity
  | 'edit-satellites' // register satellites, upload element sets
  | 'edit-embeds'
  | 'manage-keys' // create, edit, rotate, revoke keys
  | 'manage-members' // invite, remove, change roles (not the owner's)
  | 'manage-webhooks' // webhook endpoints and their deliveries
  | 'billing' // plan and billing
  | 'manage-org'; // rename, delete, transfer the organization

const MATRIX: Record<Action, readonly Role[]> = {
  read: ['owner', 'admin', 'editor', 'viewer'],
  'edit-satellites': ['owner', 'admin', 'editor'],
  'edit-embeds': ['owner', 'admin', 'editor'],
  'manage-keys': ['owner', 'admin'],
  'manage-members': ['owner', 'admin'],
  'manage-webhooks': ['owner', 'admin'],
  billing: ['owner'],
  'manage-org': ['owner'],
};

export function can(role: Role | null | undefined, action: Action): boolean {
  return !!role && MATRIX[action].includes(role);
}

/** Roles an inviter may hand out: never `owner` (ownership moves by transfer). */
export const ASSIGNABLE_ROLES: readonly Role[] = ['admin', 'editor', 'viewer'];

export const ROLE_LABELS: Record<Role, string> = {
  owner: 'Owner',
  admin: 'Admin',
  editor: 'Editor',
  viewer: 'Viewer',
};

export const ROLE_SUMMARIES: Record<Role, string> = {
  owner: 'Everything, including plan, billing and the organization itself.',
  admin: 'Keys and members as well as everything an editor does.',
  editor: 'Registers satellites, uploads element sets and edits embeds.',
  viewer: 'Sees satellites, element sets, embeds, usage and the activity log.',
};

/** May `actor` change or remove the membership of someone holding `target`? */
export function canManageMember(actor: Role | null | undefined, target: Role): boolean {
  return can(actor, 'manage-members') && target !== 'owner';
}
