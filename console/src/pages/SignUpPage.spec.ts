import { flushPromises } from '@vue/test-utils';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { mockFetch } from '../testing/fetch-mock.ts';
import { session } from '../testing/fixtures.ts';
import { mountAt } from '../testing/mount.ts';
import SignUpPage from './SignUpPage.vue';

afterEach(() => {
  vi.unstubAllGlobals();
  document.body.innerHTML = '';
});

const invited = { id: 'u7', email: 'new.person@kestrel.example', name: 'Noor Achterberg', createdAt: '2031-01-05T00:00:00Z' };

async function fill(wrapper: Awaited<ReturnType<typeof mountAt>>['wrapper'], withOrg: boolean) {
  await wrapper.find('input[autocomplete="name"]').setValue('Noor Achterberg');
  await wrapper.find('input[type="email"]').setValue(invited.email);
  await wrapper.find('input[type="password"]').setValue('lantern-orbit-4471');
  if (withOrg) await wrapper.find('input[autocomplete="organization"]').setValue('Achterberg Lab');
  await wrapper.find('form').trigger('submit');
  await flushPromises();
}

describe('signing up', () => {
  it('tells someone who signed up from an invitation that they are in, with the organization and role, and no e-mail to wait for', async () => {
    const { calls } = mockFetch([
      { path: '/api/session', body: session(null) },
      { path: '/api/invitations/tok-1', body: { organization: { name: 'Kestrel Science Centre' }, email: invited.email, role: 'editor', expiresAt: '2031-01-12T00:00:00Z' } },
      { method: 'POST', path: '/api/auth/signup', status: 201, body: { user: { ...invited, emailVerified: true } } },
    ]);
    const { wrapper } = await mountAt(SignUpPage, `/sign-up?invite=tok-1&email=${encodeURIComponent(invited.email)}`);
    expect(wrapper.text()).toContain('join Kestrel Science Centre as Editor');
    await fill(wrapper, false);
    expect(calls.find((c) => c.method === 'POST')!.body).toMatchObject({ invitationToken: 'tok-1', email: invited.email });
    const said = wrapper.find('[data-test="signed-up"]').text();
    expect(wrapper.find('h1').text()).toBe('You’re in');
    expect(said).toContain('You joined Kestrel Science Centre as Editor.');
    expect(said).toContain(`Sign in as ${invited.email}`);
    expect(wrapper.text()).not.toMatch(/inbox|confirmation link/i);
    wrapper.unmount();
  });

  it('asks someone who signed up on their own to confirm the address from their inbox', async () => {
    mockFetch([
      { path: '/api/session', body: session(null) },
      { method: 'POST', path: '/api/auth/signup', status: 201, body: { user: { ...invited, emailVerified: false } } },
    ]);
    const { wrapper } = await mountAt(SignUpPage, '/sign-up');
    await fill(wrapper, true);
    expect(wrapper.find('h1').text()).toBe('Check your inbox');
    expect(wrapper.find('[data-test="signed-up"]').text()).toContain(`We sent a confirmation link to ${invited.email}`);
    wrapper.unmount();
  });
});
