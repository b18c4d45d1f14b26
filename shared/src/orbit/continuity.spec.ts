/**
 * Continuity check against an independent computation (satellite.js twoline2satrec + sgp4 and
 * vector algebra written out here) and against synthesized cases: a clean successor, a raised
 * orbit, a different object in the same plane and one in another plane. The invented sets are
 * written as TLEs (AIAA 2006-6753 Appendix B columns, references.md).
 */
import { sgp4, twoline2satrec } from 'satellite.js';
import { describe, expect, it } from 'vitest';
import { parseTle } from '../elements/tle.ts';
import { toSatrec } from '../elements/satrec.ts';
import type { ElementSet } from '../types.ts';
import { carryForward, checkContinuity, classify, type ContinuityReport } from './continuity.ts';
import { MS_PER_DAY } from './constants.ts';
import { TEST_ORBITS } from './testing/orbits.ts';
import { synthTle, type SynthElements } from './testing/synth-tle.ts';

function set(el: SynthElements): { elementSet: ElementSet; satrec: ReturnType<typeof toSatrec>; lines: [string, string] } {
  const lines = synthTle(el);
  const r = parseTle(lines.join('\n'));
  if (!r.ok) throw new Error(r.message);
  return { elementSet: r.elementSet, satrec: toSatrec(r.elementSet), lines };
}

const base: SynthElements = { ...TEST_ORBITS.polar, bstar: 0 };
const RAD = 180 / Math.PI;

/**
 * The mean elements a clean successor carries `days` later: mean anomaly, node and perigee moved
 * by SGP4's own secular rates (satrec.mdot, nodedot, argpdot, rad/min; AIAA 2006-6753 sgp4init).
 */
function successor(el: SynthElements, days: number, changes: Partial<SynthElements> = {}): SynthElements {
  const s = twoline2satrec(...synthTle(el));
  const min = days * 1440;
  const wrap = (d: number) => ((d % 360) + 360) % 360;
  return {
    ...el,
    epochMs: el.epochMs + days * MS_PER_DAY,
    meanAnomalyDeg: wrap(el.meanAnomalyDeg + s.mdot * min * RAD),
    raanDeg: wrap(el.raanDeg + s.nodedot * min * RAD),
    argPerigeeDeg: wrap(el.argPerigeeDeg + s.argpdot * min * RAD),
    ...changes,
  };
}

function report(prev: SynthElements, next: SynthElements): ContinuityReport {
  const r = checkContinuity(set(prev), set(next));
  if (!r.ok) throw new Error(`${r.code}: ${r.message}`);
  return r;
}

describe('checkContinuity figures against an independent satellite.js computation', () => {
  it('position difference and its radial / along-track / cross-track parts agree to 1 mm', () => {
    const next = successor(base, 2, { meanAnomalyDeg: successor(base, 2).meanAnomalyDeg + 0.05 });
    const r = report(base, next);
    // Independent: satellite.js straight from the TLE text, RIC axes built here.
    const a = twoline2satrec(...synthTle(base));
    const b = twoline2satrec(...synthTle(next));
    const tsince = (next.epochMs - base.epochMs) / 60_000;
    const pa = sgp4(a, tsince);
    const pb = sgp4(b, 0);
    if (!pa || !pb) throw new Error('sgp4 failed');
    const d = [pa.position.x - pb.position.x, pa.position.y - pb.position.y, pa.position.z - pb.position.z];
    const rv = [pb.position.x, pb.position.y, pb.position.z];
    const vv = [pb.velocity.x, pb.velocity.y, pb.velocity.z];
    const n = (u: number[]) => Math.hypot(...u);
    const dotp = (u: number[], w: number[]) => u.reduce((s, x, i) => s + x * (w[i] as number), 0);
    const crossp = (u: number[], w: number[]) => [
      (u[1] as number) * (w[2] as number) - (u[2] as number) * (w[1] as number),
      (u[2] as number) * (w[0] as number) - (u[0] as number) * (w[2] as number),
      (u[0] as number) * (w[1] as number) - (u[1] as number) * (w[0] as number),
    ];
    const R = rv.map((x) => x / n(rv));
    const h = crossp(rv, vv);
    const W = h.map((x) => x / n(h));
    const S = crossp(W, R);
    expect(r.positionDifferenceKm).toBeCloseTo(n(d), 6);
    expect(r.radialKm).toBeCloseTo(dotp(d, R), 6);
    expect(r.alongTrackKm).toBeCloseTo(dotp(d, S), 6);
    expect(r.crossTrackKm).toBeCloseTo(dotp(d, W), 6);
    expect(r.alongTrackTimingS).toBeCloseTo(dotp(d, S) / n(vv), 6);
    // 0.05 deg of mean anomaly ahead on a ~7080 km orbit is about 6.2 km along the track (2 pi a / 360 * 0.05).
    expect(Math.abs(r.alongTrackKm)).toBeGreaterThan(5);
    expect(r.alongTrackKm).toBeLessThan(0); // the new set is ahead, so the previous prediction lags
    expect(r.classification).toBe('continues');
  });
});

describe('checkContinuity on synthesized cases', () => {
  it('a clean successor one day later continues the orbit (well under a kilometre)', () => {
    const r = report(base, successor(base, 1));
    expect(r.classification).toBe('continues');
    expect(r.summary).toBe('continues the orbit');
    expect(r.positionDifferenceKm).toBeLessThan(1);
    expect(Math.abs(r.alongTrackTimingS)).toBeLessThan(0.2);
    expect(Math.abs(r.semiMajorAxisChangeKm)).toBeLessThan(0.01);
    expect(Math.abs(r.raanChangeDeg)).toBeLessThan(0.001);
    expect(r.spanDays).toBeCloseTo(1, 9);
  });

  it('a successor 20 km higher is an orbit raised (manoeuvre likely)', () => {
    // a = (mu / n^2)^(1/3): raising a by 20 km lowers n by 1.5 * 20 / a of itself (references.md relation, differentiated).
    const a0 = Math.cbrt(398600.4418 / ((base.meanMotionRevPerDay * 2 * Math.PI) / 86400) ** 2);
    const n1 = base.meanMotionRevPerDay * (1 - (1.5 * 20) / a0);
    const r = report(base, successor(base, 1, { meanMotionRevPerDay: n1 }));
    expect(r.classification).toBe('manoeuvre');
    expect(r.summary).toBe('orbit raised or lowered (manoeuvre likely)');
    expect(r.semiMajorAxisChangeKm).toBeGreaterThan(19);
    expect(r.semiMajorAxisChangeKm).toBeLessThan(21);
    expect(r.radialKm).toBeLessThan(-15); // the previous prediction sits below the raised orbit
    expect(r.reason).toMatch(/raised/);
  });

  it('another object in the same plane (40 deg further along) does not continue', () => {
    const s = successor(base, 1);
    const r = report(base, { ...s, meanAnomalyDeg: (s.meanAnomalyDeg + 40) % 360 });
    expect(r.classification).toBe('does-not-continue');
    expect(r.summary).toBe('does not continue (check the catalog number and the source)');
    expect(r.positionDifferenceKm).toBeGreaterThan(4000);
    expect(Math.abs(r.alongTrackTimingS)).toBeGreaterThan(500);
  });

  it('an object in another plane, or under another catalog number, does not continue', () => {
    const s = successor(base, 1);
    expect(report(base, { ...s, inclinationDeg: 97.0 }).classification).toBe('does-not-continue');
    expect(report(base, { ...s, raanDeg: s.raanDeg + 3 }).classification).toBe('does-not-continue');
    const other = report(base, { ...s, catalogNumber: 90002 });
    expect(other.classification).toBe('does-not-continue');
    expect(other.catalogNumberChanged).toBe(true);
  });

  it('a set older than the previous one is compared backwards in time', () => {
    const r = report(successor(base, 3), base);
    expect(r.spanDays).toBeCloseTo(-3, 9);
    expect(r.classification).toBe('continues');
  });

  it('a set more than 365 days on cannot be checked (too-far-from-epoch)', () => {
    const r = checkContinuity(set(base), set(successor(base, 400)));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.code).toBe('too-far-from-epoch');
  });

  it('the tolerance grows with the span: 30 km after 5 days still continues, after half a day it does not', () => {
    const f = { spanDays: 5, positionDifferenceKm: 30, radialKm: 0, alongTrackKm: 30, crossTrackKm: 0, alongTrackTimingS: 4, semiMajorAxisChangeKm: 0.1, eccentricityChange: 0, inclinationChangeDeg: 0, raanChangeDeg: 0, catalogNumberChanged: false, previousEpoch: '', epoch: '' };
    expect(classify(f).classification).toBe('continues');
    expect(classify({ ...f, spanDays: 0.5 }).classification).toBe('does-not-continue');
  });

  it('a raised orbit whose position still lies within the tolerance is a manoeuvre all the same', () => {
    const f = { spanDays: 3, positionDifferenceKm: 20, radialKm: -20, alongTrackKm: 0, crossTrackKm: 0, alongTrackTimingS: 0, semiMajorAxisChangeKm: 20, eccentricityChange: 0, inclinationChangeDeg: 0, raanChangeDeg: 0, catalogNumberChanged: false, previousEpoch: '', epoch: '' };
    expect(classify(f).classification).toBe('manoeuvre');
    // Drag allowance: 1 km + 0.5 km/day of span (CONTINUITY_POLICY).
    expect(classify({ ...f, semiMajorAxisChangeKm: -2.4, positionDifferenceKm: 5 }).classification).toBe('continues');
  });
});

describe('carryForward', () => {
  it('makes a successor that continues the orbit (under a kilometre a day later)', () => {
    const prev = set(base);
    const next = carryForward(prev.elementSet, prev.satrec, prev.elementSet.epochMs + MS_PER_DAY);
    expect(next.epochIso).toBe(new Date(prev.elementSet.epochMs + MS_PER_DAY).toISOString().replace('Z', '000Z'));
    const r = checkContinuity(prev, { elementSet: next, satrec: toSatrec(next) });
    if (!r.ok) throw new Error(r.message);
    expect(r.classification).toBe('continues');
    expect(r.positionDifferenceKm).toBeLessThan(1);
  });
});
