/**
 * A small registry so that every /api route declares its role-table action in one place:
 *
 *   const r = new ApiRoutes();
 *   r.get('/orgs/:org/members', 'members.read', handler);
 *
 * createApiRouter mounts them as `requireRole(action)` + handlers; the role-matrix test reads
 * the same list (method, path, action) to prove it covers every route.
 */
import type { RequestHandler } from 'express';
import type { Action } from '../../http/roles.ts';

export type ApiMethod = 'get' | 'post' | 'patch' | 'delete';

export interface ApiRoute {
  method: ApiMethod;
  /** Express path under /api, e.g. "/orgs/:org/keys/:id/rotate". */
  path: string;
  action: Action;
  handlers: RequestHandler[];
}

export class ApiRoutes {
  readonly list: ApiRoute[] = [];
  private add(method: ApiMethod, path: string, action: Action, handlers: RequestHandler[]): this {
    this.list.push({ method, path, action, handlers });
    return this;
  }
  get(path: string, action: Action, ...handlers: RequestHandler[]): this {
    return this.add('get', path, action, handlers);
  }
  post(path: string, action: Action, ...handlers: RequestHandler[]): this {
    return this.add('post', path, action, handlers);
  }
  patch(path: string, action: Action, ...handlers: RequestHandler[]): this {
    return this.add('patch', path, action, handlers);
  }
  delete(path: string, action: Action, ...handlers: RequestHandler[]): this {
    return this.add('delete', path, action, handlers);
  }
}
