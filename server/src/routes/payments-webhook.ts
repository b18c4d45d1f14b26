/**
 * POST /webhooks/payments: the payment provider's events. Mounted in app.ts before the console's
 * JSON, session and CSRF stack: the signature covers the exact bytes, so the body stays raw.
 * 200 { received, duplicate } once handled (or handled before); 400 `signature-invalid` when
 * the signature is missing, forged or stale; 5xx makes the provider send the event again.
 */
import express, { Router } from 'express';
import type { AppContext } from '../context.ts';
import { handleWebhook } from '../services/billing.ts';

export function createPaymentsWebhookRouter(ctx: AppContext): Router {
  const router = Router();
  router.post('/webhooks/payments', express.raw({ type: () => true, limit: '1mb' }), async (req, res) => {
    const body = Buffer.isBuffer(req.body) ? req.body : Buffer.alloc(0);
    const outcome = await handleWebhook(ctx, body, req.get('stripe-signature'));
    res.set('Cache-Control', 'no-store').json({ received: true, duplicate: outcome.duplicate });
  });
  return router;
}
