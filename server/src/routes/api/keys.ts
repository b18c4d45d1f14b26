/** API keys in the console (docs/console-api.md "Keys"); rules live in services/keys.ts (S2). */
import { z } from 'zod';
import type { AppContext } from '../../context.ts';
import { HttpError } from '../../http/problem.ts';
import { orgAuth } from '../../http/roles.ts';
import { parseBody } from '../../http/validate.ts';
import { ApiKey } from '../../models/index.ts';
import { recordAudit } from '../../services/audit.ts';
import { DEFAULT_GRACE_HOURS, MAX_GRACE_HOURS, getKeyService, keyInputSchema, keyUpdateSchema } from '../../services/keys.ts';
import { param } from './params.ts';
import { ApiRoutes } from './routes.ts';

const RotateBody = z.object({ graceHours: z.number().min(0).max(MAX_GRACE_HOURS).optional() });

async function keyOfOrg(organizationId: string, id: string): Promise<ApiKey> {
  const key = await ApiKey.findOne({ where: { id, organizationId } });
  if (!key) throw new HttpError('not-found', 'No such key in this organization.');
  return key;
}

export function keyRoutes(ctx: AppContext): ApiRoutes {
  const r = new ApiRoutes();
  const keys = getKeyService(ctx);

  r.get('/orgs/:org/keys', 'keys.read', async (_req, res) => {
    const rows = await ApiKey.findAll({ where: { organizationId: orgAuth(res).organization.id }, order: [['createdAt', 'DESC']] });
    res.json({ keys: rows.map((k) => keys.serializeKey(k)) });
  });

  r.post('/orgs/:org/keys', 'keys.write', async (req, res) => {
    const auth = orgAuth(res);
    const body = parseBody(keyInputSchema, req);
    const { key, secret } = await keys.createKey({ ...body, organizationId: auth.organization.id, createdByUserId: auth.user.id });
    await recordAudit(ctx, {
      organizationId: auth.organization.id,
      actorUserId: auth.user.id,
      action: 'key.create',
      targetType: 'key',
      targetId: key.id,
      detail: { name: key.name, kind: key.kind, lastFour: key.lastFour, origins: key.origins, scopes: key.scopes, rateLimitPerMin: key.rateLimitPerMin },
    });
    res.status(201).json({ key: keys.serializeKey(key), secret });
  });

  r.patch('/orgs/:org/keys/:id', 'keys.write', async (req, res) => {
    const auth = orgAuth(res);
    const body = parseBody(keyUpdateSchema, req);
    const before = await keyOfOrg(auth.organization.id, param(req, 'id'));
    const was = { name: before.name, origins: before.origins, scopes: before.scopes, rateLimitPerMin: before.rateLimitPerMin, expiresAt: before.expiresAt };
    const key = await keys.updateKey(before.id, body);
    const changes: Record<string, { from: unknown; to: unknown }> = {};
    for (const field of Object.keys(was) as Array<keyof typeof was>) {
      if (JSON.stringify(was[field]) !== JSON.stringify(key[field])) changes[field] = { from: was[field], to: key[field] };
    }
    if (Object.keys(changes).length > 0) {
      await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'key.update', targetType: 'key', targetId: key.id, detail: { name: key.name, lastFour: key.lastFour, changes } });
    }
    res.json({ key: keys.serializeKey(key) });
  });

  r.post('/orgs/:org/keys/:id/rotate', 'keys.write', async (req, res) => {
    const auth = orgAuth(res);
    const { graceHours = DEFAULT_GRACE_HOURS } = parseBody(RotateBody, req);
    const old = await keyOfOrg(auth.organization.id, param(req, 'id'));
    const { key, secret, previous } = await keys.rotateKey(old.id, graceHours, auth.user.id);
    await recordAudit(ctx, {
      organizationId: auth.organization.id,
      actorUserId: auth.user.id,
      action: 'key.rotate',
      targetType: 'key',
      targetId: previous.id,
      detail: { name: key.name, previousLastFour: previous.lastFour, newKeyId: key.id, newLastFour: key.lastFour, graceHours, graceUntil: previous.graceUntil },
    });
    res.status(201).json({ key: keys.serializeKey(key), secret, previous: keys.serializeKey(previous) });
  });

  r.post('/orgs/:org/keys/:id/revoke', 'keys.write', async (req, res) => {
    const auth = orgAuth(res);
    const old = await keyOfOrg(auth.organization.id, param(req, 'id'));
    const wasRevoked = old.revokedAt !== null;
    const key = await keys.revokeKey(old.id);
    if (!wasRevoked) {
      await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'key.revoke', targetType: 'key', targetId: key.id, detail: { name: key.name, lastFour: key.lastFour } });
    }
    res.json({ key: keys.serializeKey(key) });
  });

  return r;
}
