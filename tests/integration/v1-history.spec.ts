/**
 * Time and history over real HTTP: answers from the element set in force at the asked time,
 * tracks and passes split where the set changes, AIAA 2006-6753 reference vectors at their own
 * epochs through the public API, continuity checks on upload, the element-set history, held
 * sets, sky paths and pass calendars (parsed with ical.js and compared event by event with
 * /passes).
 */
import ICAL from 'ical.js';
import request from 'supertest';
import { sgp4, twoline2satrec } from 'satellite.js';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { AIAA_2006_6753_CASES, cartesianToGeodetic, fromKeplerian, gmstRad, parseTle, toTle, type ElementSet } from '@nadirline/shared';
import { Organization } from '@nadirline/server/models/index.ts';
import { getSatelliteService } from '@nadirline/server/services/satellites.ts';
import { PAGE_ORIGIN, startKeyedApp, type KeyedTestApp } from '../support/app.ts';

let t: KeyedTestApp;
const auth = () => ({ Authorization: `Bearer ${t.serverKey}` });
const MIN = 60_000;
const DAY = 86_400_000;
const RAD = 180 / Math.PI;

/** An invented 600 km polar orbit without drag (so a clean successor follows from SGP4's secular rates alone). */
function set(epochMs: number, changes: Partial<{ meanAnomalyDeg: number; raanDeg: number; argPerigeeDeg: number; semiMajorAxisKm: number; inclinationDeg: number }> = {}): ElementSet {
  const r = fromKeplerian({
    epoch: new Date(epochMs).toISOString(),
    name: 'HISTORY SAT',
    catalogNumber: '99850',
    intlDesignator: '25850A',
    semiMajorAxisKm: 6378.137 + 600,
    eccentricity: 0.0012,
    inclinationDeg: 97.8,
    raanDeg: 40,
    argPerigeeDeg: 90,
    meanAnomalyDeg: 0,
    bstar: 0,
    ...changes,
  });
  if (!r.ok) throw new Error(r.message);
  // As stored: the set goes up as TLE text, whose columns round the elements and the epoch.
  const back = parseTle(toTle(r.elementSet).text);
  if (!back.ok) throw new Error(back.message);
  return back.elementSet;
}

/** The mean elements a clean successor carries: moved by SGP4's secular rates (satrec mdot, nodedot, argpdot; AIAA 2006-6753 sgp4init). */
function successor(prev: ElementSet, days: number, changes: Parameters<typeof set>[1] = {}): ElementSet {
  const tle = toTle(prev).text.split('\n').filter((l) => /^[12] /.test(l));
  const s = twoline2satrec(tle[0] as string, tle[1] as string);
  const min = days * 1440;
  const wrap = (d: number) => ((d % 360) + 360) % 360;
  return set(prev.epochMs + days * DAY, {
    meanAnomalyDeg: wrap(prev.meanAnomalyDeg + s.mdot * min * RAD),
    raanDeg: wrap(prev.raanDeg + s.nodedot * min * RAD),
    argPerigeeDeg: wrap(prev.argPerigeeDeg + s.argpdot * min * RAD),
    ...changes,
  });
}

const E1 = Math.floor((Date.now() - 10 * DAY) / MIN) * MIN;
const first = set(E1);
const clean = successor(first, 2);
const raised = successor(clean, 3, { semiMajorAxisKm: 6378.137 + 620 });
let satId: string;
const ids: string[] = [];

function upload(es: ElementSet) {
  return request(t.app).post(`/v1/satellites/${satId}/element-sets`).set(auth()).type('text/plain').send(toTle(es).text);
}

beforeAll(async () => {
  t = await startKeyedApp();
  const res = await request(t.app).post('/v1/satellites').set(auth()).send({ name: 'History Sat', elements: toTle(first).text }).expect(201);
  satId = res.body.id;
  ids.push(res.body.current.id);
});
afterAll(async () => {
  await t?.close();
});

describe('continuity on upload (/v1)', () => {
  it('a clean successor continues the orbit, with figures in km and s', async () => {
    const res = await upload(clean).expect(201);
    const c = res.body.report[0].continuity;
    expect(c.classification).toBe('continues');
    expect(c.summary).toBe('continues the orbit');
    expect(c.previousElementSetId).toBe(ids[0]);
    expect(c.spanDays).toBeCloseTo(2, 3);
    expect(c.positionDifferenceKm).toBeLessThan(1);
    expect(Math.abs(c.alongTrackTimingS)).toBeLessThan(0.2);
    expect(res.body.elementSet.continuity.classification).toBe('continues');
    ids.push(res.body.elementSet.id);
  });

  it('agrees with an independent satellite.js computation of the difference', async () => {
    const res = await upload(raised).expect(201);
    const c = res.body.report[0].continuity;
    expect(c.classification).toBe('manoeuvre');
    expect(c.summary).toBe('orbit raised or lowered (manoeuvre likely)');
    ids.push(res.body.elementSet.id);
    const lines = (es: ElementSet) => toTle(es).text.split('\n').filter((l) => /^[12] /.test(l)) as [string, string];
    const a = twoline2satrec(...lines(clean));
    const b = twoline2satrec(...lines(raised));
    const pa = sgp4(a, (raised.epochMs - clean.epochMs) / MIN);
    const pb = sgp4(b, 0);
    if (!pa || !pb) throw new Error('sgp4');
    const d = Math.hypot(pa.position.x - pb.position.x, pa.position.y - pb.position.y, pa.position.z - pb.position.z);
    const rb = Math.hypot(pb.position.x, pb.position.y, pb.position.z);
    const radial = ((pa.position.x - pb.position.x) * pb.position.x + (pa.position.y - pb.position.y) * pb.position.y + (pa.position.z - pb.position.z) * pb.position.z) / rb;
    // TLE text rounds the elements (AIAA 2006-6753 Appendix B columns): agreement to 0.05 km.
    expect(c.positionDifferenceKm).toBeCloseTo(d, 1);
    expect(c.radialKm).toBeCloseTo(radial, 1);
    expect(c.semiMajorAxisChangeKm).toBeGreaterThan(19);
    expect(c.semiMajorAxisChangeKm).toBeLessThan(21);
  });

  it('GET /v1/satellites/{id}/element-sets lists the history with continuity for server keys only', async () => {
    const res = await request(t.app).get(`/v1/satellites/${satId}/element-sets`).set(auth()).expect(200);
    expect(res.body.elementSets.map((e: { id: string }) => e.id)).toEqual([...ids].reverse());
    expect(res.body.elementSets.map((e: { continuity: { classification: string } | null }) => e.continuity?.classification ?? null)).toEqual(['manoeuvre', 'continues', null]);
    expect(res.body.elementSets[0].perigeeAltKm).toBeGreaterThan(res.body.elementSets[1].perigeeAltKm + 15);
    expect(res.body.currentElementSetId).toBe(ids[2]);
    const browser = await request(t.app).get(`/v1/satellites/${satId}/element-sets`).query({ key: t.browserKey }).set('Origin', PAGE_ORIGIN);
    expect(browser.status).toBe(403);
    expect(browser.body.code).toBe('forbidden');
  });
});

describe('answers from the set in force', () => {
  it('position names the set in force: earliest before every epoch, latest at or before t otherwise', async () => {
    const cases: Array<[number, number]> = [
      [E1 - 3 * DAY, 0],
      [E1 + 1 * DAY, 0],
      [clean.epochMs + DAY, 1],
      [raised.epochMs + 3_600_000, 2],
    ];
    for (const [at, i] of cases) {
      const res = await request(t.app).get(`/v1/satellites/${satId}/position`).query({ at: new Date(at).toISOString() }).set(auth()).expect(200);
      expect(res.body.elementSet.id).toBe(ids[i]);
      const epoch = [first, clean, raised][i] as ElementSet;
      expect(res.body.elementSet.epoch).toBe(epoch.epochIso);
      expect(res.body.elementSet.ageDays).toBeCloseTo((at - epoch.epochMs) / DAY, 3);
    }
    const before = await request(t.app).get(`/v1/satellites/${satId}/position`).query({ at: new Date(E1 - 3 * DAY).toISOString() }).set(auth()).expect(200);
    expect(before.body.elementSet.ageDays).toBeCloseTo(-3, 3);
  });

  it('positions answers each satellite from its own set in force', async () => {
    const at = new Date(E1 + DAY).toISOString();
    const res = await request(t.app).get('/v1/positions').query({ ids: `${satId},${t.satellites.leo.id}`, at }).set(auth()).expect(200);
    expect(res.body.positions[0].elementSet.id).toBe(ids[0]);
    expect(res.body.positions[1].elementSet.ageDays).toBeLessThan(0); // the LEO's only set is 2 h old: 9 days before its epoch
  });

  it('a track across a set change is split into parts, each from its own set', async () => {
    const start = Math.floor((clean.epochMs - 30 * MIN) / MIN) * MIN;
    const res = await request(t.app)
      .get(`/v1/satellites/${satId}/track`)
      .query({ start: new Date(start).toISOString(), end: new Date(start + 60 * MIN).toISOString(), step: 60 })
      .set(auth())
      .expect(200);
    expect(res.body.parts.map((p: { elementSet: { id: string } }) => p.elementSet.id)).toEqual([ids[0], ids[1]]);
    const [p0, p1] = res.body.parts;
    expect(p0.firstIndex).toBe(0);
    expect(p1.firstIndex).toBe(p0.count);
    expect(p0.count + p1.count).toBe(res.body.count);
    // Stored epochs are whole milliseconds (the set changes at the epoch's millisecond).
    expect(Date.parse(p1.start)).toBeGreaterThanOrEqual(Math.floor(clean.epochMs));
    expect(Date.parse(p0.end)).toBeLessThan(clean.epochMs);
    expect(res.body.elementSetId).toBe(ids[0]);
    const geo = await request(t.app)
      .get(`/v1/satellites/${satId}/track`)
      .query({ start: new Date(start).toISOString(), end: new Date(start + 60 * MIN).toISOString(), step: 60, format: 'geojson' })
      .set(auth())
      .expect(200);
    const lines = geo.body.features.filter((f: { geometry: { type: string } }) => f.geometry.type === 'MultiLineString');
    expect(lines.map((f: { properties: { elementSetId: string } }) => f.properties.elementSetId)).toEqual([ids[0], ids[1]]);
  });

  it('times further than 365 days from the set in force answer too-far-from-epoch; a year back is no longer refused for being far from now', async () => {
    const far = await request(t.app).get(`/v1/satellites/${satId}/position`).query({ at: new Date(E1 - 400 * DAY).toISOString() }).set(auth());
    expect(far.status).toBe(422);
    expect(far.body.reason).toBe('too-far-from-epoch');
    const ahead = await request(t.app).get(`/v1/satellites/${satId}/position`).query({ at: new Date(raised.epochMs + 364 * DAY).toISOString() }).set(auth());
    expect(ahead.status).toBe(200);
  });
});

describe('AIAA 2006-6753 reference vectors at their own epochs through /v1', () => {
  it('position at each reference time matches the published TEME vector (as geodetic point)', async () => {
    for (const c of AIAA_2006_6753_CASES) {
      const created = await request(t.app).post('/v1/satellites').set(auth()).send({ name: `Reference ${c.catalog}`, elements: `${c.line1}\n${c.line2}` }).expect(201);
      const parsed = parseTle(`${c.line1}\n${c.line2}`);
      if (!parsed.ok) throw new Error(parsed.message);
      for (const st of c.states) {
        const tMs = parsed.elementSet.epochMs + st.tsinceMin * MIN;
        // The API takes whole milliseconds; the published row is at the epoch's microseconds.
        const atMs = Math.round(tMs);
        const res = await request(t.app).get(`/v1/satellites/${created.body.id}/position`).query({ at: new Date(atMs).toISOString() }).set(auth());
        expect(res.status, JSON.stringify(res.body)).toBe(200);
        expect(res.body.elementSet.epoch).toBe(parsed.elementSet.epochIso);
        // Appendix E TEME vector -> geodetic with the engine's own frame conversion at the same instant.
        const g = cartesianToGeodetic(st.r[0], st.r[1], st.r[2], gmstRad(atMs));
        const speed = Math.hypot(...st.v);
        // Up to 0.5 ms of rounding at ~7 km/s moves the point by 4 m: 1e-4 deg and 0.01 km cover it.
        expect(res.body.lat).toBeCloseTo(g.latRad * RAD, 3);
        expect(res.body.lon).toBeCloseTo(g.lonRad * RAD, 3);
        expect(res.body.altKm).toBeCloseTo(g.altKm, 1);
        expect(res.body.speedKmS).toBeCloseTo(speed, 3);
      }
    }
  });
});

describe('held sets (organization setting)', () => {
  it('a set that does not continue waits for confirmation and is not used until confirmed', async () => {
    await Organization.update({ confirmSuspiciousSets: true }, { where: { id: t.orgId } });
    const other = successor(raised, 1, { meanAnomalyDeg: 200, semiMajorAxisKm: 6378.137 + 620 });
    const res = await upload(other).expect(201);
    expect(res.body.report[0].continuity.classification).toBe('does-not-continue');
    expect(res.body.report[0].awaitingConfirmation).toBe(true);
    const heldId = res.body.elementSet.id as string;
    const at = new Date(other.epochMs + 3_600_000).toISOString();
    const before = await request(t.app).get(`/v1/satellites/${satId}/position`).query({ at }).set(auth()).expect(200);
    expect(before.body.elementSet.id).toBe(ids[2]);
    await getSatelliteService(t.context).confirmElementSet(t.orgId, heldId, 'user_none');
    const after = await request(t.app).get(`/v1/satellites/${satId}/position`).query({ at }).set(auth()).expect(200);
    expect(after.body.elementSet.id).toBe(heldId);
    await Organization.update({ confirmSuspiciousSets: false }, { where: { id: t.orgId } });
  });
});

describe('passes: sky paths and calendars', () => {
  const observer = { lat: 47.1, lon: 8.5, altM: 400 };

  it('path=true adds each pass\u2019s sky path from rise to set', async () => {
    const res = await request(t.app).get(`/v1/satellites/${t.satellites.leo.id}/passes`).query({ ...observer, days: 1, path: 'true' }).set(auth()).expect(200);
    expect(res.body.passes.length).toBeGreaterThan(0);
    expect(res.body.elementSet.id).toBeTruthy();
    for (const p of res.body.passes) {
      expect(p.path[0].t).toBe(p.rise.t);
      expect(p.path.at(-1).t).toBe(p.set.t);
      if (!p.inProgressAtStart) expect(p.path[0].elevation).toBeCloseTo(10, 1);
      expect(Math.max(...p.path.map((x: { elevation: number }) => x.elevation))).toBeLessThanOrEqual(p.culmination.elevation + 0.01);
      expect(typeof p.path[1].dark).toBe('boolean');
      expect(Date.parse(p.path[2].t) - Date.parse(p.path[1].t)).toBe(10_000);
    }
    const plain = await request(t.app).get(`/v1/satellites/${t.satellites.leo.id}/passes`).query({ ...observer, days: 1 }).set(auth()).expect(200);
    expect(plain.body.passes[0].path).toBeUndefined();
  });

  it('passes.ics (browser key) parses with ical.js and matches /passes event by event', async () => {
    const q = { ...observer, days: 3, key: t.browserKey };
    const res = await request(t.app).get(`/v1/satellites/${t.satellites.leo.id}/passes.ics`).query(q).set('Origin', PAGE_ORIGIN).expect(200);
    expect(res.headers['content-type']).toMatch(/^text\/calendar/);
    expect(res.headers['cache-control']).toMatch(/max-age=\d+/);
    expect(res.headers['etag']).toBeTruthy();
    const text = res.text;
    expect(text.split('\r\n').every((l) => Buffer.byteLength(l) <= 75)).toBe(true);
    const cal = new ICAL.Component(ICAL.parse(text));
    const events = cal.getAllSubcomponents('vevent').map((v) => new ICAL.Event(v));
    // The calendar starts at the minute it was made (its DTSTAMP); the list is asked for the same
    // window, not the minute this test reaches after the answer (a minute may have turned meanwhile).
    const stamp = cal.getFirstSubcomponent('vevent')?.getFirstPropertyValue('dtstamp');
    expect(stamp).toBeInstanceOf(ICAL.Time);
    const start = (stamp as ICAL.Time).toJSDate().getTime();
    expect(start % MIN).toBe(0);
    expect(Math.abs(Date.now() - start)).toBeLessThan(5 * MIN);
    const passes = await request(t.app)
      .get(`/v1/satellites/${t.satellites.leo.id}/passes`)
      .query({ ...observer, days: 3, start: new Date(start).toISOString() })
      .set(auth())
      .expect(200);
    const expected = passes.body.passes.filter((p: { inProgressAtStart: boolean }) => !p.inProgressAtStart);
    expect(events.length).toBe(expected.length);
    expect(events.length).toBeGreaterThan(3);
    events.forEach((e, i) => {
      const p = expected[i];
      expect(Math.abs(e.startDate.toJSDate().getTime() - Date.parse(p.rise.t))).toBeLessThan(1000);
      expect(Math.abs(e.endDate.toJSDate().getTime() - Date.parse(p.set.t))).toBeLessThan(1000);
      expect(e.summary).toContain('Test LEO');
      expect(e.summary).toContain(`${Math.round(p.culmination.elevation)}°`);
      expect(e.description).toContain(`Highest ${Math.round(p.culmination.elevation)}°`);
      expect(e.description).toContain('not for collision avoidance');
      expect(e.uid).toMatch(/@nadirline$/);
    });
    const again = await request(t.app).get(`/v1/satellites/${t.satellites.leo.id}/passes.ics`).query(q).set('Origin', PAGE_ORIGIN).expect(200);
    const uids = (s: string) => new ICAL.Component(ICAL.parse(s)).getAllSubcomponents('vevent').map((v) => v.getFirstPropertyValue('uid'));
    expect(uids(again.text).slice(0, events.length - 1)).toEqual(uids(text).slice(0, events.length - 1));
  });

  it('passes.ics takes embed= and visible=true; bad parameters answer problem+json', async () => {
    const res = await request(t.app).get(`/v1/satellites/${t.satellites.leo.id}/passes.ics`).query({ ...observer, embed: t.embedId, visible: 'true' }).set('Origin', PAGE_ORIGIN).expect(200);
    const cal = new ICAL.Component(ICAL.parse(res.text));
    for (const v of cal.getAllSubcomponents('vevent')) expect(String(v.getFirstPropertyValue('summary'))).toContain('visible');
    const bad = await request(t.app).get(`/v1/satellites/${t.satellites.leo.id}/passes.ics`).query({ lat: 95, lon: 0 }).set(auth());
    expect(bad.status).toBe(400);
    expect(bad.headers['content-type']).toMatch(/problem\+json/);
  });
});

describe('OpenAPI', () => {
  it('documents the calendar, the history, path=true, elementSet and the cap relative to the epoch', async () => {
    const doc = (await request(t.app).get('/v1/openapi.json').expect(200)).body;
    const ics = doc.paths['/v1/satellites/{id}/passes.ics'].get;
    expect(Object.keys(ics.responses['200'].content)).toContain('text/calendar');
    expect(doc.paths['/v1/satellites/{id}/element-sets'].get).toBeTruthy();
    const passes = doc.paths['/v1/satellites/{id}/passes'].get;
    expect(passes.parameters.map((p: { name: string }) => p.name)).toContain('path');
    expect(doc.paths['/v1/satellites/{id}/position'].get.description).toContain('365 days');
    expect(JSON.stringify(doc.paths['/v1/satellites/{id}/position'].get.responses['200'])).toContain('ageDays');
  });
});
