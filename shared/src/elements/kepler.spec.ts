import { describe, expect, it } from 'vitest';
import type { ElementSet, ElementSetError, ParseResult } from '../types.ts';
import { MU_WGS72_KM3_S2 } from '../orbit/constants.ts';
import {
  fromKeplerian,
  meanMotionFromPeriod,
  meanMotionFromSemiMajorAxis,
  semiMajorAxisFromMeanMotion,
} from './kepler.ts';
import { parseTle, toTle } from './tle.ts';

function accepted(r: ParseResult): ElementSet {
  if (!r.ok) throw new Error(`expected an accepted set, got: ${r.message}`);
  return r.elementSet;
}

function rejected(r: ParseResult): ElementSetError {
  if (r.ok) throw new Error('expected a rejection, got an accepted set');
  return r;
}

const BASE = {
  epoch: '2026-01-15T08:30:00.250001Z',
  eccentricity: 0.0012,
  inclinationDeg: 97.4,
  raanDeg: 120,
  argPerigeeDeg: 80,
  meanAnomalyDeg: 280,
};

describe('semi-major axis, period and mean motion (references.md, "Orbit relations"; WGS-72 mu of AIAA 2006-6753 table 2)', () => {
  it('uses the WGS-72 gravitational parameter 398600.8 km^3/s^2', () => {
    expect(MU_WGS72_KM3_S2).toBe(398600.8);
  });

  it('turns a sidereal-day period into the geostationary radius of about 42164 km', () => {
    // Sidereal day 86164.0905 s (references.md); a geostationary radius near 42164 km is common practice.
    const n = meanMotionFromPeriod(86164.0905 / 60);
    expect(semiMajorAxisFromMeanMotion(n)).toBeCloseTo(42164.2, 0);
  });

  it('gives T = 1440 / n and a = (mu / n^2)^(1/3), each the inverse of the other', () => {
    expect(meanMotionFromPeriod(96)).toBe(15);
    for (const a of [6578.137, 7000, 26560, 42164.17]) {
      const n = meanMotionFromSemiMajorAxis(a);
      const nRadS = (n * 2 * Math.PI) / 86400;
      expect(nRadS ** 2 * a ** 3).toBeCloseTo(MU_WGS72_KM3_S2, 6);
      expect(semiMajorAxisFromMeanMotion(n)).toBeCloseTo(a, 9);
    }
  });
});

describe('fromKeplerian', () => {
  it('accepts each of semi-major axis, period and mean motion and gives the same mean motion', () => {
    const n = 14.5;
    const byN = accepted(fromKeplerian({ ...BASE, meanMotionRevPerDay: n }));
    const byT = accepted(fromKeplerian({ ...BASE, periodMin: 1440 / n }));
    const byA = accepted(fromKeplerian({ ...BASE, semiMajorAxisKm: semiMajorAxisFromMeanMotion(n) }));
    expect(byN.meanMotionRevPerDay).toBe(14.5);
    expect(byT.meanMotionRevPerDay).toBeCloseTo(n, 12);
    expect(byA.meanMotionRevPerDay).toBeCloseTo(n, 12);
    expect(byN).toMatchObject({ source: 'kepler', bstar: 0, classification: 'U', catalogNumber: '', name: '' });
  });

  it('keeps the epoch to the microsecond from ISO text and from Unix milliseconds', () => {
    const fromText = accepted(fromKeplerian({ ...BASE, meanMotionRevPerDay: 15 }));
    expect(fromText.epochIso).toBe('2026-01-15T08:30:00.250001Z');
    const fromMs = accepted(fromKeplerian({ ...BASE, epoch: fromText.epochMs, meanMotionRevPerDay: 15 }));
    expect(fromMs.epochIso).toBe('2026-01-15T08:30:00.250001Z');
    const withOffset = accepted(fromKeplerian({ ...BASE, epoch: '2026-01-15T10:30:00.250001+02:00', meanMotionRevPerDay: 15 }));
    expect(withOffset.epochIso).toBe('2026-01-15T08:30:00.250001Z');
  });

  it('takes optional B*, name, catalog number and designator, and writes a TLE that reads back', () => {
    const es = accepted(
      fromKeplerian({ ...BASE, periodMin: 95.2, bstar: 0.00012, name: 'NADIR FORM', catalogNumber: '99950', intlDesignator: '26001C' }),
    );
    const back = accepted(parseTle(toTle(es).text));
    expect(back).toMatchObject({ name: 'NADIR FORM', catalogNumber: '99950', intlDesignator: '26001C', bstar: 0.00012 });
    expect(back.meanMotionRevPerDay).toBeCloseTo(es.meanMotionRevPerDay, 8);
  });

  it('accepts numbers written as text, as a form sends them', () => {
    const es = accepted(fromKeplerian({ ...BASE, eccentricity: '0.0012', meanMotionRevPerDay: '15.1' } as unknown as Record<string, unknown>));
    expect(es.eccentricity).toBe(0.0012);
  });

  const errors: [string, Record<string, unknown>, Partial<ElementSetError>][] = [
    ['no size of orbit', { ...BASE }, { code: 'missing', field: 'meanMotionRevPerDay' }],
    ['two sizes of orbit', { ...BASE, periodMin: 95, meanMotionRevPerDay: 15 }, { code: 'conflict', field: 'meanMotionRevPerDay' }],
    ['a semi-major axis inside the Earth', { ...BASE, semiMajorAxisKm: 3000 }, { code: 'range', field: 'semiMajorAxisKm' }],
    ['a negative period', { ...BASE, periodMin: -95 }, { code: 'range', field: 'periodMin' }],
    ['an eccentricity of 1', { ...BASE, periodMin: 95, eccentricity: 1 }, { code: 'range', field: 'eccentricity' }],
    ['an inclination of 181 deg', { ...BASE, periodMin: 95, inclinationDeg: 181 }, { code: 'range', field: 'inclinationDeg' }],
    ['a negative mean anomaly', { ...BASE, periodMin: 95, meanAnomalyDeg: -1 }, { code: 'range', field: 'meanAnomalyDeg' }],
    ['a missing RAAN', { ...BASE, periodMin: 95, raanDeg: undefined }, { code: 'missing', field: 'raanDeg' }],
    ['Infinity as B*', { ...BASE, periodMin: 95, bstar: Infinity }, { code: 'range', field: 'bstar' }],
    ['text that is no number', { ...BASE, periodMin: 'ninety' }, { code: 'format', field: 'periodMin' }],
    ['an epoch that is no time', { ...BASE, periodMin: 95, epoch: 'tomorrow' }, { code: 'format', field: 'epoch' }],
    ['a missing epoch', { ...BASE, periodMin: 95, epoch: undefined }, { code: 'missing', field: 'epoch' }],
    ['an epoch before 1957', { ...BASE, periodMin: 95, epoch: '1950-01-01T00:00:00Z' }, { code: 'range', field: 'epoch' }],
    ['a classification other than U, C, S', { ...BASE, periodMin: 95, classification: 'X' }, { code: 'range', field: 'classification' }],
    ['a catalog number that is not whole', { ...BASE, periodMin: 95, catalogNumber: 12.5 }, { code: 'format', field: 'catalogNumber' }],
  ];
  for (const [what, input, expected] of errors) {
    it(`rejects ${what}, naming the field`, () => {
      expect(rejected(fromKeplerian(input))).toMatchObject(expected);
    });
  }

  it('rejects input that is not an object', () => {
    expect(rejected(fromKeplerian(null as unknown as Record<string, unknown>))).toMatchObject({ code: 'structure' });
  });
});
