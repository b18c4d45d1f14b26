import { Observer as AstroObserver, Body, Equator, Horizon } from 'astronomy-engine';
import { describe, expect, it } from 'vitest';
import { MS_PER_DAY } from './constants.ts';
import { lookAngles } from './observer.ts';
import type { Observer } from './observer.ts';
import { findPasses } from './passes.ts';
import type { Pass, PassList } from './passes.ts';
import { findPassesBruteForce } from './passes-bruteforce.ts';
import { propagateAt } from './propagate.ts';
import { TEST_EPOCH_MS, testSatrec } from './testing/orbits.ts';
import type { TestOrbitName } from './testing/orbits.ts';

const zurichLike: Observer = { latDeg: 47.1, lonDeg: 8.5, altM: 400 };
const north: Observer = { latDeg: 62.5, lonDeg: 30.2, altM: 100 };

function ok(res: ReturnType<typeof findPasses>): PassList {
  if (!res.ok) throw new Error(`${res.code}: ${res.message}`);
  return res;
}

function expectSamePasses(fast: PassList, slow: PassList): void {
  expect(fast.alwaysUp).toBe(slow.alwaysUp);
  expect(fast.passes.map((p) => p.rise.t > 0)).toHaveLength(slow.passes.length);
  fast.passes.forEach((p: Pass, i) => {
    const q = slow.passes[i] as Pass;
    expect(Math.abs(p.rise.t - q.rise.t)).toBeLessThan(1000);
    expect(Math.abs(p.culmination.t - q.culmination.t)).toBeLessThan(1000);
    expect(Math.abs(p.set.t - q.set.t)).toBeLessThan(1000);
    expect(p.culmination.elevationDeg).toBeCloseTo(q.culmination.elevationDeg, 2);
    expect(p.visible).toBe(q.visible);
    expect(p.inProgressAtStart).toBe(q.inProgressAtStart);
    expect(p.inProgressAtEnd).toBe(q.inProgressAtEnd);
  });
}

describe('findPasses against a brute-force one-second scan', () => {
  const cases: [string, TestOrbitName, Observer, number, number][] = [
    ['a low inclined orbit', 'lowInclined', zurichLike, 2, 0],
    ['a polar orbit', 'polar', north, 2, 0],
    ['an eccentric twelve-hour orbit', 'eccentric', north, 3, 0],
    ['a low inclined orbit with a 10 deg mask', 'lowInclined', zurichLike, 1.5, 10],
  ];
  it.each(cases)('finds the same passes for %s, rise, culmination and set within 1 s', (_name, orbit, observer, days, mask) => {
    const satrec = testSatrec(orbit);
    const opts = { startMs: TEST_EPOCH_MS + 3_600_000, days, minElevationDeg: mask };
    const fast = ok(findPasses(satrec, observer, opts));
    const slow = ok(findPassesBruteForce(satrec, observer, opts));
    expect(fast.passes.length).toBeGreaterThan(2);
    expectSamePasses(fast, slow);
    for (const p of fast.passes) {
      expect(p.culmination.elevationDeg).toBeGreaterThan(mask);
      for (const ev of [p.rise, p.set]) {
        if (p.inProgressAtStart && ev === p.rise) continue;
        if (p.inProgressAtEnd && ev === p.set) continue;
        const la = lookAngles(satrec, observer, ev.t);
        if (!la.ok) throw new Error(la.message);
        expect(la.elevationDeg).toBeCloseTo(mask, 2);
        expect(la.azimuthDeg).toBeCloseTo(ev.azimuthDeg, 6);
      }
    }
  });

  it('answers always up for a geostationary satellite in view, as the scan does', () => {
    const satrec = testSatrec('geostationary');
    const sub = propagateAt(satrec, TEST_EPOCH_MS);
    if (!sub.ok) throw new Error(sub.message);
    const under: Observer = { latDeg: 40, lonDeg: sub.lonDeg + 10, altM: 0 };
    const opts = { startMs: TEST_EPOCH_MS, days: 2 };
    const fast = ok(findPasses(satrec, under, opts));
    expect(fast).toEqual({ ok: true, passes: [], alwaysUp: true });
    expectSamePasses(fast, ok(findPassesBruteForce(satrec, under, opts)));
  });

  it('answers no passes for a geostationary satellite below the horizon, as the scan does', () => {
    const satrec = testSatrec('geostationary');
    const sub = propagateAt(satrec, TEST_EPOCH_MS);
    if (!sub.ok) throw new Error(sub.message);
    const farSide: Observer = { latDeg: -20, lonDeg: sub.lonDeg > 0 ? sub.lonDeg - 180 : sub.lonDeg + 180, altM: 0 };
    const opts = { startMs: TEST_EPOCH_MS, days: 2 };
    const fast = ok(findPasses(satrec, farSide, opts));
    expect(fast).toEqual({ ok: true, passes: [], alwaysUp: false });
    expectSamePasses(fast, ok(findPassesBruteForce(satrec, farSide, opts)));
  });
});

describe('findPasses', () => {
  it('answers an empty list quickly when the satellite never rises (a 51.6 deg orbit seen from 85 deg N)', () => {
    const started = Date.now();
    const res = ok(findPasses(testSatrec('lowInclined'), { latDeg: 85, lonDeg: 0, altM: 0 }, { startMs: TEST_EPOCH_MS, days: 14 }));
    expect(res).toEqual({ ok: true, passes: [], alwaysUp: false });
    expect(Date.now() - started).toBeLessThan(2000);
  });

  it('starts a pass under way at the window start at the start, and flags it', () => {
    const satrec = testSatrec('lowInclined');
    const first = ok(findPasses(satrec, zurichLike, { startMs: TEST_EPOCH_MS, days: 1 })).passes[0] as Pass;
    const startMs = first.rise.t + 60_000;
    const res = ok(findPasses(satrec, zurichLike, { startMs, days: 1 }));
    const cut = res.passes[0] as Pass;
    expect(cut.inProgressAtStart).toBe(true);
    expect(cut.rise.t).toBe(startMs);
    expect(Math.abs(cut.set.t - first.set.t)).toBeLessThan(100);
    expect(res.passes.slice(1).every((p) => !p.inProgressAtStart)).toBe(true);
  });

  it('marks a pass visible only while the observer has the Sun below -6 deg (Sun altitude from astronomy-engine)', () => {
    const satrec = testSatrec('lowInclined');
    const { passes } = ok(findPasses(satrec, zurichLike, { startMs: TEST_EPOCH_MS, days: 2 }));
    const where = new AstroObserver(zurichLike.latDeg, zurichLike.lonDeg, zurichLike.altM);
    const sunAltDeg = (t: number): number => {
      const eq = Equator(Body.Sun, new Date(t), where, true, true);
      return Horizon(new Date(t), where, eq.ra, eq.dec).altitude;
    };
    expect(passes.some((p) => p.visible)).toBe(true);
    expect(passes.some((p) => !p.visible)).toBe(true);
    for (const p of passes) {
      const darkest = Math.min(sunAltDeg(p.rise.t), sunAltDeg(p.culmination.t), sunAltDeg(p.set.t));
      if (p.visible) expect(darkest).toBeLessThan(-6 + 0.05);
      if (darkest > -5.9) expect(p.visible).toBe(false);
    }
  });

  it('reports visible false for every pass when the sunlit check is off', () => {
    const res = ok(findPasses(testSatrec('polar'), north, { startMs: TEST_EPOCH_MS, days: 1, sunlitCheck: false }));
    expect(res.passes.length).toBeGreaterThan(0);
    expect(res.passes.every((p) => !p.visible)).toBe(true);
  });

  it('refuses windows longer than 14 days or empty, and observers off the globe', () => {
    const satrec = testSatrec('polar');
    expect(findPasses(satrec, zurichLike, { startMs: TEST_EPOCH_MS, days: 15 })).toMatchObject({ ok: false, code: 'invalid-window' });
    expect(findPasses(satrec, zurichLike, { startMs: TEST_EPOCH_MS, days: 0 })).toMatchObject({ ok: false, code: 'invalid-window' });
    expect(findPasses(satrec, { latDeg: 0, lonDeg: 200, altM: 0 }, { startMs: TEST_EPOCH_MS, days: 1 })).toMatchObject({
      ok: false,
      code: 'invalid-observer',
    });
  });

  it('fails with the propagation code when the window runs past what SGP4 can carry', () => {
    const res = findPasses(testSatrec('polar'), zurichLike, { startMs: TEST_EPOCH_MS + 360 * MS_PER_DAY, days: 10 });
    expect(res).toMatchObject({ ok: false, code: 'too-far-from-epoch' });
  });
});
