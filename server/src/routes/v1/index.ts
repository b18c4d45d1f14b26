/** The keyed public API, /v1 (contract in brief.md). */
import { Router } from 'express';
import type { AppContext } from '../../context.ts';

export async function createV1Router(_ctx: AppContext): Promise<Router> {
  const router = Router();
  return router;
}
