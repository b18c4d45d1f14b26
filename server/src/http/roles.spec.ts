import { describe, expect, it } from 'vitest';
import { ACCESS, roleAllows, type Action } from './roles.ts';

// brief.md "Roles": the matrix the server enforces, row by row.
const BRIEF: Array<{ row: string; actions: Action[]; roles: string[] }> = [
  { row: 'see satellites, element sets, embeds, usage', actions: ['satellites.read', 'embeds.read', 'usage.read', 'org.read', 'members.read', 'keys.read', 'activity.read', 'preview.issue', 'notices.read'], roles: ['owner', 'admin', 'editor', 'viewer'] },
  { row: 'register satellites, upload element sets, edit embeds', actions: ['satellites.write', 'element-sets.write', 'element-sets.confirm', 'embeds.write'], roles: ['owner', 'admin', 'editor'] },
  { row: 'create / rotate / revoke keys', actions: ['keys.write'], roles: ['owner', 'admin'] },
  { row: 'invite, remove members, change roles', actions: ['members.manage'], roles: ['owner', 'admin'] },
  { row: 'see and manage webhook endpoints and their deliveries', actions: ['webhooks.read', 'webhooks.write'], roles: ['owner', 'admin'] },
  { row: 'plan and billing, delete or transfer the organization', actions: ['billing.read', 'billing.manage', 'org.delete', 'org.transfer', 'org.rename', 'org.settings'], roles: ['owner'] },
];

describe('the role table', () => {
  it.each(BRIEF)('gives "$row" to exactly $roles', ({ actions, roles }) => {
    for (const action of actions) expect([action, [...(ACCESS[action] as readonly string[])].sort()]).toEqual([action, [...roles].sort()]);
  });

  it('has no organization action that the brief does not place', () => {
    const placed = new Set(BRIEF.flatMap((r) => r.actions));
    const orgActions = (Object.keys(ACCESS) as Action[]).filter((a) => typeof ACCESS[a] !== 'string');
    expect(orgActions.filter((a) => !placed.has(a))).toEqual([]);
  });

  it('answers roleAllows from the same table', () => {
    expect(roleAllows('keys.write', 'admin')).toBe(true);
    expect(roleAllows('keys.write', 'editor')).toBe(false);
    expect(roleAllows('org.delete', 'admin')).toBe(false);
    expect(roleAllows('account.update', 'viewer')).toBe(true);
  });
});
