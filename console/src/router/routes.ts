/**
 * Every page of the console, lazily loaded, with its typed name. `RouteNamedMap` below makes
 * `router.push({ name, params })` and `<RouterLink :to>` checked by the compiler.
 */
import type { RouteRecordInfo, RouteRecordRaw } from 'vue-router';
import type { Action } from '../lib/roles.ts';

type OrgParams = { org: string };

export interface RouteNamedMap {
  home: RouteRecordInfo<'home', '/', Record<never, never>, Record<never, never>>;
  'sign-in': RouteRecordInfo<'sign-in', '/sign-in', Record<never, never>, Record<never, never>>;
  'sign-up': RouteRecordInfo<'sign-up', '/sign-up', Record<never, never>, Record<never, never>>;
  'verify-email': RouteRecordInfo<'verify-email', '/verify-email', Record<never, never>, Record<never, never>>;
  'forgot-password': RouteRecordInfo<'forgot-password', '/forgot-password', Record<never, never>, Record<never, never>>;
  'reset-password': RouteRecordInfo<'reset-password', '/reset-password', Record<never, never>, Record<never, never>>;
  invite: RouteRecordInfo<'invite', '/invite/:token', { token: string }, { token: string }>;
  profile: RouteRecordInfo<'profile', '/profile', Record<never, never>, Record<never, never>>;
  'org-new': RouteRecordInfo<'org-new', '/orgs/new', Record<never, never>, Record<never, never>>;
  satellites: RouteRecordInfo<'satellites', '/o/:org/satellites', OrgParams, OrgParams>;
  satellite: RouteRecordInfo<'satellite', '/o/:org/satellites/:id', OrgParams & { id: string }, OrgParams & { id: string }>;
  keys: RouteRecordInfo<'keys', '/o/:org/keys', OrgParams, OrgParams>;
  embeds: RouteRecordInfo<'embeds', '/o/:org/embeds', OrgParams, OrgParams>;
  'embed-new': RouteRecordInfo<'embed-new', '/o/:org/embeds/new', OrgParams, OrgParams>;
  'embed-edit': RouteRecordInfo<'embed-edit', '/o/:org/embeds/:id', OrgParams & { id: string }, OrgParams & { id: string }>;
  usage: RouteRecordInfo<'usage', '/o/:org/usage', OrgParams, OrgParams>;
  members: RouteRecordInfo<'members', '/o/:org/members', OrgParams, OrgParams>;
  activity: RouteRecordInfo<'activity', '/o/:org/activity', OrgParams, OrgParams>;
  plan: RouteRecordInfo<'plan', '/o/:org/plan', OrgParams, OrgParams>;
  webhooks: RouteRecordInfo<'webhooks', '/o/:org/webhooks', OrgParams, OrgParams>;
  'not-found': RouteRecordInfo<'not-found', '/:path(.*)*', { path?: string | string[] }, { path: string | string[] }>;
}

export type RouteName = keyof RouteNamedMap;

declare module 'vue-router' {
  interface TypesConfig {
    RouteNamedMap: RouteNamedMap;
  }
  interface RouteMeta {
    /** Reachable without signing in. */
    public?: boolean;
    /** Only for people who are signed out (signed-in people go home). */
    guest?: boolean;
    /** Centered card without the navigation. */
    bare?: boolean;
    /** Page title (also read out on navigation). */
    title?: string;
    /** The role must allow this in the organization of the URL; otherwise the guard goes to `deniedTo`. */
    needs?: Action;
    /** Where a role without `needs` is sent instead (same organization), and what it is told. */
    deniedTo?: 'embeds';
    deniedText?: string;
  }
}

/** A route parameter as one string (the typed params are a union across all routes). */
export function routeParam(params: object, key: string): string | undefined {
  const v = (params as Record<string, unknown>)[key];
  return typeof v === 'string' ? v : Array.isArray(v) && typeof v[0] === 'string' ? v[0] : undefined;
}

const bare = { public: true, guest: true, bare: true } as const;

export const routes: RouteRecordRaw[] = [
  { path: '/', name: 'home', component: () => import('../pages/HomePage.vue'), meta: { title: 'Nadirline' } },
  { path: '/sign-in', alias: ['/signin', '/login'], name: 'sign-in', component: () => import('../pages/SignInPage.vue'), meta: { ...bare, title: 'Sign in' } },
  { path: '/sign-up', alias: ['/signup'], name: 'sign-up', component: () => import('../pages/SignUpPage.vue'), meta: { ...bare, title: 'Create an account' } },
  { path: '/verify-email', name: 'verify-email', component: () => import('../pages/VerifyEmailPage.vue'), meta: { public: true, bare: true, title: 'Confirm your e-mail' } },
  { path: '/forgot-password', name: 'forgot-password', component: () => import('../pages/ForgotPasswordPage.vue'), meta: { ...bare, title: 'Forgotten password' } },
  { path: '/reset-password', name: 'reset-password', component: () => import('../pages/ResetPasswordPage.vue'), meta: { public: true, bare: true, title: 'Choose a new password' } },
  { path: '/invite/:token', name: 'invite', component: () => import('../pages/InvitePage.vue'), meta: { public: true, bare: true, title: 'Invitation' } },
  { path: '/profile', name: 'profile', component: () => import('../pages/ProfilePage.vue'), meta: { title: 'Your profile' } },
  { path: '/orgs/new', name: 'org-new', component: () => import('../pages/OrgNewPage.vue'), meta: { title: 'New organization' } },
  { path: '/o/:org', redirect: (to) => ({ name: 'satellites', params: { org: routeParam(to.params, 'org') ?? '' } }) },
  { path: '/o/:org/satellites', name: 'satellites', component: () => import('../pages/SatellitesPage.vue'), props: true, meta: { title: 'Satellites' } },
  { path: '/o/:org/satellites/:id', name: 'satellite', component: () => import('../pages/SatellitePage.vue'), props: true, meta: { title: 'Satellite' } },
  { path: '/o/:org/keys', name: 'keys', component: () => import('../pages/KeysPage.vue'), props: true, meta: { title: 'Keys' } },
  { path: '/o/:org/embeds', name: 'embeds', component: () => import('../pages/EmbedsPage.vue'), props: true, meta: { title: 'Embeds' } },
  {
    path: '/o/:org/embeds/new',
    name: 'embed-new',
    component: () => import('../pages/EmbedBuilderPage.vue'),
    props: true,
    meta: {
      title: 'New embed',
      needs: 'edit-embeds',
      deniedTo: 'embeds',
      deniedText: 'Your role can look at embeds but not build them. An editor, an admin or the owner can.',
    },
  },
  { path: '/o/:org/embeds/:id', name: 'embed-edit', component: () => import('../pages/EmbedBuilderPage.vue'), props: true, meta: { title: 'Edit embed' } },
  { path: '/o/:org/usage', name: 'usage', component: () => import('../pages/UsagePage.vue'), props: true, meta: { title: 'Usage' } },
  { path: '/o/:org/members', name: 'members', component: () => import('../pages/MembersPage.vue'), props: true, meta: { title: 'Members' } },
  { path: '/o/:org/activity', name: 'activity', component: () => import('../pages/ActivityPage.vue'), props: true, meta: { title: 'Activity' } },
  { path: '/o/:org/plan', name: 'plan', component: () => import('../pages/PlanPage.vue'), props: true, meta: { title: 'Plan' } },
  { path: '/o/:org/webhooks', name: 'webhooks', component: () => import('../pages/WebhooksPage.vue'), props: true, meta: { title: 'Webhooks' } },
  { path: '/:path(.*)*', name: 'not-found', component: () => import('../pages/NotFoundPage.vue'), meta: { public: true, title: 'Not found' } },
];
