import { createPinia, setActivePinia } from 'pinia';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { api } from '../api/client.ts';
import { mockFetch, problem } from '../testing/fetch-mock.ts';
import { session, user } from '../testing/fixtures.ts';
import { useOrgStore } from './org.ts';
import { useSessionStore } from './session.ts';

beforeEach(() => {
  setActivePinia(createPinia());
  localStorage.clear();
  api.csrfToken = '';
});
afterEach(() => vi.unstubAllGlobals());

describe('the session store', () => {
  it('loads the user, memberships and CSRF token once', async () => {
    const { calls } = mockFetch([{ path: '/api/session', body: session('editor') }]);
    const s = useSessionStore();
    await s.load();
    await s.load();
    expect(calls).toHaveLength(1);
    expect(s.signedIn).toBe(true);
    expect(s.user?.email).toBe(user.email);
    expect(s.roleIn('org1')).toBe('editor');
    expect(s.roleIn('elsewhere')).toBeNull();
    expect(api.csrfToken).toBe('csrf-1');
  });

  it('signs in, takes the new CSRF token and clears the expired flag', async () => {
    mockFetch([{ method: 'POST', path: '/api/auth/signin', body: session('admin', { csrfToken: 'csrf-after' }) }]);
    const s = useSessionStore();
    s.clear(true);
    expect(s.expired).toBe(true);
    await s.signIn('  ada@kestrel.example ', 'correct horse battery');
    expect(s.user?.name).toBe('Ada Quill');
    expect(s.expired).toBe(false);
    expect(api.csrfToken).toBe('csrf-after');
  });

  it('refuses a wrong password without touching the signed-out state', async () => {
    mockFetch([{ method: 'POST', path: '/api/auth/signin', ...problem(401, 'unauthenticated', 'E-mail or password is wrong.') }]);
    const s = useSessionStore();
    await expect(s.signIn('a@b.example', 'nope')).rejects.toMatchObject({ status: 401 });
    expect(s.signedIn).toBe(false);
  });

  it('forgets the user on sign-out even when the server call fails, then fetches a fresh anonymous session', async () => {
    const { calls } = mockFetch([
      { path: '/api/session', once: true, body: session('owner') },
      { method: 'POST', path: '/api/auth/signout', status: 500, body: { code: 'internal', title: 'x', status: 500 } },
      { path: '/api/session', body: session(null, { csrfToken: 'anon' }) },
    ]);
    const s = useSessionStore();
    await s.load();
    await expect(s.signOut()).rejects.toMatchObject({ status: 500 });
    expect(s.user).toBeNull();
    expect(s.memberships).toEqual([]);
    expect(calls.at(-1)?.url).toBe('/api/session');
    expect(api.csrfToken).toBe('anon');
  });

  it('opens the organization used last, else the first one', async () => {
    mockFetch([
      {
        path: '/api/session',
        body: {
          ...session('owner'),
          memberships: [
            { organization: { id: 'a', name: 'A', plan: 'starter' }, role: 'viewer' },
            { organization: { id: 'b', name: 'B', plan: 'starter' }, role: 'owner' },
          ],
        },
      },
    ]);
    const s = useSessionStore();
    await s.load();
    const org = useOrgStore();
    expect(org.preferredId()).toBe('a');
    org.select('b');
    expect(org.preferredId()).toBe('b');
    expect(org.role).toBe('owner');
    expect(org.can('billing')).toBe(true);
  });
});
