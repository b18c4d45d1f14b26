/** The organization being worked on, the caller's role in it and what that role allows. */
import { defineStore } from 'pinia';
import { computed, ref } from 'vue';
import { api } from '../api/client.ts';
import type { Billing, Organization, Role } from '../api/types.ts';
import { can as roleCan, type Action } from '../lib/roles.ts';
import { useSessionStore } from './session.ts';

const LAST_ORG = 'nadir.lastOrg';

function remember(id: string) {
  try {
    localStorage.setItem(LAST_ORG, id);
  } catch {
    // storage may be disabled: remembering is a convenience only
  }
}

function recalled(): string | null {
  try {
    return localStorage.getItem(LAST_ORG);
  } catch {
    return null;
  }
}

export const useOrgStore = defineStore('org', () => {
  const session = useSessionStore();
  const currentId = ref<string | null>(null);
  const billing = ref<Billing | null>(null);

  const current = computed(() => session.memberships.find((m) => m.organization.id === currentId.value)?.organization ?? null);
  const role = computed<Role | null>(() => session.roleIn(currentId.value));

  function can(action: Action): boolean {
    return roleCan(role.value, action);
  }

  function select(id: string) {
    if (currentId.value !== id) billing.value = null;
    currentId.value = id;
    remember(id);
  }

  /** The organization to open after sign-in: the last one used, else the first. */
  function preferredId(): string | null {
    const last = recalled();
    const ms = session.memberships;
    if (last && ms.some((m) => m.organization.id === last)) return last;
    return ms[0]?.organization.id ?? null;
  }

  async function create(name: string): Promise<Organization> {
    const { organization } = await api.createOrg(name.trim());
    session.addMembership({ organization: { id: organization.id, name: organization.name, plan: organization.plan }, role: 'owner' });
    select(organization.id);
    return organization;
  }

  async function rename(name: string): Promise<void> {
    if (!currentId.value) return;
    const { organization } = await api.renameOrg(currentId.value, name.trim());
    session.addMembership({ organization: { id: organization.id, name: organization.name, plan: organization.plan }, role: role.value ?? 'owner' });
  }

  async function loadBilling(): Promise<Billing | null> {
    if (!currentId.value) return null;
    billing.value = await api.billing(currentId.value);
    return billing.value;
  }

  return { currentId, current, role, billing, can, select, preferredId, create, rename, loadBilling };
});
