/**
 * Derived orbital elements for people who sanity-check an upload: size, shape, timing, the
 * J2 drift of the node, the westward shift of the ground track, and how old the set is.
 * Two-body relations on the element set's (Kozai) mean motion; Earth-shape quantities on WGS-84.
 */
import type { ElementSet } from '../types.ts';
import {
  AGING_MAX_AGE_DAYS,
  EARTH_RADIUS_WGS84_KM,
  FRESH_MAX_AGE_DAYS,
  J2_WGS84,
  MS_PER_DAY,
  MU_WGS84_KM3_S2,
  RAD_PER_DEG,
  SIDEREAL_DAY_S,
} from './constants.ts';

export type Staleness = 'fresh' | 'aging' | 'stale';

/** Field names as the `/v1/satellites/{id}/elements` route of brief.md, plus `staleness`. */
export interface DerivedElements {
  /** Epoch, ISO 8601 UTC. */
  epoch: string;
  semiMajorAxisKm: number;
  eccentricity: number;
  inclinationDeg: number;
  /** RAAN, argument of perigee and mean anomaly at epoch, deg. */
  raanDeg: number;
  argPerigeeDeg: number;
  meanAnomalyDeg: number;
  meanMotionRevPerDay: number;
  periodMin: number;
  /** Heights above the WGS-84 equatorial radius, km. */
  apogeeAltKm: number;
  perigeeAltKm: number;
  /** J2 secular drift of the ascending node, deg/day (negative: westward, prograde orbits). */
  nodalPrecessionDegPerDay: number;
  /**
   * How far west the track's next equator crossing lies, deg per revolution, taken modulo whole
   * turns into (-180, 180]: a geostationary track does not move (about 0), a 12-hour orbit's
   * alternates sides (about 180), negative means the crossing moves east.
   */
  westwardShiftPerRevDeg: number;
  /** Highest latitude the track reaches, deg (inclination, or 180 - it when retrograde). */
  latitudeLimitDeg: number;
  /** Age of the set at `atMs`, days (negative when the epoch lies after `atMs`). */
  ageDays: number;
  /** true when `staleness` is 'stale'. */
  stale: boolean;
  /** fresh under 3 days, aging under 14 days, else stale (Nadirline policy, common practice). */
  staleness: Staleness;
}

/** Staleness class of an element set `ageDays` old (the absolute age counts). */
export function stalenessOf(ageDays: number): Staleness {
  const age = Math.abs(ageDays);
  if (age < FRESH_MAX_AGE_DAYS) return 'fresh';
  if (age < AGING_MAX_AGE_DAYS) return 'aging';
  return 'stale';
}

/**
 * J2 secular rate of the ascending node, deg/day:
 * dRAAN/dt = -1.5 J2 (Re/p)^2 n cos i (Vallado, J2 secular effects; references.md).
 */
export function nodalPrecessionDegPerDay(
  semiMajorAxisKm: number,
  eccentricity: number,
  inclinationDeg: number,
  meanMotionRevPerDay: number,
): number {
  const p = semiMajorAxisKm * (1 - eccentricity * eccentricity);
  const nDegPerDay = meanMotionRevPerDay * 360;
  const ratio = EARTH_RADIUS_WGS84_KM / p;
  return -1.5 * J2_WGS84 * ratio * ratio * nDegPerDay * Math.cos(inclinationDeg * RAD_PER_DEG);
}

/** Semi-major axis from mean motion, km: a = (mu / n^2)^(1/3) (references.md, any astrodynamics text). */
export function semiMajorAxisKmFromMeanMotion(meanMotionRevPerDay: number): number {
  const nRadS = (meanMotionRevPerDay * 2 * Math.PI) / 86400;
  return Math.cbrt(MU_WGS84_KM3_S2 / (nRadS * nRadS));
}

/** Derived elements of `es`, with its age and staleness measured at `atMs` (Unix ms). */
export function deriveElements(es: ElementSet, atMs: number): DerivedElements {
  const n = es.meanMotionRevPerDay;
  const e = es.eccentricity;
  const a = semiMajorAxisKmFromMeanMotion(n);
  // T = 1440 / n minutes (references.md).
  const periodMin = 1440 / n;
  const nodal = nodalPrecessionDegPerDay(a, e, es.inclinationDeg, n);
  // Per revolution the Earth turns 360 deg per sidereal day under the orbit while the node
  // itself drifts by the J2 rate; the track shifts west by the difference (common practice).
  const earthDegPerMin = 360 / (SIDEREAL_DAY_S / 60);
  const rawShiftDeg = (earthDegPerMin - nodal / 1440) * periodMin;
  const westwardShiftPerRevDeg = rawShiftDeg - 360 * Math.ceil((rawShiftDeg - 180) / 360);
  const ageDays = (atMs - es.epochMs) / MS_PER_DAY;
  const staleness = stalenessOf(ageDays);
  return {
    epoch: es.epochIso,
    semiMajorAxisKm: a,
    eccentricity: e,
    inclinationDeg: es.inclinationDeg,
    raanDeg: es.raanDeg,
    argPerigeeDeg: es.argPerigeeDeg,
    meanAnomalyDeg: es.meanAnomalyDeg,
    meanMotionRevPerDay: n,
    periodMin,
    apogeeAltKm: a * (1 + e) - EARTH_RADIUS_WGS84_KM,
    perigeeAltKm: a * (1 - e) - EARTH_RADIUS_WGS84_KM,
    nodalPrecessionDegPerDay: nodal,
    westwardShiftPerRevDeg,
    latitudeLimitDeg: es.inclinationDeg <= 90 ? es.inclinationDeg : 180 - es.inclinationDeg,
    ageDays,
    stale: staleness === 'stale',
    staleness,
  };
}
