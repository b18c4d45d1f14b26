import { describe, expect, it } from 'vitest';
import type { ElementSet } from '../types.ts';
import { MS_PER_DAY } from './constants.ts';
import { deriveElements, nodalPrecessionDegPerDay, semiMajorAxisKmFromMeanMotion, stalenessOf } from './elements-derived.ts';

/** Element set built by hand from the values of the 00005 test set (AIAA 2006-6753 Appendix D). */
const set00005: ElementSet = {
  source: 'tle',
  name: '',
  catalogNumber: '5',
  classification: 'U',
  intlDesignator: '58002B',
  epochMs: Date.UTC(2000, 5, 27, 18, 50, 19, 734),
  epochIso: '2000-06-27T18:50:19.733568Z',
  meanMotionRevPerDay: 10.82419157,
  eccentricity: 0.1859667,
  inclinationDeg: 34.2682,
  raanDeg: 348.7242,
  argPerigeeDeg: 331.7664,
  meanAnomalyDeg: 19.3264,
  bstar: 0.000028098,
  meanMotionDot: 0.00000023,
  meanMotionDdot: 0,
  ephemerisType: 0,
  elementSetNo: 475,
  revAtEpoch: 41366,
};

const circular = (meanMotionRevPerDay: number, inclinationDeg: number): ElementSet => ({
  ...set00005,
  meanMotionRevPerDay,
  inclinationDeg,
  eccentricity: 0,
});

describe('deriveElements', () => {
  it('derives size, shape and period from the mean motion (T = 1440 / n, a = (mu / n^2)^(1/3), references.md)', () => {
    const d = deriveElements(set00005, set00005.epochMs);
    expect(d.periodMin).toBeCloseTo(1440 / 10.82419157, 9);
    const nRadS = (10.82419157 * 2 * Math.PI) / 86400;
    expect(d.semiMajorAxisKm).toBeCloseTo(Math.cbrt(398600.4418 / nRadS ** 2), 6);
    expect(d.apogeeAltKm).toBeCloseTo(d.semiMajorAxisKm * (1 + 0.1859667) - 6378.137, 6);
    expect(d.perigeeAltKm).toBeCloseTo(d.semiMajorAxisKm * (1 - 0.1859667) - 6378.137, 6);
    expect(d).toMatchObject({
      epoch: '2000-06-27T18:50:19.733568Z',
      eccentricity: 0.1859667,
      inclinationDeg: 34.2682,
      raanDeg: 348.7242,
      argPerigeeDeg: 331.7664,
      meanAnomalyDeg: 19.3264,
      meanMotionRevPerDay: 10.82419157,
      latitudeLimitDeg: 34.2682,
    });
  });

  it('needs about 98.43 deg of inclination for a sun-synchronous circular orbit of 100 min (Curtis example 4.9)', () => {
    // Curtis's answer 98.43 deg is from memory; references.md recomputes 98.429 deg.
    const n = 1440 / 100;
    const a = semiMajorAxisKmFromMeanMotion(n);
    expect(a - 6378.137).toBeCloseTo(759, -1); // "altitude about 759 km"
    const sunRate = 360 / 365.2422; // the node must follow the mean Sun, deg/day
    let lo = 90;
    let hi = 180;
    for (let k = 0; k < 60; k++) {
      const mid = (lo + hi) / 2;
      if (nodalPrecessionDegPerDay(a, 0, mid, n) < sunRate) lo = mid;
      else hi = mid;
    }
    expect(Math.abs(lo - 98.429)).toBeLessThan(0.002);
    expect(deriveElements(circular(n, 98.43), 0).nodalPrecessionDegPerDay).toBeCloseTo(sunRate, 3);
  });

  it('regresses the node of a prograde orbit westward and of a retrograde one eastward', () => {
    expect(deriveElements(circular(15.5, 51.6), 0).nodalPrecessionDegPerDay).toBeLessThan(-4.5);
    expect(deriveElements(circular(15.5, 120), 0).nodalPrecessionDegPerDay).toBeGreaterThan(2);
    expect(Math.abs(deriveElements(circular(15.5, 90), 0).nodalPrecessionDegPerDay)).toBeLessThan(1e-12);
  });

  it.each([
    [15.5, 51.6],
    [14.57, 98.2],
    [16.0, 28.5],
  ])(
    'shifts the track west by about the period over 3.99 min per degree (n %s, i %s; common practice, nodal drift adds a percent or two)',
    (n, i) => {
      const d = deriveElements(circular(n, i), 0);
      const rule = d.periodMin / 3.99;
      expect(Math.abs(d.westwardShiftPerRevDeg - rule) / rule).toBeLessThan(0.025);
      // A prograde orbit's node drifts west and adds to the Earth's turn; a retrograde one's subtracts.
      expect(d.westwardShiftPerRevDeg > rule).toBe(i < 90);
    },
  );

  it('keeps a geostationary track in place and sends a 12-hour track to the far side each revolution (common practice)', () => {
    // One revolution per sidereal day (1.00273791 rev/day) brings the track back to the same longitude.
    expect(Math.abs(deriveElements(circular(1.00273791, 0.05), 0).westwardShiftPerRevDeg)).toBeLessThan(0.5);
    // Two revolutions per sidereal day: the next equator crossing lies half a turn away.
    expect(Math.abs(deriveElements(circular(2.00547582, 63.4), 0).westwardShiftPerRevDeg)).toBeGreaterThan(179);
  });

  it('gives the latitude limit of a retrograde orbit as 180 deg minus the inclination', () => {
    expect(deriveElements(circular(14.57, 98.2), 0).latitudeLimitDeg).toBeCloseTo(81.8, 9);
  });

  it('ages the set and classes it fresh below 3 days, aging below 14, stale after (Nadirline policy, common practice)', () => {
    const at = (days: number) => deriveElements(set00005, set00005.epochMs + days * MS_PER_DAY);
    expect(at(1.5).ageDays).toBeCloseTo(1.5, 9);
    expect(at(1.5)).toMatchObject({ staleness: 'fresh', stale: false });
    expect(at(3)).toMatchObject({ staleness: 'aging', stale: false });
    expect(at(13.9)).toMatchObject({ staleness: 'aging', stale: false });
    expect(at(14)).toMatchObject({ staleness: 'stale', stale: true });
    expect(at(-20)).toMatchObject({ staleness: 'stale', stale: true });
    expect(stalenessOf(-1)).toBe('fresh');
  });
});
