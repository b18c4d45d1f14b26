import { describe, expect, it } from 'vitest';
import type { Role } from '../api/types.ts';
import { can, canManageMember, type Action } from './roles.ts';

// The matrix of brief.md, "Roles", row by row.
const TABLE: [Action, Record<Role, boolean>][] = [
  ['read', { owner: true, admin: true, editor: true, viewer: true }],
  ['edit-satellites', { owner: true, admin: true, editor: true, viewer: false }],
  ['edit-embeds', { owner: true, admin: true, editor: true, viewer: false }],
  ['manage-keys', { owner: true, admin: true, editor: false, viewer: false }],
  ['manage-members', { owner: true, admin: true, editor: false, viewer: false }],
  ['billing', { owner: true, admin: false, editor: false, viewer: false }],
  ['manage-org', { owner: true, admin: false, editor: false, viewer: false }],
];

describe('the role matrix', () => {
  it.each(TABLE)('allows %s exactly to the roles the brief lists', (action, expected) => {
    for (const role of Object.keys(expected) as Role[]) expect(can(role, action), `${role} ${action}`).toBe(expected[role]);
  });

  it('allows nothing without a role', () => {
    expect(can(null, 'read')).toBe(false);
  });

  it("lets admins manage members but never the owner's membership", () => {
    expect(canManageMember('admin', 'editor')).toBe(true);
    expect(canManageMember('admin', 'owner')).toBe(false);
    expect(canManageMember('owner', 'admin')).toBe(true);
    expect(canManageMember('editor', 'viewer')).toBe(false);
  });
});
