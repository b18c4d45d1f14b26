/** Embeds in the console (docs/console-api.md "Embeds"); rules live in services/embeds.ts (S2). */
import type { AppContext } from '../../context.ts';
import { orgAuth } from '../../http/roles.ts';
import { parseBody } from '../../http/validate.ts';
import { changesOf, recordAudit } from '../../services/audit.ts';
import { embedInputSchema, embedUpdateSchema, getEmbedService, serializeEmbed } from '../../services/embeds.ts';
import { param } from './params.ts';
import { ApiRoutes } from './routes.ts';

export function embedRoutes(ctx: AppContext): ApiRoutes {
  const r = new ApiRoutes();
  const embeds = getEmbedService(ctx);

  r.get('/orgs/:org/embeds', 'embeds.read', async (_req, res) => {
    const list = await embeds.listEmbeds(orgAuth(res).organization.id);
    res.json({ embeds: list.map(serializeEmbed) });
  });

  r.post('/orgs/:org/embeds', 'embeds.write', async (req, res) => {
    const auth = orgAuth(res);
    const body = parseBody(embedInputSchema, req);
    const embed = await embeds.createEmbed(auth.organization.id, body);
    await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'embed.create', targetType: 'embed', targetId: embed.id, detail: { name: embed.name, satelliteIds: embed.satelliteIds, apiKeyId: embed.apiKeyId } });
    res.status(201).json({ embed: serializeEmbed(embed) });
  });

  r.patch('/orgs/:org/embeds/:id', 'embeds.write', async (req, res) => {
    const auth = orgAuth(res);
    const body = parseBody(embedUpdateSchema, req);
    const before = serializeEmbed(await embeds.getEmbed(auth.organization.id, param(req, 'id')));
    const embed = await embeds.updateEmbed(auth.organization.id, before.id, body);
    const after = serializeEmbed(embed);
    // Display options are compared one by one, so "theme: light → dark" rather than the whole object.
    const changes = {
      ...changesOf({ name: before.name, satelliteIds: before.satelliteIds, apiKeyId: before.apiKeyId }, { name: after.name, satelliteIds: after.satelliteIds, apiKeyId: after.apiKeyId }),
      ...changesOf(before.options, after.options),
    };
    if (Object.keys(changes).length > 0) {
      await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'embed.update', targetType: 'embed', targetId: embed.id, detail: { name: embed.name, changes } });
    }
    res.json({ embed: serializeEmbed(embed) });
  });

  r.delete('/orgs/:org/embeds/:id', 'embeds.write', async (req, res) => {
    const auth = orgAuth(res);
    const embed = await embeds.getEmbed(auth.organization.id, param(req, 'id'));
    await embeds.deleteEmbed(auth.organization.id, embed.id);
    await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'embed.delete', targetType: 'embed', targetId: embed.id, detail: { name: embed.name } });
    res.status(204).end();
  });

  return r;
}
