/** The console's own API, /api, behind a session cookie. */
import { Router } from 'express';
import type { AppContext } from '../../context.ts';

export async function createApiRouter(_ctx: AppContext): Promise<Router> {
  const router = Router();
  return router;
}
