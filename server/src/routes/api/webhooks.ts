/** Webhooks out in the console (docs/console-api.md "Webhooks"); the rules live in services/webhooks.ts. */
import { z } from 'zod';
import type { AppContext } from '../../context.ts';
import { orgAuth } from '../../http/roles.ts';
import { parseBody, parseQuery } from '../../http/validate.ts';
import { recordAudit } from '../../services/audit.ts';
import {
  MAX_ENDPOINTS_PER_ORG,
  WEBHOOK_EVENT_TYPES,
  WEBHOOK_EVENT_TYPE_IDS,
  createEndpoint,
  deleteEndpoint,
  endpointOf,
  endpointUrlProblem,
  listDeliveries,
  listEndpoints,
  redeliver,
  rotateSecret,
  sendTestEvent,
  serializeEndpoint,
  updateEndpoint,
} from '../../services/webhooks.ts';
import { HttpError } from '../../http/problem.ts';
import { param } from './params.ts';
import { ApiRoutes } from './routes.ts';

export function webhookRoutes(ctx: AppContext): ApiRoutes {
  const r = new ApiRoutes();
  const url = z
    .string({ message: 'Enter the https:// URL your system receives events at.' })
    .trim()
    .min(1, 'Enter the https:// URL your system receives events at.')
    .max(2000, 'At most 2,000 characters.')
    .superRefine((v, c) => {
      const why = endpointUrlProblem(v, ctx.config);
      if (why) c.addIssue({ code: 'custom', message: why, params: { showsValue: true } });
    });
  const events = z
    .array(z.enum(WEBHOOK_EVENT_TYPE_IDS, { message: `One of ${WEBHOOK_EVENT_TYPE_IDS.join(', ')}.` }), { message: 'Choose the kinds of events to send, as a list.' })
    .min(1, 'Choose at least one kind of event.')
    .max(WEBHOOK_EVENT_TYPE_IDS.length);
  const description = z.string().trim().max(200, 'At most 200 characters.');
  const CreateBody = z.object({ url, events, description: description.optional() }).strict();
  const UpdateBody = z.object({ url: url.optional(), events: events.optional(), description: description.optional(), paused: z.boolean({ message: 'true (pause) or false (resume).' }).optional() }).strict();
  const DeliveriesQuery = z.object({
    endpoint: z.string().max(40).optional(),
    limit: z.coerce.number({ message: 'A whole number from 1 to 200.' }).int().min(1).max(200).optional(),
  });

  r.get('/orgs/:org/webhooks', 'webhooks.read', async (_req, res) => {
    const orgId = orgAuth(res).organization.id;
    res.json({ endpoints: (await listEndpoints(orgId)).map(serializeEndpoint), eventTypes: WEBHOOK_EVENT_TYPES, maxEndpoints: MAX_ENDPOINTS_PER_ORG });
  });

  r.post('/orgs/:org/webhooks', 'webhooks.write', async (req, res) => {
    const auth = orgAuth(res);
    const body = parseBody(CreateBody, req);
    const { endpoint, secret } = await createEndpoint(ctx, auth.organization.id, body, auth.user.id);
    await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'webhook.create', targetType: 'webhook', targetId: endpoint.id, detail: { url: endpoint.url, events: endpoint.events } });
    res.status(201).json({ endpoint: serializeEndpoint(endpoint), secret });
  });

  r.patch('/orgs/:org/webhooks/:id', 'webhooks.write', async (req, res) => {
    const auth = orgAuth(res);
    const body = parseBody(UpdateBody, req);
    const endpoint = await endpointOf(auth.organization.id, param(req, 'id'));
    const before = serializeEndpoint(endpoint);
    await updateEndpoint(ctx, endpoint, body);
    const after = serializeEndpoint(endpoint);
    await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'webhook.update', targetType: 'webhook', targetId: endpoint.id, detail: { url: after.url, ...(before.status !== after.status ? { status: after.status } : {}), ...(before.url !== after.url ? { previousUrl: before.url } : {}), ...(JSON.stringify(before.events) !== JSON.stringify(after.events) ? { events: after.events } : {}) } });
    res.json({ endpoint: after });
  });

  r.delete('/orgs/:org/webhooks/:id', 'webhooks.write', async (req, res) => {
    const auth = orgAuth(res);
    const endpoint = await endpointOf(auth.organization.id, param(req, 'id'));
    await deleteEndpoint(ctx, endpoint);
    await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'webhook.delete', targetType: 'webhook', targetId: endpoint.id, detail: { url: endpoint.url } });
    res.status(204).end();
  });

  r.post('/orgs/:org/webhooks/:id/rotate-secret', 'webhooks.write', async (req, res) => {
    const auth = orgAuth(res);
    const endpoint = await endpointOf(auth.organization.id, param(req, 'id'));
    const { secret } = await rotateSecret(ctx, endpoint);
    await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'webhook.rotate-secret', targetType: 'webhook', targetId: endpoint.id, detail: { url: endpoint.url } });
    res.json({ endpoint: serializeEndpoint(endpoint), secret });
  });

  r.post('/orgs/:org/webhooks/:id/test', 'webhooks.write', async (req, res) => {
    const auth = orgAuth(res);
    const endpoint = await endpointOf(auth.organization.id, param(req, 'id'));
    const delivery = await sendTestEvent(ctx, endpoint, auth.user.name);
    res.status(201).json({ delivery: (await listDeliveries(auth.organization.id, { ids: [delivery.id] }))[0] });
  });

  r.get('/orgs/:org/webhook-deliveries', 'webhooks.read', async (req, res) => {
    const auth = orgAuth(res);
    const q = parseQuery(DeliveriesQuery, req);
    res.json({ deliveries: await listDeliveries(auth.organization.id, { endpointId: q.endpoint, limit: q.limit ?? 50 }) });
  });

  r.get('/orgs/:org/webhook-deliveries/:id', 'webhooks.read', async (req, res) => {
    const auth = orgAuth(res);
    const [delivery] = await listDeliveries(auth.organization.id, { ids: [param(req, 'id')], withAttempts: true });
    if (!delivery) throw new HttpError('not-found', 'No such webhook delivery in this organization.');
    res.json({ delivery });
  });

  r.post('/orgs/:org/webhook-deliveries/:id/redeliver', 'webhooks.write', async (req, res) => {
    const auth = orgAuth(res);
    const delivery = await redeliver(ctx, auth.organization.id, param(req, 'id'));
    res.status(201).json({ delivery: (await listDeliveries(auth.organization.id, { ids: [delivery.id] }))[0] });
  });

  return r;
}
