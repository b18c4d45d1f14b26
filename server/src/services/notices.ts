/**
 * Notices to members, by e-mail and in the console.
 *
 *   NOTICE_KINDS                               kind -> label and the roles that receive it
 *   notify(ctx, notice) -> Promise<boolean>    records the notice once per dedupe key (false when
 *                                              it was told already) and mails every member of a
 *                                              receiving role who has not switched the kind off
 *   listNotices(orgId, role)                   the console's list, newest first
 *   noticePreferences(userId) / setNoticePreferences(userId, { kind: boolean })
 *   registerNoticeJobs(ctx)                    the scheduled checks and the billing listeners:
 *     quota-notices   every 10 minutes: 80 % and 100 % of the month's quota, once per threshold,
 *                     plan and month, to owners and admins
 *     stale-digest    once per UTC day: satellites whose element set turned Aging or Stale since
 *                     the day before, with age and what to do, to owners, admins and editors
 *     payments-grace  every 10 minutes: past-due subscriptions whose grace ended fall back to Starter
 *     plan changed / payment failed (from services/billing.ts) to owners
 */
import { stalenessOf, type Staleness } from '@nadirline/shared';
import { Op, UniqueConstraintError } from 'sequelize';
import type { AppContext } from '../context.ts';
import { ElementSetRecord, Membership, Notice, NoticePreference, Organization, Satellite, UsageDaily, User, type Role } from '../models/index.ts';
import { onPaymentFailed, onPlanChanged, sweepGrace } from './billing.ts';
import { getMailService } from './mail.ts';
import { monthKey, monthStart, nextMonthStart, planOf } from './quota.ts';
import { registerJob, tenMinuteSlot, utcDayOf } from './scheduler.ts';
import { emitEvent } from './webhooks.ts';

export const NOTICE_KINDS = [
  { kind: 'quota', label: 'The organization used 80 % or all of its monthly quota', roles: ['owner', 'admin'] },
  { kind: 'stale-digest', label: 'Daily list of satellites whose element set turned Aging or Stale', roles: ['owner', 'admin', 'editor'] },
  { kind: 'payment-failed', label: 'A payment for the plan failed', roles: ['owner'] },
  { kind: 'plan-changed', label: 'The plan changed', roles: ['owner'] },
] as const satisfies ReadonlyArray<{ kind: string; label: string; roles: readonly Role[] }>;

export type NoticeKind = (typeof NOTICE_KINDS)[number]['kind'];
export const NOTICE_KIND_IDS = NOTICE_KINDS.map((k) => k.kind) as [NoticeKind, ...NoticeKind[]];

/** Thresholds of the monthly quota that are told, in percent. */
export const QUOTA_THRESHOLDS = [80, 100] as const;

export interface NoticeInput {
  organizationId: string;
  kind: NoticeKind;
  dedupeKey: string;
  subject: string;
  /** Paragraphs of the message. */
  lines: string[];
  /** One link, written out in full too. */
  link: string;
  detail?: Record<string, unknown>;
}

export interface NoticeJson {
  id: number;
  kind: NoticeKind;
  subject: string;
  body: string;
  createdAt: string;
  detail: Record<string, unknown>;
}

function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);
}

function rolesFor(kind: NoticeKind): readonly Role[] {
  return NOTICE_KINDS.find((k) => k.kind === kind)?.roles ?? [];
}

async function recipients(organizationId: string, kind: NoticeKind): Promise<User[]> {
  const members = await Membership.findAll({ where: { organizationId, role: { [Op.in]: [...rolesFor(kind)] } } });
  const userIds = members.map((m) => m.userId);
  if (userIds.length === 0) return [];
  const off = new Set((await NoticePreference.findAll({ where: { userId: { [Op.in]: userIds }, kind, email: false } })).map((p) => p.userId));
  return User.findAll({ where: { id: { [Op.in]: userIds.filter((id) => !off.has(id)) } }, order: [['email', 'ASC']] });
}

export async function notify(ctx: AppContext, input: NoticeInput): Promise<boolean> {
  const body = input.lines.join('\n\n');
  try {
    await Notice.create({ organizationId: input.organizationId, kind: input.kind, dedupeKey: input.dedupeKey, subject: input.subject, body, detail: input.detail ?? {} });
  } catch (err) {
    if (err instanceof UniqueConstraintError) return false;
    throw err;
  }
  const mail = await getMailService(ctx);
  const footer = 'You get this because of your role in the organization. Switch this kind of message off on your profile page in the Nadirline console.';
  for (const user of await recipients(input.organizationId, input.kind)) {
    const text = [`Hello ${user.name},`, ...input.lines, input.link, footer, 'Nadirline'].join('\n\n');
    const html = [
      '<!doctype html><html><body style="font-family: sans-serif; line-height: 1.5">',
      `<p>Hello ${escapeHtml(user.name)},</p>`,
      ...input.lines.map((l) => `<p style="white-space: pre-line">${escapeHtml(l)}</p>`),
      `<p><a href="${escapeHtml(input.link)}">${escapeHtml(input.link)}</a></p>`,
      `<p style="font-size: 90%; color: #555">${escapeHtml(footer)}</p>`,
      '<p>Nadirline</p></body></html>',
    ].join('\n');
    try {
      await mail.send({ to: user.email, subject: input.subject, text, html });
    } catch (err) {
      ctx.logger.error({ err, kind: input.kind }, 'notice e-mail not sent');
    }
  }
  return true;
}

export async function listNotices(organizationId: string, role: Role, limit = 20): Promise<NoticeJson[]> {
  const kinds = NOTICE_KINDS.filter((k) => (k.roles as readonly Role[]).includes(role)).map((k) => k.kind);
  const rows = await Notice.findAll({ where: { organizationId, kind: { [Op.in]: kinds } }, order: [['createdAt', 'DESC'], ['id', 'DESC']], limit });
  return rows.map((n) => ({ id: n.id, kind: n.kind as NoticeKind, subject: n.subject, body: n.body, createdAt: new Date(n.createdAt).toISOString(), detail: n.detail }));
}

export interface NoticePreferenceJson {
  kind: NoticeKind;
  label: string;
  roles: readonly Role[];
  email: boolean;
}

export async function noticePreferences(userId: string): Promise<NoticePreferenceJson[]> {
  const rows = await NoticePreference.findAll({ where: { userId } });
  const byKind = new Map(rows.map((r) => [r.kind, r.email]));
  return NOTICE_KINDS.map((k) => ({ kind: k.kind, label: k.label, roles: k.roles, email: byKind.get(k.kind) ?? true }));
}

export async function setNoticePreferences(userId: string, changes: Partial<Record<NoticeKind, boolean>>): Promise<NoticePreferenceJson[]> {
  for (const [kind, email] of Object.entries(changes) as Array<[NoticeKind, boolean | undefined]>) {
    if (email === undefined) continue;
    const row = await NoticePreference.findOne({ where: { userId, kind } });
    if (row) await row.update({ email });
    else {
      try {
        await NoticePreference.create({ userId, kind, email });
      } catch (err) {
        if (!(err instanceof UniqueConstraintError)) throw err;
        await NoticePreference.update({ email }, { where: { userId, kind } });
      }
    }
  }
  return noticePreferences(userId);
}

// ---------------------------------------------------------------------------------------------
// The checks

const fmt = (n: number) => n.toLocaleString('en');

export async function checkQuotaThresholds(ctx: AppContext, now: Date): Promise<number> {
  const month = monthKey(now);
  const from = monthStart(now).toISOString().slice(0, 10);
  const to = new Date(nextMonthStart(now).getTime() - 1).toISOString().slice(0, 10);
  const totals = (await UsageDaily.findAll({
    attributes: ['organizationId', [ctx.sequelize.fn('SUM', ctx.sequelize.col('count')), 'total']],
    where: { day: { [Op.between]: [from, to] } },
    group: ['organizationId'],
    raw: true,
  })) as unknown as Array<{ organizationId: string; total: number | string }>;
  let sent = 0;
  for (const row of totals) {
    const org = await Organization.findByPk(row.organizationId);
    if (!org) continue;
    const plan = planOf(org.plan);
    const used = Number(row.total);
    for (const pct of QUOTA_THRESHOLDS) {
      if (used < (plan.monthlyRequests * pct) / 100) continue;
      const all = pct >= 100;
      const told = await notify(ctx, {
        organizationId: org.id,
        kind: 'quota',
        dedupeKey: `quota:${org.id}:${month}:${plan.id}:${pct}`,
        subject: all ? `${org.name} has used all of its Nadirline requests for ${month}` : `${org.name} has used ${pct} % of its Nadirline requests for ${month}`,
        lines: [
          `${org.name} has made ${fmt(used)} of the ${fmt(plan.monthlyRequests)} requests its ${plan.name} plan includes for ${month} (UTC).`,
          all
            ? `Widgets and API calls now answer "quota reached" until the quota resets on ${nextMonthStart(now).toISOString().slice(0, 10)}. The owner can move to a larger plan on the Plan page; the new quota applies at once.`
            : `At this pace the quota may run out before it resets on ${nextMonthStart(now).toISOString().slice(0, 10)}. The Usage page shows which keys make the calls; the owner can move to a larger plan on the Plan page.`,
        ],
        link: `${ctx.config.publicUrl}/o/${encodeURIComponent(org.id)}/plan`,
        detail: { threshold: pct, used, limit: plan.monthlyRequests, plan: plan.id, month },
      });
      if (told) sent += 1;
      // Webhooks out: once per threshold, plan and month (the dedupe key), like the notice.
      await emitEvent(ctx, {
        organizationId: org.id,
        type: 'quota.threshold',
        dedupeKey: `quota.threshold:${org.id}:${month}:${plan.id}:${pct}`,
        data: { threshold: pct, used, limit: plan.monthlyRequests, plan: plan.id, month, resetsAt: nextMonthStart(now).toISOString() },
      });
    }
  }
  return sent;
}

const RANK: Record<Staleness, number> = { fresh: 0, aging: 1, stale: 2 };

export async function sendStaleDigests(ctx: AppContext, now: Date): Promise<number> {
  const day = utcDayOf(now);
  const sats = await Satellite.findAll({ where: { currentElementSetId: { [Op.ne]: null } }, include: [{ model: ElementSetRecord, as: 'currentElementSet', attributes: ['id', 'epoch'] }], order: [['name', 'ASC']] });
  const byOrg = new Map<string, Array<{ id: string; name: string; catalogNumber: string | null; ageDays: number; staleness: Staleness; elementSetId: string; epoch: string }>>();
  for (const sat of sats) {
    const es = (sat as Satellite & { currentElementSet?: ElementSetRecord }).currentElementSet;
    if (!es) continue;
    const ageDays = (now.getTime() - new Date(es.epoch).getTime()) / 86_400_000;
    const today = stalenessOf(ageDays);
    const yesterday = stalenessOf(ageDays - 1);
    if (RANK[today] <= RANK[yesterday]) continue;
    const list = byOrg.get(sat.organizationId) ?? [];
    list.push({ id: sat.id, name: sat.name, catalogNumber: sat.catalogNumber, ageDays, staleness: today, elementSetId: es.id, epoch: new Date(es.epoch).toISOString() });
    byOrg.set(sat.organizationId, list);
  }
  let sent = 0;
  for (const [orgId, list] of byOrg) {
    const org = await Organization.findByPk(orgId);
    if (!org) continue;
    const lines = list.map((s) => `• ${s.name}${s.catalogNumber ? ` (${s.catalogNumber})` : ''}: element set ${s.ageDays.toFixed(1)} days old, now ${s.staleness === 'stale' ? 'Stale' : 'Aging'}. ${ctx.config.publicUrl}/o/${encodeURIComponent(orgId)}/satellites/${encodeURIComponent(s.id)}`);
    const told = await notify(ctx, {
      organizationId: orgId,
      kind: 'stale-digest',
      dedupeKey: `stale-digest:${orgId}:${day}`,
      subject: `${list.length} ${list.length === 1 ? 'satellite needs' : 'satellites need'} a newer element set (${org.name})`,
      lines: [
        `Since yesterday the element ${list.length === 1 ? 'set of this satellite' : 'sets of these satellites'} in ${org.name} turned Aging (3 days or older) or Stale (14 days or older):`,
        lines.join('\n'),
        'What to do: upload a newer TLE or OMM on the satellite\u2019s page, or have your flight-dynamics pipeline push one with a server key. Until then readers see a caution that positions drift as the set ages. Positions are for outreach and planning, never for collision avoidance or navigation.',
      ],
      link: `${ctx.config.publicUrl}/o/${encodeURIComponent(orgId)}/satellites`,
      detail: { day, satellites: list.map((s) => ({ id: s.id, name: s.name, ageDays: Math.round(s.ageDays * 10) / 10, staleness: s.staleness })) },
    });
    if (told) sent += 1;
    // Webhooks out: the same list, once per organization and day.
    await emitEvent(ctx, {
      organizationId: orgId,
      type: 'element-set.stale',
      dedupeKey: `element-set.stale:${orgId}:${day}`,
      data: {
        day,
        satellites: list.map((s) => ({ id: s.id, name: s.name, catalogNumber: s.catalogNumber, elementSetId: s.elementSetId, epoch: s.epoch, ageDays: Math.round(s.ageDays * 10) / 10, staleness: s.staleness })),
      },
    });
  }
  return sent;
}

declare module '../context.ts' {
  interface AppServices {
    noticesRegistered?: boolean;
  }
}

export function registerNoticeJobs(ctx: AppContext): void {
  if (ctx.services.noticesRegistered) return;
  ctx.services.noticesRegistered = true;
  registerJob(ctx, { name: 'payments-grace', periodOf: tenMinuteSlot, run: async (c, now) => void (await sweepGrace(c, now)) });
  registerJob(ctx, { name: 'quota-notices', periodOf: tenMinuteSlot, run: async (c, now) => void (await checkQuotaThresholds(c, now)) });
  registerJob(ctx, { name: 'stale-digest', periodOf: utcDayOf, run: async (c, now) => void (await sendStaleDigests(c, now)) });

  onPlanChanged(ctx, async (change) => {
    const org = await Organization.findByPk(change.organizationId);
    if (!org) return;
    const from = planOf(change.from);
    const to = planOf(change.to);
    const why: Record<string, string> = {
      'grace-ended': 'The payment stayed overdue past the grace period, so the organization is back on the free plan. Paying the open invoice on the Plan page ("Manage billing") restores the paid plan.',
      'subscription-deleted': 'The paid subscription ended.',
      'payment-recovered': 'The overdue payment came in.',
    };
    await notify(ctx, {
      organizationId: org.id,
      kind: 'plan-changed',
      dedupeKey: `plan-changed:${org.id}:${change.from}:${change.to}:${Date.now()}:${Math.random().toString(36).slice(2, 8)}`,
      subject: `${org.name} is now on the Nadirline ${to.name} plan`,
      lines: [`${org.name} moved from the ${from.name} plan to the ${to.name} plan: ${fmt(to.monthlyRequests)} requests per month from now on.`, ...(why[change.reason] ? [why[change.reason] as string] : [])],
      link: `${ctx.config.publicUrl}/o/${encodeURIComponent(org.id)}/plan`,
      detail: { ...change },
    });
  });

  onPaymentFailed(ctx, async (n) => {
    const org = await Organization.findByPk(n.organizationId);
    if (!org) return;
    const amount = new Intl.NumberFormat('en', { style: 'currency', currency: n.invoice.currency }).format(n.invoice.amountDue / 100);
    await notify(ctx, {
      organizationId: org.id,
      kind: 'payment-failed',
      dedupeKey: `payment-failed:${n.invoice.id}:${n.graceUntil ?? ''}`,
      subject: `A payment for ${org.name}\u2019s Nadirline plan failed`,
      lines: [
        `The payment of ${amount} for invoice ${n.invoice.number ?? n.invoice.id} did not go through.`,
        `The paid plan stays until ${n.graceUntil ? n.graceUntil.slice(0, 10) : 'the grace period ends'}; after that the organization falls back to the free Starter plan. Update the card under "Manage billing" on the Plan page.`,
      ],
      link: `${ctx.config.publicUrl}/o/${encodeURIComponent(org.id)}/plan`,
      detail: { invoiceId: n.invoice.id, graceUntil: n.graceUntil },
    });
  });
}
