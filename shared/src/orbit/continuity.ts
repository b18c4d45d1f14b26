/**
 * Continuity check of an upload: does the new element set continue the orbit of the set it
 * follows? The previous set is propagated to the new set's epoch and compared with the new set
 * there (SGP4, TEME). The position difference is split into radial, along-track and
 * cross-track parts in the new set's own frame (radial along r, cross-track along r x v,
 * along-track completing the right-handed triad: the RSW / RIC frame, Vallado section 3.3), and
 * the along-track part is also given as a timing (along-track km over the new set's speed).
 * Mean elements are compared too: semi-major axis, eccentricity, inclination, and RAAN after
 * carrying the previous node forward by its secular drift.
 */
import type { SatRec } from 'satellite.js';
import { toSatrec } from '../elements/satrec.ts';
import type { ElementSet, Result } from '../types.ts';
import { MS_PER_DAY, MS_PER_MIN } from './constants.ts';
import type { Vec3 } from './frames.ts';
import { semiMajorAxisKmFromMeanMotion } from './elements-derived.ts';
import { propagateEci } from './propagate.ts';
import type { PropagationErrorCode } from './propagate.ts';

export type ContinuityClass = 'continues' | 'manoeuvre' | 'does-not-continue';

/** Plain words for each class, the same everywhere Nadirline shows them. */
export const CONTINUITY_WORDS: Record<ContinuityClass, string> = {
  continues: 'continues the orbit',
  manoeuvre: 'orbit raised or lowered (manoeuvre likely)',
  'does-not-continue': 'does not continue (check the catalog number and the source)',
};

export interface ContinuityReport {
  /** Epochs compared, ISO 8601 UTC. */
  previousEpoch: string;
  epoch: string;
  /** New epoch minus previous epoch, days (negative when the new set is older). */
  spanDays: number;
  /** |r_previous - r_new| at the new epoch, km. */
  positionDifferenceKm: number;
  /** Parts of r_previous - r_new in the new set's radial / along-track / cross-track frame, km. */
  radialKm: number;
  alongTrackKm: number;
  crossTrackKm: number;
  /** Along-track difference as time, s: positive when the previous set's prediction runs ahead of the new set. */
  alongTrackTimingS: number;
  /** New minus previous, mean elements. Semi-major axis from mean motion (two-body, WGS-84), km. */
  semiMajorAxisChangeKm: number;
  eccentricityChange: number;
  inclinationChangeDeg: number;
  /** New RAAN minus the previous RAAN carried to the new epoch by SGP4's secular node rate, deg in (-180, 180]. */
  raanChangeDeg: number;
  /** Both sets name a catalog number and they differ. */
  catalogNumberChanged: boolean;
  classification: ContinuityClass;
  /** CONTINUITY_WORDS[classification]. */
  summary: string;
  /** One sentence on why, with the deciding figure. */
  reason: string;
}

export type ContinuityErrorCode = PropagationErrorCode;

/**
 * Nadirline policy (common practice: public mean sets are good to about a kilometre at epoch and
 * drift by kilometres a day, references.md). A successor within the tolerance of a set aged by
 * the span continues the orbit; the tolerance grows with the span.
 */
export const CONTINUITY_POLICY = {
  /** Position tolerance at zero span, km. */
  basePositionKm: 10,
  /** Extra position tolerance per day of span, km/day. */
  positionKmPerDay: 10,
  /**
   * Semi-major axis change beyond which a burn is likely, km, plus a drag allowance per day
   * (checked before the position: a raised orbit can still sit near the old prediction).
   */
  semiMajorAxisKm: 1,
  semiMajorAxisKmPerDay: 0.5,
  /** Eccentricity change beyond which a burn is likely. */
  eccentricity: 0.001,
  /** Plane changes beyond which the new set is taken to be another object, deg. */
  inclinationDeg: 0.2,
  raanDeg: 0.5,
  raanDegPerDay: 0.05,
} as const;

const sub = (a: Vec3, b: Vec3): Vec3 => ({ x: a.x - b.x, y: a.y - b.y, z: a.z - b.z });
const dot = (a: Vec3, b: Vec3): number => a.x * b.x + a.y * b.y + a.z * b.z;
const cross = (a: Vec3, b: Vec3): Vec3 => ({ x: a.y * b.z - a.z * b.y, y: a.z * b.x - a.x * b.z, z: a.x * b.y - a.y * b.x });
const norm = (a: Vec3): number => Math.sqrt(dot(a, a));
const unit = (a: Vec3): Vec3 => {
  const n = norm(a);
  return { x: a.x / n, y: a.y / n, z: a.z / n };
};
const wrap180 = (d: number): number => d - 360 * Math.ceil((d - 180) / 360);
const RAD_TO_DEG = 180 / Math.PI;

/**
 * Compare `previous` (propagated to next's epoch) with `next` at its epoch. The satrecs are the
 * ones Nadirline propagates with (toSatrec of each set). Fails when the previous set cannot be
 * propagated that far (e.g. too-far-from-epoch beyond 365 days) or the new one not at its epoch.
 */
export function checkContinuity(
  previous: { elementSet: ElementSet; satrec: SatRec },
  next: { elementSet: ElementSet; satrec: SatRec },
): Result<ContinuityReport, ContinuityErrorCode> {
  const t = next.elementSet.epochMs;
  const p = propagateEci(previous.satrec, t, previous.elementSet.epochMs);
  if (!p.ok) return p;
  const q = propagateEci(next.satrec, t, next.elementSet.epochMs);
  if (!q.ok) return q;
  const d = sub(p.position, q.position);
  const rHat = unit(q.position);
  const wHat = unit(cross(q.position, q.velocity));
  const sHat = cross(wHat, rHat);
  const alongTrackKm = dot(d, sHat);
  const speed = norm(q.velocity);
  const spanDays = (t - previous.elementSet.epochMs) / MS_PER_DAY;

  const a0 = semiMajorAxisKmFromMeanMotion(previous.elementSet.meanMotionRevPerDay);
  const a1 = semiMajorAxisKmFromMeanMotion(next.elementSet.meanMotionRevPerDay);
  const tsinceMin = (t - previous.elementSet.epochMs) / MS_PER_MIN;
  // satrec.nodedot: SGP4's secular node rate, rad/min (AIAA 2006-6753, sgp4init).
  const carriedRaanDeg = previous.elementSet.raanDeg + previous.satrec.nodedot * tsinceMin * RAD_TO_DEG;
  const report = {
    previousEpoch: previous.elementSet.epochIso,
    epoch: next.elementSet.epochIso,
    spanDays,
    positionDifferenceKm: norm(d),
    radialKm: dot(d, rHat),
    alongTrackKm,
    crossTrackKm: dot(d, wHat),
    alongTrackTimingS: alongTrackKm / speed,
    semiMajorAxisChangeKm: a1 - a0,
    eccentricityChange: next.elementSet.eccentricity - previous.elementSet.eccentricity,
    inclinationChangeDeg: next.elementSet.inclinationDeg - previous.elementSet.inclinationDeg,
    raanChangeDeg: wrap180(next.elementSet.raanDeg - carriedRaanDeg),
    catalogNumberChanged:
      previous.elementSet.catalogNumber !== '' &&
      next.elementSet.catalogNumber !== '' &&
      previous.elementSet.catalogNumber !== next.elementSet.catalogNumber,
  };
  const { classification, reason } = classify(report);
  return { ok: true, ...report, classification, summary: CONTINUITY_WORDS[classification], reason };
}

type Figures = Omit<ContinuityReport, 'classification' | 'summary' | 'reason'>;

const km = (v: number) => `${v.toFixed(v < 10 ? 2 : 1)} km`;

/** The class and the sentence that says why (thresholds: CONTINUITY_POLICY). */
export function classify(f: Figures): { classification: ContinuityClass; reason: string } {
  const P = CONTINUITY_POLICY;
  const span = Math.abs(f.spanDays);
  if (f.catalogNumberChanged) {
    return { classification: 'does-not-continue', reason: 'The catalog number differs from the previous set\u2019s.' };
  }
  const raanTol = P.raanDeg + P.raanDegPerDay * span;
  if (Math.abs(f.inclinationChangeDeg) > P.inclinationDeg || Math.abs(f.raanChangeDeg) > raanTol) {
    return {
      classification: 'does-not-continue',
      reason: `The orbit plane moved: inclination by ${f.inclinationChangeDeg.toFixed(3)}\u00b0, RAAN by ${f.raanChangeDeg.toFixed(3)}\u00b0 (more than ${P.inclinationDeg}\u00b0 / ${raanTol.toFixed(2)}\u00b0).`,
    };
  }
  const aTol = P.semiMajorAxisKm + P.semiMajorAxisKmPerDay * span;
  if (Math.abs(f.semiMajorAxisChangeKm) > aTol || Math.abs(f.eccentricityChange) > P.eccentricity) {
    const dir = f.semiMajorAxisChangeKm >= 0 ? 'raised' : 'lowered';
    return {
      classification: 'manoeuvre',
      reason: `Same plane, but the orbit was ${dir}: semi-major axis ${f.semiMajorAxisChangeKm >= 0 ? '+' : ''}${f.semiMajorAxisChangeKm.toFixed(2)} km, eccentricity ${f.eccentricityChange >= 0 ? '+' : ''}${f.eccentricityChange.toFixed(5)}; the positions differ by ${km(f.positionDifferenceKm)}.`,
    };
  }
  const posTol = P.basePositionKm + P.positionKmPerDay * span;
  if (f.positionDifferenceKm <= posTol) {
    return {
      classification: 'continues',
      reason: `The previous set predicts the new epoch's position within ${km(f.positionDifferenceKm)} (tolerance ${km(posTol)} over ${span.toFixed(2)} days).`,
    };
  }
  return {
    classification: 'does-not-continue',
    reason: `Same plane and size, but the positions differ by ${km(f.positionDifferenceKm)} (${f.alongTrackTimingS.toFixed(0)} s along the track; tolerance ${km(posTol)}).`,
  };
}

/**
 * The element set a clean successor would carry at `epochMs`: the same mean elements with mean
 * anomaly, node and perigee moved by SGP4's secular rates (satrec.mdot, nodedot, argpdot,
 * rad/min; AIAA 2006-6753 sgp4init), drag terms left out. For synthesized sets (the demo) that
 * must continue the orbit of the set before them.
 */
export function carryForward(es: ElementSet, satrec: SatRec, epochMs: number): ElementSet {
  const min = (epochMs - es.epochMs) / MS_PER_MIN;
  const wrap = (d: number) => ((d % 360) + 360) % 360;
  let next: ElementSet = {
    ...es,
    epochMs,
    epochIso: isoMicros(epochMs),
    meanAnomalyDeg: wrap(es.meanAnomalyDeg + satrec.mdot * min * RAD_TO_DEG),
    raanDeg: wrap(es.raanDeg + satrec.nodedot * min * RAD_TO_DEG),
    argPerigeeDeg: wrap(es.argPerigeeDeg + satrec.argpdot * min * RAD_TO_DEG),
  };
  // Drag moves the satellite along its track beyond the secular rates: shift the mean anomaly
  // until the new set sits where the previous one predicts (a few Newton steps, along-track km
  // over the radius as an angle).
  for (let i = 0; i < 4; i++) {
    const r = checkContinuity({ elementSet: es, satrec }, { elementSet: next, satrec: toSatrec(next) });
    if (!r.ok) break;
    if (Math.abs(r.alongTrackKm) < 1e-4) break;
    const radiusKm = semiMajorAxisKmFromMeanMotion(next.meanMotionRevPerDay);
    next = { ...next, meanAnomalyDeg: wrap(next.meanAnomalyDeg + (r.alongTrackKm / radiusKm) * RAD_TO_DEG) };
  }
  return next;
}

/** ISO 8601 with six decimals, as ElementSet.epochIso holds it. */
function isoMicros(ms: number): string {
  const whole = Math.floor(ms);
  const us = Math.round((ms - whole) * 1000);
  return `${new Date(whole).toISOString().slice(0, 23)}${String(us).padStart(3, '0')}Z`;
}
