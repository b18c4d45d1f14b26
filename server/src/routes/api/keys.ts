/** API keys in the console (docs/console-api.md "Keys"); rules live in services/keys.ts (S2). */
import type { AppContext } from '../../context.ts';
import { HttpError } from '../../http/problem.ts';
import { orgAuth } from '../../http/roles.ts';
import { parseBody } from '../../http/validate.ts';
import { ApiKey, Embed } from '../../models/index.ts';
import { changesOf, recordAudit } from '../../services/audit.ts';
import { getEmbedService } from '../../services/embeds.ts';
import { getKeyService, keyInputSchema, keyUpdateSchema, rotateInputSchema, type KeyJson } from '../../services/keys.ts';
import { getUsageRecorder, utcDay, type KeyOrigin } from '../../services/usage.ts';
import { param } from './params.ts';
import { ApiRoutes } from './routes.ts';

/** "Seen from these origins": the calling origins of the last this many UTC days, today included. */
export const KEY_ORIGIN_DAYS = 7;

/** What uses a key: the embeds that read with it and the origins that called it lately. */
export interface KeyUse {
  embeds: Array<{ id: string; name: string }>;
  origins: KeyOrigin[];
  /** First UTC day the origins count from. */
  originsSince: string;
}

async function keyOfOrg(organizationId: string, id: string): Promise<ApiKey> {
  const key = await ApiKey.findOne({ where: { id, organizationId, deletedAt: null } });
  if (!key) throw new HttpError('not-found', 'No such key in this organization.');
  return key;
}

export function keyRoutes(ctx: AppContext): ApiRoutes {
  const r = new ApiRoutes();
  const keys = getKeyService(ctx);
  const usage = getUsageRecorder(ctx);

  /** Keys as the console shows them: which key each replaced, and what uses each one. */
  async function present(orgId: string, rows: ApiKey[]): Promise<Array<KeyJson & { use: KeyUse }>> {
    const ids = rows.map((k) => k.id);
    const since = utcDay(Date.now() - (KEY_ORIGIN_DAYS - 1) * 86_400_000);
    const [embeds, origins, predecessors] = await Promise.all([
      Embed.findAll({ where: { organizationId: orgId, apiKeyId: ids }, attributes: ['id', 'name', 'apiKeyId'], order: [['name', 'ASC']] }),
      usage.origins(orgId, ids, since),
      ApiKey.findAll({ where: { organizationId: orgId, replacedById: ids, deletedAt: null }, attributes: ['id', 'replacedById'] }),
    ]);
    const replaces = new Map(predecessors.map((p) => [p.replacedById, p.id]));
    return rows.map((k) => ({
      ...keys.serializeKey(k),
      replacesId: replaces.get(k.id) ?? null,
      use: {
        embeds: embeds.filter((e) => e.apiKeyId === k.id).map((e) => ({ id: e.id, name: e.name })),
        origins: origins.get(k.id) ?? [],
        originsSince: since,
      },
    }));
  }
  const one = async (orgId: string, key: ApiKey) => (await present(orgId, [key]))[0]!;

  r.get('/orgs/:org/keys', 'keys.read', async (_req, res) => {
    const orgId = orgAuth(res).organization.id;
    const rows = await ApiKey.findAll({ where: { organizationId: orgId, deletedAt: null }, order: [['createdAt', 'DESC']] });
    res.json({ keys: await present(orgId, rows) });
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
    res.status(201).json({ key: await one(auth.organization.id, key), secret });
  });

  r.patch('/orgs/:org/keys/:id', 'keys.write', async (req, res) => {
    const auth = orgAuth(res);
    const body = parseBody(keyUpdateSchema, req);
    const before = await keyOfOrg(auth.organization.id, param(req, 'id'));
    const was = { name: before.name, origins: before.origins, scopes: before.scopes, rateLimitPerMin: before.rateLimitPerMin, expiresAt: before.expiresAt };
    const key = await keys.updateKey(before.id, body);
    const changes = changesOf(was, { name: key.name, origins: key.origins, scopes: key.scopes, rateLimitPerMin: key.rateLimitPerMin, expiresAt: key.expiresAt });
    if (Object.keys(changes).length > 0) {
      await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'key.update', targetType: 'key', targetId: key.id, detail: { name: key.name, lastFour: key.lastFour, changes } });
    }
    res.json({ key: await one(auth.organization.id, key) });
  });

  r.post('/orgs/:org/keys/:id/rotate', 'keys.write', async (req, res) => {
    const auth = orgAuth(res);
    const body = parseBody(rotateInputSchema, req);
    const old = await keyOfOrg(auth.organization.id, param(req, 'id'));
    const { key, secret, previous, embedsMoved } = await keys.rotateKey(old.id, body, auth.user.id);
    if (embedsMoved > 0) getEmbedService(ctx).invalidateAll();
    await recordAudit(ctx, {
      organizationId: auth.organization.id,
      actorUserId: auth.user.id,
      action: 'key.rotate',
      targetType: 'key',
      targetId: previous.id,
      detail: {
        name: previous.name,
        previousLastFour: previous.lastFour,
        newKeyId: key.id,
        newName: key.name,
        newLastFour: key.lastFour,
        quietMinutes: previous.retireQuietMinutes,
        retireBy: previous.graceUntil,
        embedsMoved,
      },
    });
    const [fresh, prev] = await present(auth.organization.id, [key, previous]);
    res.status(201).json({ key: fresh, secret, previous: prev, embedsMoved });
  });

  r.post('/orgs/:org/keys/:id/revoke', 'keys.write', async (req, res) => {
    const auth = orgAuth(res);
    const old = await keyOfOrg(auth.organization.id, param(req, 'id'));
    const wasRevoked = old.revokedAt !== null;
    const key = await keys.revokeKey(old.id);
    if (!wasRevoked) {
      await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'key.revoke', targetType: 'key', targetId: key.id, detail: { name: key.name, lastFour: key.lastFour } });
    }
    res.json({ key: await one(auth.organization.id, key) });
  });

  // Deleting: gone from the list and from /v1 at once; usage and activity keep its name (services/keys.ts deleteKey).
  r.delete('/orgs/:org/keys/:id', 'keys.write', async (req, res) => {
    const auth = orgAuth(res);
    const old = await keyOfOrg(auth.organization.id, param(req, 'id'));
    const { key, stateBefore, lastUse } = await keys.deleteKey(old.id);
    await recordAudit(ctx, {
      organizationId: auth.organization.id,
      actorUserId: auth.user.id,
      action: 'key.delete',
      targetType: 'key',
      targetId: key.id,
      detail: { name: key.name, kind: key.kind, lastFour: key.lastFour, state: stateBefore, lastUsedAt: lastUse?.toISOString() ?? null },
    });
    res.status(204).end();
  });

  return r;
}
