/**
 * The router and its one guard: wait for the session, send signed-out people to sign-in (with a
 * return path), signed-in people away from the sign-in pages, and keep the current organization
 * in step with the URL.
 */
import { createRouter, createWebHistory, type RouteLocationNormalized, type RouteLocationRaw, type Router, type RouterHistory } from 'vue-router';
import { can } from '../lib/roles.ts';
import { useNoticesStore } from '../stores/notices.ts';
import { useOrgStore } from '../stores/org.ts';
import { useSessionStore } from '../stores/session.ts';
import { routeParam, routes } from './routes.ts';

/** Only same-app paths are followed after sign-in (no open redirect). */
export function safeNext(next: unknown): string | null {
  if (typeof next !== 'string' || !next.startsWith('/') || next.startsWith('//') || next.startsWith('/\\')) return null;
  return next;
}

export async function guard(to: RouteLocationNormalized): Promise<RouteLocationRaw | true> {
  const session = useSessionStore();
  if (!session.loaded) {
    try {
      await session.load();
    } catch {
      // The server is unreachable: public pages still open; others show the sign-in page's error.
      if (!to.meta.public) return { name: 'sign-in', query: { next: to.fullPath } };
      return true;
    }
  }
  if (!session.signedIn && !to.meta.public) {
    return to.name === 'home' ? { name: 'sign-in' } : { name: 'sign-in', query: { next: to.fullPath } };
  }
  if (session.signedIn && to.meta.guest) {
    return safeNext(to.query.next) ?? { name: 'home' };
  }
  const org = useOrgStore();
  if (to.name === 'home') {
    const id = org.preferredId();
    return id ? { name: 'satellites', params: { org: id } } : { name: 'org-new' };
  }
  const orgParam = routeParam(to.params, 'org');
  if (orgParam) {
    const role = session.roleIn(orgParam);
    if (!role) return { name: 'not-found', params: { path: to.path.slice(1).split('/') } };
    org.select(orgParam);
    // A page for an action the role lacks (a viewer building an embed): the list instead, and why.
    if (to.meta.needs && !can(role, to.meta.needs)) {
      if (to.meta.deniedText) useNoticesStore().push(to.meta.deniedText, 'info');
      return { name: to.meta.deniedTo ?? 'satellites', params: { org: orgParam } };
    }
  } else if (session.signedIn && !org.currentId) {
    // Pages outside an organization (profile, new organization) keep its navigation: the last one used.
    const id = org.preferredId();
    if (id) org.select(id);
  }
  return true;
}

export function createAppRouter(history: RouterHistory = createWebHistory('/')): Router {
  const router = createRouter({
    history,
    routes,
    scrollBehavior: (_to, _from, saved) => saved ?? { top: 0 },
  });
  router.beforeEach(guard);
  router.afterEach((to) => {
    const org = useOrgStore();
    const name = to.meta.title ?? 'Nadirline';
    document.title = org.current && routeParam(to.params, 'org') ? `${name} · ${org.current.name} · Nadirline` : `${name} · Nadirline`;
  });
  return router;
}
