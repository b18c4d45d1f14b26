/**
 * Audit trail: who did what to an organization's keys, members, satellites and element sets.
 *
 *   recordAudit(ctx, { organizationId, actorUserId?, actorKeyId?, action, targetType, targetId, detail })
 *   listActivity(ctx, organizationId, { before?, limit? })  (newest first, for GET /api/orgs/:org/activity)
 *
 * Actions are dotted verbs: org.create, org.rename, org.transfer, member.invite, member.invite-revoke,
 * member.join, member.role, member.remove, key.create, key.update, key.rotate, key.revoke, key.delete,
 * satellite.create, satellite.update, satellite.delete, element-set.upload, embed.create,
 * embed.update, embed.delete, billing.plan, webhook.create, webhook.update, webhook.delete, webhook.rotate-secret.
 * `detail` never holds secrets (no key text, no tokens, no webhook signing secrets).
 */
import type { Transaction } from 'sequelize';
import { Op } from 'sequelize';
import type { AppContext } from '../context.ts';
import { ApiKey, AuditEvent, User } from '../models/index.ts';
import type { ActivityEvent as ActivityEventOfContract } from '@nadirline/shared/contract';

export interface AuditInput {
  organizationId: string;
  actorUserId?: string | null;
  actorKeyId?: string | null;
  action: string;
  targetType: string;
  targetId?: string | null;
  detail?: Record<string, unknown>;
}

export type AuditChanges = Record<string, { from: unknown; to: unknown }>;

/**
 * The fields whose value differs between `before` and `after`, each as `{ from, to }` (compared
 * as JSON, so lists and dates compare by value). Fields equal on both sides are left out, so an
 * event says only what changed.
 */
export function changesOf<T extends Record<string, unknown>>(before: T, after: T, fields: ReadonlyArray<keyof T & string> = Object.keys({ ...before, ...after })): AuditChanges {
  const out: AuditChanges = {};
  const norm = (v: unknown) => JSON.stringify(v === undefined ? null : v);
  for (const f of fields) if (norm(before[f]) !== norm(after[f])) out[f] = { from: before[f] ?? null, to: after[f] ?? null };
  return out;
}

export async function recordAudit(
  _ctx: Pick<AppContext, 'sequelize'> | AppContext,
  input: AuditInput,
  options: { transaction?: Transaction } = {},
): Promise<AuditEvent> {
  return AuditEvent.create(
    {
      organizationId: input.organizationId,
      actorUserId: input.actorUserId ?? null,
      actorKeyId: input.actorKeyId ?? null,
      action: input.action,
      targetType: input.targetType,
      targetId: input.targetId ?? null,
      detail: input.detail ?? {},
    },
    options.transaction ? { transaction: options.transaction } : {},
  );
}

export type ActivityActor = ActivityEventOfContract['actor'];

/** One entry of GET /api/orgs/:org/activity: the contract's ActivityEvent. */
export type ActivityEvent = ActivityEventOfContract;

/** Newest first; `before` is an event id for paging (events with a smaller id). */
export async function listActivity(
  _ctx: AppContext,
  organizationId: string,
  opts: { before?: number; limit?: number } = {},
): Promise<ActivityEvent[]> {
  const limit = Math.min(Math.max(opts.limit ?? 50, 1), 200);
  const where: Record<string | symbol, unknown> = { organizationId };
  if (opts.before !== undefined) where['id'] = { [Op.lt]: opts.before };
  const events = await AuditEvent.findAll({ where, order: [['id', 'DESC']], limit });
  const userIds = [...new Set(events.map((e) => e.actorUserId).filter((v): v is string => !!v))];
  const keyIds = [...new Set(events.map((e) => e.actorKeyId).filter((v): v is string => !!v))];
  const users = userIds.length ? await User.findAll({ where: { id: userIds }, attributes: ['id', 'name', 'email'] }) : [];
  const keys = keyIds.length ? await ApiKey.findAll({ where: { id: keyIds }, attributes: ['id', 'name'] }) : [];
  const userById = new Map(users.map((u) => [u.id, u]));
  const keyById = new Map(keys.map((k) => [k.id, k]));
  return events.map((e) => {
    let actor: ActivityActor = null;
    const u = e.actorUserId ? userById.get(e.actorUserId) : undefined;
    const k = e.actorKeyId ? keyById.get(e.actorKeyId) : undefined;
    if (u) actor = { name: u.name, email: u.email };
    else if (k) actor = { keyName: k.name };
    else if (e.actorKeyId) actor = { keyName: '(deleted key)' };
    return {
      id: e.id,
      action: e.action,
      actor,
      targetType: e.targetType,
      targetId: e.targetId,
      detail: e.detail,
      createdAt: new Date(e.createdAt).toISOString(),
    };
  });
}
