/**
 * SGP4 propagation behind an honest result. satellite.js's `sgp4` may return null (and leave a
 * code in `satrec.error`), may hand back positions for an object that decayed long ago, and
 * will happily run centuries from epoch; `propagateAt` turns each of those into a Failure.
 */
import { checkForDecay, sgp4 } from 'satellite.js';
import type { SatRec } from 'satellite.js';
import type { Failure, Result } from '../types.ts';
import { MAX_PROPAGATION_SPAN_DAYS, MS_PER_DAY, MS_PER_MIN } from './constants.ts';
import { cartesianToGeodetic, gmstRad, msFromJulianDate, toDeg } from './frames.ts';
import type { Vec3 } from './frames.ts';

/** Why a propagation failed. The first six follow SGP4's error numbers 1..6 (AIAA 2006-6753). */
export type PropagationErrorCode =
  | 'mean-eccentricity' // 1: mean eccentricity outside 0 <= e < 1
  | 'mean-motion' // 2: mean motion fell below zero
  | 'perturbed-eccentricity' // 3: perturbed eccentricity outside 0 <= e < 1
  | 'semi-latus-rectum' // 4: semi-latus rectum fell below zero
  | 'suborbital' // 5: epoch elements sub-orbital (disabled in current SGP4, kept for completeness)
  | 'decayed' // 6: the orbit has decayed, or satellite.js's community decay check says so
  | 'too-far-from-epoch' // Nadirline policy: more than MAX_PROPAGATION_SPAN_DAYS from epoch
  | 'invalid-time' // the time is not a finite number
  | 'non-finite'; // SGP4 answered, but with NaN or Infinity somewhere

export type PropagationFailure = Failure<PropagationErrorCode>;

/** State of a satellite at one instant. Positions and velocities in TEME (the SGP4 frame). */
export interface OrbitState {
  /** Unix ms. */
  t: number;
  positionEciKm: Vec3;
  velocityEciKmS: Vec3;
  /** WGS-84 geodetic latitude, deg. */
  latDeg: number;
  /** Longitude, deg in [-180, 180). */
  lonDeg: number;
  /** Height above the WGS-84 ellipsoid, km. */
  altKm: number;
  /** Inertial speed, km/s. */
  speedKmS: number;
}

export type PropagationResult = Result<OrbitState, PropagationErrorCode>;

const SGP4_ERRORS: Record<number, { code: PropagationErrorCode; text: string }> = {
  1: { code: 'mean-eccentricity', text: 'mean eccentricity left the range 0 <= e < 1' },
  2: { code: 'mean-motion', text: 'mean motion fell below zero' },
  3: { code: 'perturbed-eccentricity', text: 'perturbed eccentricity left the range 0 <= e < 1' },
  4: { code: 'semi-latus-rectum', text: 'the semi-latus rectum fell below zero' },
  5: { code: 'suborbital', text: 'the epoch elements are sub-orbital' },
  6: { code: 'decayed', text: 'the orbit has decayed (the computed position is below the surface)' },
};

/** Unix ms of the element set's epoch as satellite.js holds it (jdsatepoch). */
export function satrecEpochMs(satrec: SatRec): number {
  return msFromJulianDate(satrec.jdsatepoch);
}

/** Raw ECI state, for the modules that need speed (track sampler, pass finder). */
export interface EciState {
  ok: true;
  position: Vec3;
  velocity: Vec3;
}

function fail(code: PropagationErrorCode, message: string): PropagationFailure {
  return { ok: false, code, message };
}

/**
 * Propagate to `tMs` with all the checks of `propagateAt` but no geodetic conversion.
 * `epochMs` may be passed in by loops that already know it.
 */
export function propagateEci(
  satrec: SatRec,
  tMs: number,
  epochMs: number = satrecEpochMs(satrec),
): EciState | PropagationFailure {
  if (!Number.isFinite(tMs)) return fail('invalid-time', `time ${String(tMs)} is not a finite number`);
  const spanMs = tMs - epochMs;
  if (Math.abs(spanMs) > MAX_PROPAGATION_SPAN_DAYS * MS_PER_DAY) {
    const days = (spanMs / MS_PER_DAY).toFixed(1);
    return fail(
      'too-far-from-epoch',
      `${days} days from the element-set epoch; Nadirline propagates at most ${MAX_PROPAGATION_SPAN_DAYS} days either side`,
    );
  }
  let pv: ReturnType<typeof sgp4>;
  try {
    pv = sgp4(satrec, spanMs / MS_PER_MIN);
  } catch (err) {
    // satellite.js does not throw on bad elements that we know of; stay honest if it ever does.
    return fail('non-finite', `SGP4 failed: ${err instanceof Error ? err.message : String(err)}`);
  }
  if (pv === null || satrec.error !== 0) {
    const known = SGP4_ERRORS[satrec.error];
    // Long after re-entry SGP4 often trips over its eccentricity checks first; the drag factor
    // (satellite.js's community decay check) tells the real story.
    if (checkForDecay(satrec) && known?.code !== 'decayed') {
      return fail('decayed', `the object has decayed (drag brought the orbit down; SGP4 error ${satrec.error}: ${known?.text ?? 'unknown'})`);
    }
    if (known) return fail(known.code, `SGP4 error ${satrec.error}: ${known.text}`);
    return fail('non-finite', `SGP4 gave no position (error ${String(satrec.error)})`);
  }
  if (checkForDecay(satrec)) {
    return fail('decayed', 'the object has decayed (satellite.js community decay check)');
  }
  const { position: r, velocity: v } = pv;
  if (
    !Number.isFinite(r.x) || !Number.isFinite(r.y) || !Number.isFinite(r.z) ||
    !Number.isFinite(v.x) || !Number.isFinite(v.y) || !Number.isFinite(v.z)
  ) {
    return fail('non-finite', 'SGP4 returned a position or velocity that is not a finite number');
  }
  return { ok: true, position: r, velocity: v };
}

/**
 * State of the satellite at `tMs` (Unix ms): TEME position and velocity, WGS-84 geodetic point,
 * altitude and speed; or a Failure naming the SGP4 error, the decay, or the time limit.
 * Never a NaN in an ok result.
 */
export function propagateAt(satrec: SatRec, tMs: number): PropagationResult {
  const s = propagateEci(satrec, tMs);
  if (!s.ok) return s;
  const { position: r, velocity: v } = s;
  const g = cartesianToGeodetic(r.x, r.y, r.z, gmstRad(tMs));
  const state: OrbitState = {
    t: tMs,
    positionEciKm: { x: r.x, y: r.y, z: r.z },
    velocityEciKmS: { x: v.x, y: v.y, z: v.z },
    latDeg: toDeg(g.latRad),
    lonDeg: toDeg(g.lonRad),
    altKm: g.altKm,
    speedKmS: Math.sqrt(v.x * v.x + v.y * v.y + v.z * v.z),
  };
  if (!Number.isFinite(state.latDeg) || !Number.isFinite(state.lonDeg) || !Number.isFinite(state.altKm)) {
    return fail('non-finite', 'the geodetic conversion gave a value that is not a finite number');
  }
  return { ok: true, ...state };
}
