/**
 * Notices by e-mail (fake SMTP) and in the console, driven by scheduled jobs on a clock the test
 * controls: quota at 80 % and 100 % once per threshold, the daily digest of element sets that
 * turned Aging or Stale, payment failed and plan changed to owners, and each member's switches.
 * The scheduled work runs once across two app instances sharing one database (job_leases).
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { Membership, UsageDaily } from '@nadirline/server/models/index.ts';
import { runDueJobs } from '@nadirline/server/services/scheduler.ts';
import { getKeyService } from '@nadirline/server/services/keys.ts';
import { getSatelliteService } from '@nadirline/server/services/satellites.ts';
import { leoTle } from '../support/app.ts';
import { signUpAndVerify, uniqueEmail, type Person } from './console-api.harness.ts';
import { TEST_CARD_OK, startBillingApp, type BillingApp } from './billing.harness.ts';

let b: BillingApp;
let editor: Person;
let viewerEmail: string;
let keyId: string;

async function usage(day: string, count: number): Promise<void> {
  await UsageDaily.create({ organizationId: b.orgId, apiKeyId: keyId, endpoint: 'GET /v1/satellites/{id}/track', day, count });
}

const DAY = 86_400_000;
// A fixed moment: 2030-05-20 06:00 UTC.
const T0 = Date.UTC(2030, 4, 20, 6, 0, 0);

async function mailsTo(email: string, subject: RegExp) {
  return (await b.t.mailbox()).filter((m) => m.to === email && subject.test(m.subject));
}

beforeEach(async () => {
  b = await startBillingApp();
  editor = await signUpAndVerify(b.t, { name: 'Edda Editor' });
  await Membership.create({ id: `m_ed_${editor.userId}`, userId: editor.userId, organizationId: b.orgId, role: 'editor' });
  const viewer = await signUpAndVerify(b.t, { name: 'Vic Viewer', email: uniqueEmail('viewer') });
  viewerEmail = viewer.email;
  await Membership.create({ id: `m_vw_${viewer.userId}`, userId: viewer.userId, organizationId: b.orgId, role: 'viewer' });
  keyId = (await getKeyService(b.t.context).createKey({ organizationId: b.orgId, kind: 'server', name: 'Pipeline' })).key.id;
});
afterEach(async () => {
  await b.close();
});

describe('quota notices', () => {
  it('tells owners and admins at 80 % and at 100 %, each once per month', async () => {
    b.setNow(T0);
    await usage('2030-05-03', 79_000);
    expect(await runDueJobs(b.t.context, new Date(T0))).toContain('quota-notices');
    expect(await mailsTo(b.owner.email, /used/)).toHaveLength(0);

    await usage('2030-05-19', 2_000);
    await runDueJobs(b.t.context, new Date(T0 + 10 * 60_000));
    const at80 = await mailsTo(b.owner.email, /has used 80 % of its Nadirline requests for 2030-05/);
    expect(at80).toHaveLength(1);
    expect(at80[0]!.text).toContain('81,000 of the 100,000 requests its Starter plan includes');
    expect(await mailsTo(editor.email, /used/)).toHaveLength(0);
    expect(await mailsTo(viewerEmail, /used/)).toHaveLength(0);

    // Later slots in the same month: no repeat. At 100 %: one more.
    await runDueJobs(b.t.context, new Date(T0 + 20 * 60_000));
    expect(await mailsTo(b.owner.email, /used 80 %/)).toHaveLength(1);
    await usage('2030-05-20', 19_000);
    await runDueJobs(b.t.context, new Date(T0 + 30 * 60_000));
    await runDueJobs(b.t.context, new Date(T0 + 40 * 60_000));
    const full = await mailsTo(b.owner.email, /has used all of its Nadirline requests/);
    expect(full).toHaveLength(1);
    expect(full[0]!.text).toMatch(/resets on 2030-06-01/);

    const listed = (await b.owner.browser.get(b.api('/notices')).expect(200)).body.notices as Array<{ kind: string; detail: { threshold: number } }>;
    expect(listed.map((n) => [n.kind, n.detail.threshold])).toEqual([['quota', 100], ['quota', 80]]);
    // A viewer does not receive quota notices, so does not see them listed either.
    const viewerBrowser = b.t.browser();
    await viewerBrowser.signIn(viewerEmail);
    expect((await viewerBrowser.get(b.api('/notices')).expect(200)).body.notices).toEqual([]);
  });

  it('runs once when several holders race for the same period (the job_leases UPDATE decides)', async () => {
    await usage('2030-05-03', 85_000);
    const at = new Date(T0);
    const runs = await Promise.all(['proc-a', 'proc-b', 'proc-c'].map((holder) => runDueJobs(b.t.context, at, holder)));
    expect(runs.flat().filter((n) => n === 'quota-notices')).toHaveLength(1);
    expect(await mailsTo(b.owner.email, /used 80 %/)).toHaveLength(1);
    // The next ten-minute slot is a new period: any holder runs it.
    expect(await runDueJobs(b.t.context, new Date(T0 + 10 * 60_000), 'proc-b')).toContain('quota-notices');
  });
});

describe('the daily stale digest', () => {
  it('lists to editors the satellites whose set turned Aging or Stale, once a day', async () => {
    const sats = getSatelliteService(b.t.context);
    // Epochs 3.2 days (turned Aging since yesterday), 14.5 days (turned Stale), 1 day (fresh) and 8 days (Aging for days) before T0.
    const make = async (name: string, ageDays: number, cat: string) => sats.createSatellite(b.orgId, { name, elementsText: leoTle({ epochMs: Math.floor((T0 - ageDays * DAY) / 60_000) * 60_000, catalogNumber: cat }) }, {});
    await make('Kestrel-1', 3.2, '90001');
    await make('Kestrel-2', 14.5, '90002');
    await make('Fresh-1', 1, '90003');
    await make('Old-1', 8, '90004');
    expect(await runDueJobs(b.t.context, new Date(T0))).toContain('stale-digest');
    const digest = await mailsTo(editor.email, /satellites need a newer element set/);
    expect(digest).toHaveLength(1);
    const text = digest[0]!.text;
    expect(text).toMatch(/Kestrel-1 \(90001\): element set 3\.2 days old, now Aging/);
    expect(text).toMatch(/Kestrel-2 \(90002\): element set 14\.5 days old, now Stale/);
    expect(text).not.toContain('Fresh-1');
    expect(text).not.toContain('Old-1');
    expect(text).toContain('upload a newer TLE or OMM');
    expect(await mailsTo(viewerEmail, /newer element set/)).toHaveLength(0);
    // Same day again: nothing new. The editor switches the digest off; the next day's is not mailed to them.
    expect(await runDueJobs(b.t.context, new Date(T0 + 3_600_000))).not.toContain('stale-digest');
    await editor.browser.patch('/api/me/notices', { 'stale-digest': false }).expect(200);
    const prefs = (await editor.browser.get('/api/me/notices').expect(200)).body.preferences as Array<{ kind: string; email: boolean }>;
    expect(prefs.find((p) => p.kind === 'stale-digest')?.email).toBe(false);
    // The next day only Kestrel-3 changed class.
    await make('Kestrel-3', 2.5, '90005'); // 3.5 days old on the next day: turned Aging
    expect(await runDueJobs(b.t.context, new Date(T0 + DAY))).toContain('stale-digest');
    expect(await mailsTo(editor.email, /newer element set/)).toHaveLength(1);
    const ownerDigests = await mailsTo(b.owner.email, /newer element set/);
    expect(ownerDigests).toHaveLength(2);
    expect(ownerDigests[1]!.subject).toMatch(/^1 satellite needs/);
  });

  it('refuses an unknown kind in the switches', async () => {
    const res = await editor.browser.patch('/api/me/notices', { 'everything': false });
    expect(res.status).toBe(400);
    expect(res.headers['content-type']).toMatch(/problem\+json/);
  });
});

describe('payment notices', () => {
  it('mails the owner when a payment fails and when the plan changes, and the grace job falls back to Starter', async () => {
    const url = (await b.owner.browser.post(b.api('/billing/checkout'), { plan: 'mission' }).expect(200)).body.url as string;
    await b.pay(url, TEST_CARD_OK);
    expect(await mailsTo(b.owner.email, /is now on the Nadirline Mission plan/)).toHaveLength(1);
    b.setNow(T0);
    b.fake.renew([...b.fake.store.subscriptions.keys()][0]!, 'failed');
    await b.fake.idle();
    const failed = await mailsTo(b.owner.email, /A payment for .* Nadirline plan failed/);
    expect(failed).toHaveLength(1);
    expect(failed[0]!.text).toContain('The paid plan stays until 2030-05-27');
    expect(await mailsTo(editor.email, /payment/i)).toHaveLength(0);

    expect(await runDueJobs(b.t.context, new Date(T0 + 6 * DAY))).toContain('payments-grace');
    expect((await b.owner.browser.get(b.api('/billing')).expect(200)).body.plan).toBe('mission');
    await runDueJobs(b.t.context, new Date(T0 + 7 * DAY + 600_000));
    expect((await b.owner.browser.get(b.api('/billing')).expect(200)).body.plan).toBe('starter');
    const back = await mailsTo(b.owner.email, /is now on the Nadirline Starter plan/);
    expect(back).toHaveLength(1);
    expect(back[0]!.text).toContain('stayed overdue past the grace period');
  });
});
