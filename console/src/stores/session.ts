/** Who is signed in, their memberships and the CSRF token (kept by the API client). */
import { defineStore } from 'pinia';
import { computed, ref } from 'vue';
import { api } from '../api/client.ts';
import type { Membership, Role, SessionInfo, User } from '../api/types.ts';
import { forgetPreviewTokens } from '../composables/usePreviewToken.ts';

export const useSessionStore = defineStore('session', () => {
  const user = ref<User | null>(null);
  const memberships = ref<Membership[]>([]);
  /** True once GET /api/session has answered (the router waits for it). */
  const loaded = ref(false);
  /** Set when a call answered 401 while we thought the session was alive. */
  const expired = ref(false);

  const signedIn = computed(() => user.value !== null);

  function apply(s: SessionInfo) {
    user.value = s.user;
    memberships.value = s.memberships;
    loaded.value = true;
    if (s.user) expired.value = false;
  }

  async function load(force = false): Promise<void> {
    if (loaded.value && !force) return;
    apply(await api.session());
  }

  async function signIn(email: string, password: string): Promise<void> {
    apply(await api.signIn(email.trim(), password));
  }

  async function signUp(input: { email: string; name: string; password: string; organizationName?: string; invitationToken?: string }): Promise<User> {
    const s = await api.signUp({ ...input, email: input.email.trim() });
    if (s.signedIn) apply({ user: s.user, memberships: s.memberships ?? [], csrfToken: s.csrfToken ?? '' });
    return s.user;
  }

  async function verifyEmail(token: string): Promise<User> {
    const { user: verified } = await api.verifyEmail(token);
    if (user.value && user.value.id === verified.id) user.value = verified;
    return verified;
  }

  async function signOut(): Promise<void> {
    try {
      await api.signOut();
    } finally {
      clear();
      // A fresh anonymous session brings a fresh CSRF token.
      await load(true).catch(() => undefined);
    }
  }

  /** Forget the user locally (signed out, or the session ended on the server). */
  function clear(sessionEnded = false) {
    forgetPreviewTokens();
    user.value = null;
    memberships.value = [];
    expired.value = sessionEnded;
  }

  async function updateProfile(input: { name?: string; password?: string; currentPassword?: string }): Promise<void> {
    const { user: updated } = await api.updateMe(input);
    user.value = updated;
  }

  function roleIn(orgId: string | null | undefined): Role | null {
    if (!orgId) return null;
    return memberships.value.find((m) => m.organization.id === orgId)?.role ?? null;
  }

  function addMembership(m: Membership) {
    memberships.value = [...memberships.value.filter((x) => x.organization.id !== m.organization.id), m];
  }

  return { user, memberships, loaded, expired, signedIn, load, signIn, signUp, verifyEmail, signOut, clear, updateProfile, roleIn, addMembership };
});
