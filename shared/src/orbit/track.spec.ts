import { eciToGeodetic, gstime, jday, propagate } from 'satellite.js';
import { describe, expect, it } from 'vitest';
import type { TrackSample } from '../types.ts';
import { DEG_PER_RAD, MS_PER_DAY } from './constants.ts';
import { propagateAt } from './propagate.ts';
import { TEST_EPOCH_MS, TEST_ORBITS, testSatrec } from './testing/orbits.ts';
import { gridCount, sampleTrack, splitAtAntimeridian, trackGrid, trackToGeoJSON } from './track.ts';
import { sampleTrackAcrossSets } from './history.ts';

const sample = (t: number, lat: number, lon: number, sunlit = true): TrackSample => ({ t, lat, lon, altKm: 400, sunlit });

describe('sampleTrack', () => {
  // satellite.js counts time in Julian days (about 40 microseconds of resolution, ~0.3 m along a low
  // orbit); Nadirline counts Unix ms from the epoch. Agreement to 1e-5 deg (about 1 m) is expected.
  it('gives the points of a bare satellite.js propagate + gstime + eciToGeodetic loop within about a metre', () => {
    const satrec = testSatrec('lowInclined');
    const res = sampleTrack(satrec, { startMs: TEST_EPOCH_MS, endMs: TEST_EPOCH_MS + 3 * 3_600_000, stepS: 30 });
    if (!res.ok) throw new Error(res.message);
    expect(res.samples).toHaveLength(361);
    for (const s of res.samples.filter((_, i) => i % 7 === 0)) {
      const d = new Date(s.t);
      const pv = propagate(satrec, d);
      if (!pv) throw new Error('satellite.js failed');
      const g = eciToGeodetic(pv.position, gstime(jday(d)));
      expect(Math.abs(s.lat - g.latitude * DEG_PER_RAD)).toBeLessThan(1e-5);
      const dLon = Math.abs(s.lon - g.longitude * DEG_PER_RAD);
      expect(Math.min(dLon, 360 - dLon)).toBeLessThan(1e-5);
      expect(Math.abs(s.altKm - g.height)).toBeLessThan(1e-3);
    }
  });

  it.each([['lowInclined'], ['polar']] as const)(
    'reaches a highest latitude close to the inclination (%s; common practice, geodetic latitude may exceed it by up to ~0.2 deg)',
    (name) => {
      const satrec = testSatrec(name);
      const res = sampleTrack(satrec, { startMs: TEST_EPOCH_MS, endMs: TEST_EPOCH_MS + MS_PER_DAY, stepS: 10 });
      if (!res.ok) throw new Error(res.message);
      const maxLat = Math.max(...res.samples.map((s) => Math.abs(s.lat)));
      const i = TEST_ORBITS[name].inclinationDeg;
      const limit = i <= 90 ? i : 180 - i;
      expect(maxLat).toBeGreaterThan(limit - 0.1);
      expect(maxLat).toBeLessThan(limit + 0.25);
    },
  );

  it('flags some samples sunlit and some in shadow on a low orbit, matching propagateAt positions', () => {
    const satrec = testSatrec('lowInclined');
    const res = sampleTrack(satrec, { startMs: TEST_EPOCH_MS, endMs: TEST_EPOCH_MS + 95 * 60_000, stepS: 60 });
    if (!res.ok) throw new Error(res.message);
    const lit = res.samples.filter((s) => s.sunlit).length;
    // A 420 km orbit spends roughly a third to two fifths of a revolution in Earth's shadow (common practice).
    expect(lit / res.samples.length).toBeGreaterThan(0.5);
    expect(lit / res.samples.length).toBeLessThan(0.8);
    const mid = res.samples[40] as TrackSample;
    const direct = propagateAt(satrec, mid.t);
    if (!direct.ok) throw new Error(direct.message);
    expect(mid.lat).toBeCloseTo(direct.latDeg, 9);
  });

  it('rejects empty or absurd windows with a code, not an exception', () => {
    const satrec = testSatrec('polar');
    const bad = [
      { startMs: TEST_EPOCH_MS, endMs: TEST_EPOCH_MS - 1, stepS: 60 },
      { startMs: TEST_EPOCH_MS, endMs: TEST_EPOCH_MS + 1000, stepS: 0 },
      { startMs: Number.NaN, endMs: TEST_EPOCH_MS, stepS: 60 },
    ];
    for (const w of bad) expect(sampleTrack(satrec, w)).toMatchObject({ ok: false, code: 'invalid-window' });
    expect(sampleTrack(satrec, { startMs: TEST_EPOCH_MS, endMs: TEST_EPOCH_MS + 30 * MS_PER_DAY, stepS: 1 })).toMatchObject({
      ok: false,
      code: 'too-many-samples',
    });
    expect(sampleTrack(satrec, { startMs: TEST_EPOCH_MS + 400 * MS_PER_DAY, endMs: TEST_EPOCH_MS + 401 * MS_PER_DAY, stepS: 60 })).toMatchObject({
      ok: false,
      code: 'too-far-from-epoch',
    });
  });

  it('refuses a bad window in one-set and several-set tracks with the same code and message', () => {
    const satrec = testSatrec('polar');
    const windows = [
      { startMs: TEST_EPOCH_MS, endMs: TEST_EPOCH_MS - 1, stepS: 60 },
      { startMs: TEST_EPOCH_MS, endMs: TEST_EPOCH_MS + 1000, stepS: -5 },
      { startMs: TEST_EPOCH_MS, endMs: Number.POSITIVE_INFINITY, stepS: 60 },
      { startMs: TEST_EPOCH_MS, endMs: TEST_EPOCH_MS + 3_600_000, stepS: 60, maxSamples: 60 },
    ];
    for (const w of windows) {
      const one = sampleTrack(satrec, w);
      expect(one.ok, JSON.stringify(w)).toBe(false);
      expect(sampleTrackAcrossSets([{ epochMs: TEST_EPOCH_MS, satrec }], w)).toEqual(one);
      expect(trackGrid(w)).toEqual(one);
    }
    // An hour at 60 s is 61 samples, start and end included; an end just short of the last grid time by rounding still counts it.
    expect(trackGrid({ startMs: 0, endMs: 3_600_000, stepS: 60, maxSamples: 61 })).toEqual({ ok: true, stepMs: 60_000, count: 61 });
    expect(gridCount(0, 3_600_000 - 1e-6, 60)).toBe(61);
    expect(gridCount(0, 3_599_999, 60)).toBe(60);
  });
});

describe('splitAtAntimeridian (RFC 7946 section 3.1.9)', () => {
  it('cuts an eastward crossing with the interpolated latitude on both sides at lon 180 and -180', () => {
    const segs = splitAtAntimeridian([sample(0, 10, 170), sample(1000, 20, -170), sample(2000, 25, -160)]);
    expect(segs).toHaveLength(2);
    const [a, b] = segs as [TrackSample[], TrackSample[]];
    expect(a.at(-1)).toMatchObject({ lon: 180, lat: 15, t: 500 });
    expect(b[0]).toMatchObject({ lon: -180, lat: 15, t: 500 });
    expect(b.map((s) => s.lon)).toEqual([-180, -170, -160]);
  });

  it('cuts a westward crossing the same way, with the fraction from longitude', () => {
    const segs = splitAtAntimeridian([sample(0, 0, -178), sample(1000, -8, 174)]);
    const [a, b] = segs as [TrackSample[], TrackSample[]];
    expect(a.at(-1)?.lon).toBe(-180);
    expect(b[0]?.lon).toBe(180);
    expect(a.at(-1)?.lat).toBeCloseTo(-2, 12); // 2 of the 8 deg of longitude lie west of -178
    expect(b[0]?.lat).toBeCloseTo(-2, 12);
  });

  it('leaves no segment of a real track with a jump over 180 deg, and loses no sample', () => {
    const res = sampleTrack(testSatrec('polar'), { startMs: TEST_EPOCH_MS, endMs: TEST_EPOCH_MS + MS_PER_DAY, stepS: 20 });
    if (!res.ok) throw new Error(res.message);
    const segs = splitAtAntimeridian(res.samples);
    expect(segs.length).toBeGreaterThan(10);
    let original = 0;
    for (const seg of segs) {
      for (let i = 1; i < seg.length; i++) {
        expect(Math.abs((seg[i] as TrackSample).lon - (seg[i - 1] as TrackSample).lon)).toBeLessThanOrEqual(180);
      }
      original += seg.filter((s) => Math.abs(s.lon) !== 180).length;
    }
    expect(original).toBe(res.samples.filter((s) => Math.abs(s.lon) !== 180).length);
  });

  it('does not cut a track that stays on one side', () => {
    expect(splitAtAntimeridian([sample(0, 0, 10), sample(1, 1, 20)])).toHaveLength(1);
    expect(splitAtAntimeridian([])).toEqual([]);
  });
});

describe('trackToGeoJSON', () => {
  it('gives one MultiLineString of [lon, lat] segments and, on request, a point per sample', () => {
    const samples = [sample(0, 10, 170), sample(1000, 20, -170), sample(2000, 25, -160)];
    const fc = trackToGeoJSON(samples, { satellite: 'demo' }, { points: true });
    expect(fc.type).toBe('FeatureCollection');
    const line = fc.features[0];
    expect(line?.properties).toEqual({ satellite: 'demo' });
    expect(line?.geometry).toEqual({
      type: 'MultiLineString',
      coordinates: [
        [[170, 10], [180, 15]],
        [[-180, 15], [-170, 20], [-160, 25]],
      ],
    });
    expect(fc.features).toHaveLength(4);
    expect(fc.features[1]?.properties).toMatchObject({ t: '1970-01-01T00:00:00.000Z', sunlit: true });
  });
});
