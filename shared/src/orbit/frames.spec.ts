import { Body, GeoVector, RotateVector, Rotation_EQJ_EQD, SiderealTime } from 'astronomy-engine';
import { eciToGeodetic, gstime, jday, shadowFraction, sunPos } from 'satellite.js';
import { describe, expect, it } from 'vitest';
import { DEG_PER_RAD } from './constants.ts';
import { cartesianToGeodetic, geodeticToEcef, gmstRad, isSunlit, julianDateFromMs, sunVector, wrap360Deg, wrapLonDeg } from './frames.ts';

describe('Earth rotation', () => {
  it('gives GMST 152.578787886 deg on 1992-08-20 12:14 UT1 (Vallado example 3-5, from memory of the book)', () => {
    const ms = Date.UTC(1992, 7, 20, 12, 14, 0);
    expect(gmstRad(ms) * DEG_PER_RAD).toBeCloseTo(152.578787886, 6);
  });

  it('agrees with the sidereal time of astronomy-engine within the equation of the equinoxes (0.005 deg)', () => {
    // astronomy-engine SiderealTime returns apparent sidereal time (GAST); GMST differs by at most ~1.2 s of time.
    for (const ms of [Date.UTC(2000, 0, 1, 12), Date.UTC(2014, 5, 3, 7, 21, 9), Date.UTC(2026, 2, 20, 23, 59, 59)]) {
      const gast = SiderealTime(new Date(ms)) * 15;
      const diff = wrapLonDeg(gmstRad(ms) * DEG_PER_RAD - gast);
      expect(Math.abs(diff)).toBeLessThan(0.005);
    }
  });

  it('converts Unix ms to the Julian date satellite.js computes', () => {
    const ms = Date.UTC(2024, 1, 29, 6, 30, 15, 250);
    expect(julianDateFromMs(ms)).toBeCloseTo(jday(new Date(ms)), 9);
  });
});

describe('WGS-84 geodetic conversion', () => {
  const cases: [string, { x: number; y: number; z: number }][] = [
    ['a low orbit point', { x: 4979.55, y: -1859.91, z: -4244.09 }],
    ['a point near the north pole', { x: 12.3, y: -4.5, z: 7000 }],
    ['a geostationary point', { x: -10949.8, y: 40708.6, z: -9.2 }],
    ['a point on the equator at the antimeridian', { x: -6778, y: -1e-9, z: 0 }],
  ];
  it.each(cases)('matches satellite.js eciToGeodetic for %s within 1e-9 deg and 1 mm', (_name, p) => {
    const gmst = 1.234;
    const ours = cartesianToGeodetic(p.x, p.y, p.z, gmst);
    const ref = eciToGeodetic(p, gmst);
    expect(Math.abs(ours.latRad - ref.latitude) * DEG_PER_RAD).toBeLessThan(1e-9);
    expect(Math.abs(wrapLonDeg((ours.lonRad - ref.longitude) * DEG_PER_RAD))).toBeLessThan(1e-9);
    expect(Math.abs(ours.altKm - ref.height)).toBeLessThan(1e-6);
  });

  it('inverts geodeticToEcef', () => {
    const p = geodeticToEcef(0.7, -2.1, 1.5);
    const g = cartesianToGeodetic(p.x, p.y, p.z);
    expect(g.latRad).toBeCloseTo(0.7, 12);
    expect(g.lonRad).toBeCloseTo(-2.1, 12);
    expect(g.altKm).toBeCloseTo(1.5, 8);
  });
});

describe('the Sun', () => {
  it('gives what satellite.js sunPos and gstime give (the same Vallado formulas, written in the engine)', () => {
    for (let ms = Date.UTC(1990, 0, 1); ms < Date.UTC(2060, 0, 1); ms += 86_400_000 * 37.3) {
      const jd = julianDateFromMs(ms);
      const ref = sunPos(jd);
      const au = Math.hypot(ref.rsun.x, ref.rsun.y, ref.rsun.z);
      const ours = sunVector(ms);
      expect(ours.x).toBeCloseTo(ref.rsun.x / au, 12);
      expect(ours.y).toBeCloseTo(ref.rsun.y / au, 12);
      expect(ours.z).toBeCloseTo(ref.rsun.z / au, 12);
      expect(ours.distanceKm).toBeCloseTo(au * 149597870.7, 3);
      expect(ours.rightAscensionRad).toBeCloseTo(ref.rtasc, 12);
      expect(ours.declinationRad).toBeCloseTo(ref.decl, 12);
      expect(gmstRad(ms)).toBeCloseTo(gstime(jd), 12);
    }
  });

  it('stands at RA 198.38083 deg, dec -7.78507 deg on 1992 October 13.0 TD (Meeus example 25.a), within 0.01 deg', () => {
    // references.md: satellite.js sunPos (7.1.0) agrees with Meeus to about 0.01 deg.
    const { rtasc, decl } = sunPos(2448908.5);
    expect(Math.abs(wrap360Deg(rtasc * DEG_PER_RAD) - 198.38083)).toBeLessThan(0.01);
    expect(Math.abs(decl * DEG_PER_RAD - -7.78507)).toBeLessThan(0.01);
    const sv = sunVector((2448908.5 - 2440587.5) * 86_400_000);
    expect(Math.abs(wrap360Deg(Math.atan2(sv.y, sv.x) * DEG_PER_RAD) - 198.38083)).toBeLessThan(0.01);
    expect(sv.distanceKm / 149597870.7).toBeCloseTo(0.99766, 3); // Meeus 25.a: R = 0.99766 AU
  });

  it('points where astronomy-engine puts the Sun (equator of date), within 0.01 deg', () => {
    const date = new Date(Date.UTC(2026, 5, 21, 10, 0, 0));
    const v = RotateVector(Rotation_EQJ_EQD(date), GeoVector(Body.Sun, date, true));
    const len = Math.hypot(v.x, v.y, v.z);
    const ours = sunVector(date.getTime());
    const cosAngle = (ours.x * v.x + ours.y * v.y + ours.z * v.z) / len;
    expect(Math.acos(Math.min(1, cosAngle)) * DEG_PER_RAD).toBeLessThan(0.01);
  });

  it('lights a satellite exactly when satellite.js says less than half of the Sun is hidden (conical model)', () => {
    const ms = Date.UTC(2026, 2, 20, 4, 0, 0);
    const sun = sunVector(ms);
    const rsun = sunPos(julianDateFromMs(ms)).rsun;
    let checked = 0;
    // Points on a 7000 km sphere around the shadow boundary; skip the thin band where the two
    // models may round differently (fraction within 0.05 of one half).
    for (let i = 0; i < 2000; i++) {
      const u = (i * 0.618034) % 1;
      const w = (i * 0.414214) % 1;
      const theta = 2 * Math.PI * u;
      const zc = 2 * w - 1;
      const s = Math.sqrt(1 - zc * zc);
      const p = { x: 7000 * s * Math.cos(theta), y: 7000 * s * Math.sin(theta), z: 7000 * zc };
      const frac = shadowFraction(rsun, p);
      if (Math.abs(frac - 0.5) < 0.05) continue;
      expect(isSunlit(p, sun)).toBe(frac < 0.5);
      checked++;
    }
    expect(checked).toBeGreaterThan(1900);
    const behind = { x: -7000 * sun.x, y: -7000 * sun.y, z: -7000 * sun.z };
    expect(isSunlit(behind, sun)).toBe(false);
  });
});
