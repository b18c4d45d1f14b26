/**
 * Sky paths of passes: points every 10 s from rise to set, the ends on the mask, the highest
 * point at the culmination, and the observer's darkness cross-checked with astronomy-engine's
 * Horizon (the reference library named in references.md).
 */
import { Body, Equator, Horizon, Observer as AstroObserver } from 'astronomy-engine';
import { eciToEcf, ecfToLookAngles, gstime, jday, sgp4 } from 'satellite.js';
import { describe, expect, it } from 'vitest';
import { CIVIL_TWILIGHT_DEG, DEG_PER_RAD, RAD_PER_DEG } from './constants.ts';
import { findPasses } from './passes.ts';
import { SKY_PATH_MAX_POINTS, skyPath, skyPathStepS } from './sky-path.ts';
import { TEST_EPOCH_MS, testSatrec } from './testing/orbits.ts';

const observer = { latDeg: 47.1, lonDeg: 8.5, altM: 400 };

describe('skyPath', () => {
  const satrec = testSatrec('lowInclined');
  const list = findPasses(satrec, observer, { startMs: TEST_EPOCH_MS, days: 2, minElevationDeg: 10 });
  if (!list.ok) throw new Error(list.message);

  it('runs from rise to set every 10 s, starting and ending on the mask, highest at the culmination', () => {
    expect(list.passes.length).toBeGreaterThan(2);
    for (const pass of list.passes) {
      const r = skyPath(satrec, observer, pass);
      if (!r.ok) throw new Error(r.message);
      const pts = r.points;
      expect(r.stepS).toBe(10);
      expect(pts[0]?.t).toBe(pass.rise.t);
      expect(pts.at(-1)?.t).toBe(pass.set.t);
      for (let i = 1; i < pts.length - 1; i++) expect((pts[i]?.t ?? 0) - (pts[i - 1]?.t ?? 0)).toBe(10_000);
      expect(pts[0]?.elevationDeg).toBeCloseTo(10, 2);
      expect(pts.at(-1)?.elevationDeg).toBeCloseTo(10, 2);
      expect(pts[0]?.azimuthDeg).toBeCloseTo(pass.rise.azimuthDeg, 2);
      const highest = Math.max(...pts.map((p) => p.elevationDeg));
      expect(highest).toBeLessThanOrEqual(pass.culmination.elevationDeg + 1e-6);
      expect(highest).toBeGreaterThan(pass.culmination.elevationDeg - 0.3);
    }
  });

  it('azimuth and elevation agree with satellite.js ecfToLookAngles', () => {
    const pass = list.passes[0];
    if (!pass) throw new Error('no pass');
    const r = skyPath(satrec, observer, pass);
    if (!r.ok) throw new Error(r.message);
    const p = r.points[Math.floor(r.points.length / 2)];
    if (!p) throw new Error('no point');
    const d = new Date(p.t);
    const pv = sgp4(satrec, (p.t - TEST_EPOCH_MS) / 60_000);
    if (!pv) throw new Error('sgp4');
    const ecf = eciToEcf(pv.position, gstime(jday(d)));
    const ref = ecfToLookAngles({ latitude: 47.1 * RAD_PER_DEG, longitude: 8.5 * RAD_PER_DEG, height: 0.4 }, ecf);
    expect(p.azimuthDeg).toBeCloseTo(ref.azimuth * DEG_PER_RAD, 3);
    expect(p.elevationDeg).toBeCloseTo(ref.elevation * DEG_PER_RAD, 3);
  });

  it('marks the observer\u2019s dark sky as astronomy-engine\u2019s Sun altitude below -6 deg says', () => {
    const site = new AstroObserver(observer.latDeg, observer.lonDeg, observer.altM);
    let checked = 0;
    for (const pass of list.passes) {
      const r = skyPath(satrec, observer, pass);
      if (!r.ok) throw new Error(r.message);
      for (const p of r.points.filter((_, i) => i % 6 === 0)) {
        const eq = Equator(Body.Sun, new Date(p.t), site, true, true);
        const alt = Horizon(new Date(p.t), site, eq.ra, eq.dec).altitude;
        if (Math.abs(alt - CIVIL_TWILIGHT_DEG) < 0.1) continue; // too close to call between models
        expect(p.dark).toBe(alt < CIVIL_TWILIGHT_DEG);
        checked++;
      }
    }
    expect(checked).toBeGreaterThan(20);
  });

  it('long passes get a coarser step so no path exceeds 200 points', () => {
    expect(skyPathStepS(0, 3_600_000)).toBe(Math.ceil(3600 / (SKY_PATH_MAX_POINTS - 1)));
    expect(skyPathStepS(0, 600_000)).toBe(10);
    const geo = testSatrec('eccentric');
    const r = skyPath(geo, observer, { rise: { t: TEST_EPOCH_MS, azimuthDeg: 0 }, set: { t: TEST_EPOCH_MS + 6 * 3_600_000, azimuthDeg: 0 } });
    if (!r.ok) throw new Error(r.message);
    expect(r.points.length).toBeLessThanOrEqual(SKY_PATH_MAX_POINTS);
  });

  it('refuses an observer off the globe', () => {
    expect(skyPath(satrec, { latDeg: 95, lonDeg: 0, altM: 0 }, { rise: { t: 0, azimuthDeg: 0 }, set: { t: 1, azimuthDeg: 0 } })).toMatchObject({ ok: false, code: 'invalid-observer' });
  });
});
