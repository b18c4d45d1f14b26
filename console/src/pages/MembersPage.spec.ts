import { afterEach, describe, expect, it, vi } from 'vitest';
import type { Role } from '../api/types.ts';
import { mockFetch } from '../testing/fetch-mock.ts';
import { session, user } from '../testing/fixtures.ts';
import { mountAt } from '../testing/mount.ts';
import MembersPage from './MembersPage.vue';

afterEach(() => {
  vi.unstubAllGlobals();
  document.body.innerHTML = '';
});

const members = [
  { userId: 'u0', name: 'Olu Owner', email: 'olu@kestrel.example', role: 'owner', joinedAt: '2031-01-01T00:00:00Z' },
  { userId: user.id, name: user.name, email: user.email, role: 'admin', joinedAt: '2031-01-02T00:00:00Z' },
  { userId: 'u3', name: 'Cato Lindqvist', email: 'cato@kestrel.example', role: 'editor', joinedAt: '2031-01-03T00:00:00Z' },
];
const invitations = [{ id: 'i1', email: 'ops@kestrel.example', role: 'viewer', expiresAt: '2031-02-01T00:00:00Z', invitedBy: { name: 'Olu Owner' } }];

async function open(role: Role) {
  mockFetch([
    { path: '/api/session', body: session(role) },
    { path: '/api/orgs/org1/members', body: { members: members.map((m) => (m.userId === user.id ? { ...m, role } : m)), invitations } },
  ]);
  return mountAt(MembersPage, '/o/org1/members', { org: 'org1' });
}

describe('the members page', () => {
  it('shows a viewer the members and the role matrix but no member actions', async () => {
    const { wrapper } = await open('viewer');
    expect(wrapper.text()).toContain('Cato Lindqvist');
    expect(wrapper.text()).toContain('ops@kestrel.example');
    expect(wrapper.findAll('select')).toHaveLength(0);
    expect(wrapper.findAll('button').some((b) => /invite|remove|withdraw|make owner/i.test(b.text()))).toBe(false);
    expect(wrapper.text()).toContain('What each role may do');
    wrapper.unmount();
  });

  it("lets an admin change roles and remove members, except the owner's and their own", async () => {
    const { wrapper } = await open('admin');
    expect(wrapper.findAll('button').some((b) => /invite a member/i.test(b.text()))).toBe(true);
    const selects = wrapper.findAll('select');
    // The admin's own row and Cato's row: never the owner's.
    expect(selects.map((s) => s.attributes('id'))).toEqual([`role-${user.id}`, 'role-u3']);
    expect(selects[0]!.findAll('option').map((o) => o.attributes('value'))).toEqual(['admin', 'editor', 'viewer']);
    // Not their own role, though: that select is disabled and says why.
    expect(selects[0]!.attributes('disabled')).toBeDefined();
    expect(wrapper.find(`#${selects[0]!.attributes('aria-describedby')}`).text()).toMatch(/cannot change your own role/);
    expect(selects[1]!.attributes('disabled')).toBeUndefined();
    const removes = wrapper.findAll('button').filter((b) => /^remove/i.test(b.text()));
    expect(removes).toHaveLength(1);
    expect(removes[0]!.text()).toContain('Cato Lindqvist');
    expect(wrapper.findAll('button').some((b) => /make owner/i.test(b.text()))).toBe(false);
    wrapper.unmount();
  });

  it('offers only the owner to hand over ownership', async () => {
    const { wrapper } = await open('owner');
    expect(wrapper.findAll('button').filter((b) => /make owner/i.test(b.text())).length).toBeGreaterThan(0);
    wrapper.unmount();
  });
});
