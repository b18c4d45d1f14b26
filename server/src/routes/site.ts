/** Static hosting: the console SPA, the widget build, the examples and hosted embed pages. */
import { Router } from 'express';
import type { AppContext } from '../context.ts';

export async function createSiteRouter(_ctx: AppContext): Promise<Router> {
  const router = Router();
  return router;
}
