import { ecfToLookAngles, eciToEcf, gstime, jday, propagate } from 'satellite.js';
import { describe, expect, it } from 'vitest';
import { DEG_PER_RAD, RAD_PER_DEG } from './constants.ts';
import { lookAngles, lookAnglesFromEcef, observerSite } from './observer.ts';
import { TEST_EPOCH_MS, testSatrec } from './testing/orbits.ts';

describe('lookAnglesFromEcef', () => {
  // Vallado, Fundamentals of Astrodynamics and Applications, example 4-2 (companion code output, references.md).
  const site = { latDeg: 39.007, lonDeg: -104.883, altM: 2194.56 };
  const target = { x: -2.93155946e9, y: -2.93395314e9, z: -1.57837994e9 };

  it('gives azimuth 210.82506677 deg and elevation 23.85950527 deg for Vallado example 4-2, within 1e-6 deg', () => {
    const la = lookAnglesFromEcef(observerSite(site), target);
    expect(Math.abs(la.azimuthDeg - 210.82506677)).toBeLessThan(1e-6);
    expect(Math.abs(la.elevationDeg - 23.85950527)).toBeLessThan(1e-6);
  });

  it('agrees with satellite.js ecfToLookAngles for the same site and target', () => {
    const ref = ecfToLookAngles(
      { latitude: site.latDeg * RAD_PER_DEG, longitude: site.lonDeg * RAD_PER_DEG, height: site.altM / 1000 },
      { x: 1200, y: -4800, z: 4400 },
    );
    const la = lookAnglesFromEcef(observerSite(site), { x: 1200, y: -4800, z: 4400 });
    expect(la.azimuthDeg).toBeCloseTo(ref.azimuth * DEG_PER_RAD, 6);
    expect(la.elevationDeg).toBeCloseTo(ref.elevation * DEG_PER_RAD, 6);
    expect(la.rangeKm).toBeCloseTo(ref.rangeSat, 3);
  });
});

describe('lookAngles', () => {
  const observer = { latDeg: 47.1, lonDeg: 8.5, altM: 400 };

  it('matches satellite.js propagate + eciToEcf + ecfToLookAngles on a low orbit', () => {
    const satrec = testSatrec('lowInclined');
    const t = TEST_EPOCH_MS + 14 * 60_000 + 40_000;
    const res = lookAngles(satrec, observer, t);
    if (!res.ok) throw new Error(res.message);
    const d = new Date(t);
    const pv = propagate(satrec, d);
    if (!pv) throw new Error('satellite.js failed');
    const ecf = eciToEcf(pv.position, gstime(jday(d)));
    const ref = ecfToLookAngles({ latitude: 47.1 * RAD_PER_DEG, longitude: 8.5 * RAD_PER_DEG, height: 0.4 }, ecf);
    expect(res.azimuthDeg).toBeCloseTo(ref.azimuth * DEG_PER_RAD, 4);
    expect(res.elevationDeg).toBeCloseTo(ref.elevation * DEG_PER_RAD, 4);
    expect(res.rangeKm).toBeCloseTo(ref.rangeSat, 2);
  });

  it('gives a range rate equal to the change of range over time', () => {
    const satrec = testSatrec('lowInclined');
    const t = TEST_EPOCH_MS + 16 * 60_000;
    const at = (ms: number) => {
      const r = lookAngles(satrec, observer, ms);
      if (!r.ok) throw new Error(r.message);
      return r;
    };
    const numeric = (at(t + 500).rangeKm - at(t - 500).rangeKm) / 1;
    expect(at(t).rangeRateKmS).toBeCloseTo(numeric, 4);
  });

  it('refuses an observer off the globe', () => {
    const satrec = testSatrec('polar');
    expect(lookAngles(satrec, { latDeg: 91, lonDeg: 0, altM: 0 }, TEST_EPOCH_MS)).toMatchObject({ ok: false, code: 'invalid-observer' });
    expect(lookAngles(satrec, { latDeg: 0, lonDeg: Number.NaN, altM: 0 }, TEST_EPOCH_MS)).toMatchObject({ ok: false, code: 'invalid-observer' });
  });

  it('passes a propagation failure through with its code', () => {
    const satrec = testSatrec('polar');
    expect(lookAngles(satrec, observer, TEST_EPOCH_MS + 500 * 86_400_000)).toMatchObject({ ok: false, code: 'too-far-from-epoch' });
  });
});
