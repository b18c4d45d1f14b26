/**
 * The path of a pass across the observer's sky: azimuth and elevation from rise to set at a
 * fixed step, with whether the satellite is sunlit and whether the observer's sky is dark
 * (the Sun below civil twilight, -6 deg, the same test as a pass's `visible`).
 */
import type { SatRec } from 'satellite.js';
import type { Result } from '../types.ts';
import { CIVIL_TWILIGHT_DEG } from './constants.ts';
import { gmstRad, isSunlit, sunVector } from './frames.ts';
import { eciStateToEcef, lookAnglesFromEcef, observerSite, sunElevationDeg, validateObserver } from './observer.ts';
import type { Observer, ObserverErrorCode } from './observer.ts';
import type { Pass } from './passes.ts';
import { propagateEci } from './propagate.ts';

export interface SkyPoint {
  /** Unix ms. */
  t: number;
  /** Clockwise from true north, deg in [0, 360). */
  azimuthDeg: number;
  /** Above the geodetic horizon, deg. */
  elevationDeg: number;
  /** The satellite sees the Sun's centre. */
  sunlit: boolean;
  /** The observer's Sun is below -6 deg (civil twilight or darker). */
  dark: boolean;
}

/** Default step of a sky path, s. */
export const SKY_PATH_STEP_S = 10;
/** No path holds more points than this; long passes (high orbits) get a coarser step. */
export const SKY_PATH_MAX_POINTS = 200;

/**
 * The step a path over [riseMs, setMs] uses: `stepS` (default 10 s), made coarser when the pass
 * would need more than SKY_PATH_MAX_POINTS points.
 */
export function skyPathStepS(riseMs: number, setMs: number, stepS = SKY_PATH_STEP_S): number {
  const span = Math.max(0, setMs - riseMs) / 1000;
  return Math.max(stepS, Math.ceil(span / (SKY_PATH_MAX_POINTS - 1)));
}

/**
 * Sky path of one pass: a point at rise, every step after it, and one at set (the last step
 * is shorter when the pass does not divide evenly).
 */
export function skyPath(
  satrec: SatRec,
  observer: Observer,
  pass: Pick<Pass, 'rise' | 'set'>,
  stepS = SKY_PATH_STEP_S,
): Result<{ points: SkyPoint[]; stepS: number }, ObserverErrorCode> {
  const bad = validateObserver(observer);
  if (bad) return { ok: false, code: 'invalid-observer', message: bad };
  const site = observerSite(observer);
  const step = skyPathStepS(pass.rise.t, pass.set.t, stepS);
  const times: number[] = [];
  for (let t = pass.rise.t; t < pass.set.t; t += step * 1000) times.push(t);
  times.push(pass.set.t);
  const points: SkyPoint[] = [];
  for (const t of times) {
    const s = propagateEci(satrec, t);
    if (!s.ok) return { ...s, message: `at ${new Date(t).toISOString()}: ${s.message}` };
    const gmst = gmstRad(t);
    const ecef = eciStateToEcef(s.position, s.velocity, gmst);
    const la = lookAnglesFromEcef(site, ecef.r);
    const sun = sunVector(t);
    points.push({
      t,
      azimuthDeg: la.azimuthDeg,
      elevationDeg: la.elevationDeg,
      sunlit: isSunlit(s.position, sun),
      dark: sunElevationDeg(site, sun, gmst) < CIVIL_TWILIGHT_DEG,
    });
  }
  return { ok: true, points, stepS: step };
}
