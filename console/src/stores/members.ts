/** Members and open invitations of the current organization. */
import { defineStore } from 'pinia';
import { ref } from 'vue';
import { api } from '../api/client.ts';
import type { Invitation, Member, Role } from '../api/types.ts';

export const useMembersStore = defineStore('members', () => {
  const orgId = ref<string | null>(null);
  const members = ref<Member[]>([]);
  const invitations = ref<Invitation[]>([]);
  const loaded = ref(false);

  function reset(org: string) {
    if (orgId.value === org) return;
    orgId.value = org;
    members.value = [];
    invitations.value = [];
    loaded.value = false;
  }

  async function load(org: string) {
    reset(org);
    const r = await api.members(org);
    members.value = r.members;
    invitations.value = r.invitations;
    loaded.value = true;
  }

  async function invite(org: string, email: string, role: Role) {
    const { invitation } = await api.invite(org, email.trim(), role);
    invitations.value = [invitation, ...invitations.value.filter((i) => i.id !== invitation.id)];
    return invitation;
  }

  async function cancelInvitation(org: string, id: string) {
    await api.cancelInvitation(org, id);
    invitations.value = invitations.value.filter((i) => i.id !== id);
  }

  async function changeRole(org: string, userId: string, role: Role) {
    const { member } = await api.changeRole(org, userId, role);
    members.value = members.value.map((m) => (m.userId === userId ? { ...m, ...member } : m));
  }

  async function remove(org: string, userId: string) {
    await api.removeMember(org, userId);
    members.value = members.value.filter((m) => m.userId !== userId);
  }

  return { orgId, members, invitations, loaded, load, invite, cancelInvitation, changeRole, remove };
});
