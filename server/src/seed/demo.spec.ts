import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp, type NadirlineApp } from '../app.ts';
import { loadConfig } from '../config.ts';
import { listActivity } from '../services/audit.ts';
import { DEMO_ORG_ID, seedDemo } from './demo.ts';
import { Body, Equator, Observer } from 'astronomy-engine';
import type { ElementSet } from '@nadirline/shared';
import { ElementSetRecord, Satellite } from '../models/index.ts';

let t: NadirlineApp;
let dir: string;

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'nadirline-seed-'));
  t = await createApp(loadConfig({ NODE_ENV: 'test', SQLITE_FILE: path.join(dir, 'seed.sqlite'), LOG_LEVEL: 'silent', DEMO: 'true', PORT: '8080' }));
});
afterAll(async () => {
  await t?.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('the demo seed’s activity log', () => {
  it('records what the first run made, by the people whose role allows it, oldest first', async () => {
    await seedDemo(t.context, { port: 8080 });
    const events = (await listActivity(t.context, DEMO_ORG_ID, { limit: 200 })).reverse();
    const lines = events.map((e) => `${e.action} by ${e.actor && 'name' in e.actor ? e.actor.name : '?'}`);
    expect(lines).toEqual([
      ...['Wren Pathfinder', 'Orrery-1', 'Halcyon Relay', 'Tessera GEO'].flatMap(() => ['satellite.create by Ilse Harrow', 'element-set.upload by Ilse Harrow']),
      'key.create by Tobias Venn',
      'key.create by Tobias Venn',
      'embed.create by Ilse Harrow',
    ]);
    expect(events.filter((e) => e.action === 'satellite.create').map((e) => (e.detail as { name: string }).name)).toEqual(['Wren Pathfinder', 'Orrery-1', 'Halcyon Relay', 'Tessera GEO']);
    const upload = events.find((e) => e.action === 'element-set.upload');
    // A short history: 9, 6 and 3 days back and the fresh set.
    expect(upload?.detail).toMatchObject({ satellite: 'Wren Pathfinder', accepted: 4, rejected: 0 });
    expect(events.filter((e) => e.action === 'key.create').map((e) => (e.detail as { kind: string }).kind)).toEqual(['browser', 'server']);
  });

  it('gives every demo satellite a history whose sets continue the orbit', async () => {
    for (const sat of await Satellite.findAll({ where: { organizationId: DEMO_ORG_ID } })) {
      const sets = await ElementSetRecord.findAll({ where: { satelliteId: sat.id }, order: [['epoch', 'ASC']] });
      expect(sets.length, sat.name).toBe(4);
      expect(sets.map((r) => r.continuityClass), sat.name).toEqual([null, 'continues', 'continues', 'continues']);
    }
  });

  it('keeps no key text in the events', async () => {
    const creds = JSON.parse(fs.readFileSync(path.join(dir, 'demo-credentials.json'), 'utf8')) as { browserKey: string; serverKey: string };
    const text = JSON.stringify(await listActivity(t.context, DEMO_ORG_ID, { limit: 200 }));
    expect(text).not.toContain(creds.browserKey);
    expect(text).not.toContain(creds.serverKey);
  });

  it('adds no events on a second run', async () => {
    const before = (await listActivity(t.context, DEMO_ORG_ID, { limit: 200 })).length;
    const again = await seedDemo(t.context, { port: 8080 });
    expect(again.created).toBe(false);
    expect((await listActivity(t.context, DEMO_ORG_ID, { limit: 200 })).length).toBe(before);
  });
});

describe('the demo satellites', () => {
  it('puts Wren Pathfinder on a dawn-dusk orbit: its ascending node 90 deg east of the Sun (astronomy-engine cross-check)', async () => {
    await seedDemo(t.context, { port: 8080 });
    const wren = await Satellite.findByPk('sat_demo_wren');
    const set = await ElementSetRecord.findByPk(wren!.currentElementSetId!);
    const es = set!.parsed as ElementSet;
    // The Sun's apparent right ascension at the set's epoch, from an independent library.
    const sun = Equator(Body.Sun, new Date(es.epochMs), new Observer(0, 0, 0), true, true);
    const sunRaDeg = sun.ra * 15;
    const separation = (((es.raanDeg - sunRaDeg) % 360) + 360) % 360;
    // Local time of the ascending node 18:00 means 90 deg; a degree of slack covers mean vs apparent Sun.
    expect(Math.abs(separation - 90)).toBeLessThan(1);
  });
});

describe('the demo seed\u2019s payments', () => {
  it('has Ostwick paying for Mission with one paid invoice at the fake provider, and a second organization on Starter', async () => {
    const { Invoice, Organization, Subscription } = await import('../models/index.ts');
    const { DEMO_STARTER_ORG_ID } = await import('./demo-billing.ts');
    await seedDemo(t.context, { port: 8080 });
    const sub = await Subscription.findOne({ where: { organizationId: DEMO_ORG_ID } });
    expect(sub).toMatchObject({ plan: 'mission', status: 'active' });
    expect((await Organization.findByPk(DEMO_ORG_ID))?.plan).toBe('mission');
    const invoices = await Invoice.findAll({ where: { organizationId: DEMO_ORG_ID } });
    expect(invoices.map((i) => [i.status, i.amountPaid, i.currency])).toEqual([['paid', 3900, 'eur']]);
    expect((await Organization.findByPk(DEMO_STARTER_ORG_ID))?.plan).toBe('starter');
    // The fake forgets on restart; a later seed puts the subscription back under the stored ids.
    const fake = t.context.services.payments!.fake!;
    fake.store.subscriptions.clear();
    await seedDemo(t.context, { port: 8080 });
    expect(fake.store.subscriptions.get(sub!.providerSubscriptionId!)?.['status']).toBe('active');
    expect(await Subscription.count({ where: { organizationId: DEMO_ORG_ID } })).toBe(1);
  });
});
