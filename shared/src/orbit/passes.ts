/**
 * Pass prediction: a coarse scan whose step follows the satellite's angular speed (and jumps
 * over stretches where geometry proves the satellite below the mask), every local extremum of
 * elevation refined by golden-section search (so grazing passes between two coarse samples are
 * not lost), every crossing of the elevation mask refined by Brent's method. Times come out
 * within 0.02 s of the true events of the SGP4 orbit.
 */
import type { SatRec } from 'satellite.js';
import type { Result } from '../types.ts';
import { CIVIL_TWILIGHT_DEG, EARTH_RADIUS_WGS72_KM, EARTH_ROTATION_RAD_S, MS_PER_DAY, MS_PER_MIN } from './constants.ts';
import { gmstRad, isSunlit, sunVector } from './frames.ts';
import type { SunVector } from './frames.ts';
import { eciStateToEcef, lookAnglesFromEcef, observerSite, sunElevationDeg, validateObserver } from './observer.ts';
import type { LookAngles, Observer, ObserverErrorCode, ObserverSite } from './observer.ts';
import { propagateEci, satrecEpochMs } from './propagate.ts';
import type { PropagationFailure } from './propagate.ts';

export interface PassOptions {
  /** Unix ms where the search starts. */
  startMs: number;
  /** Length of the search, days (0 < days <= 14). */
  days: number;
  /** Elevation mask, deg (default 0). */
  minElevationDeg?: number;
  /** Work out `visible` (default true); when false every pass has visible: false. */
  sunlitCheck?: boolean;
}

export interface Pass {
  rise: { t: number; azimuthDeg: number };
  culmination: { t: number; azimuthDeg: number; elevationDeg: number; rangeKm: number };
  set: { t: number; azimuthDeg: number };
  /** The satellite is sunlit at some moment of the pass while the observer's Sun is below -6 deg. */
  visible: boolean;
  /** The pass was already under way at startMs: `rise` is the window start, not a true rise. */
  inProgressAtStart: boolean;
  /** The pass was still under way at the window end: `set` is the window end, not a true set. */
  inProgressAtEnd: boolean;
}

export type PassErrorCode = ObserverErrorCode | 'invalid-window';

export interface PassList {
  passes: Pass[];
  /** Above the mask for the whole window (e.g. a geostationary satellite in view): no passes. */
  alwaysUp: boolean;
}

export const MAX_PASS_SEARCH_DAYS = 14;
/** Angle the sub-satellite point may move (relative to the ground) between coarse samples, rad. */
const COARSE_STEP_RAD = (5 * Math.PI) / 180;
const MIN_STEP_MS = 2_000;
const MAX_STEP_MS = 600_000;
/** Stop refining a time once its bracket is this narrow, ms. */
const TIME_TOLERANCE_MS = 20;
/** The observer's darkness is sampled this often over a pass, ms. */
const VISIBILITY_STEP_MS = 10_000;
/** While the observer is in darkness, the satellite's sunlight is sampled at least this often, ms. */
const SUNLIT_STEP_MS = 20_000;
const SUN_REFRESH_MS = 10 * MS_PER_MIN;
const INV_PHI = (Math.sqrt(5) - 1) / 2;

/** Thrown inside the search when SGP4 fails; caught and returned as a Failure. */
export class PropagationStop extends Error {
  constructor(readonly failure: PropagationFailure) {
    super(failure.message);
  }
}

/** Everything needed to look at one satellite from one place, with a small Sun cache. */
export class SkyView {
  private readonly epochMs: number;
  readonly observerRadiusKm: number;
  private sun: SunVector;
  private sunAt: number;

  constructor(
    readonly satrec: SatRec,
    readonly site: ObserverSite,
    readonly maskDeg: number,
  ) {
    this.epochMs = satrecEpochMs(satrec);
    const o = site.ecefKm;
    this.observerRadiusKm = Math.sqrt(o.x * o.x + o.y * o.y + o.z * o.z);
    this.sunAt = Number.NaN;
    this.sun = sunVector(0);
  }

  private state(t: number): { p: { x: number; y: number; z: number }; v: { x: number; y: number; z: number } } {
    const s = propagateEci(this.satrec, t, this.epochMs);
    if (!s.ok) {
      throw new PropagationStop({ ...s, message: `at ${new Date(t).toISOString()}: ${s.message}` });
    }
    return { p: s.position, v: s.velocity };
  }

  /**
   * Elevation minus the mask (deg), the satellite's inertial angular speed about the Earth's
   * centre (rad/s: |r x v| / |r|^2) and the geocentric angle between the observer and the
   * satellite (rad).
   */
  elevation(t: number): { e: number; angularRateRadS: number; centralAngleRad: number } {
    const { p, v } = this.state(t);
    const ecef = eciStateToEcef(p, v, gmstRad(t));
    const la = lookAnglesFromEcef(this.site, ecef.r);
    const cx = p.y * v.z - p.z * v.y;
    const cy = p.z * v.x - p.x * v.z;
    const cz = p.x * v.y - p.y * v.x;
    const r2 = p.x * p.x + p.y * p.y + p.z * p.z;
    const o = this.site.ecefKm;
    const cosCentral = (ecef.r.x * o.x + ecef.r.y * o.y + ecef.r.z * o.z) / (Math.sqrt(r2) * this.observerRadiusKm);
    return {
      e: la.elevationDeg - this.maskDeg,
      angularRateRadS: Math.sqrt(cx * cx + cy * cy + cz * cz) / r2,
      centralAngleRad: Math.acos(Math.max(-1, Math.min(1, cosCentral))),
    };
  }

  /** Elevation minus mask only. */
  e(t: number): number {
    return this.elevation(t).e;
  }

  look(t: number): LookAngles {
    const { p, v } = this.state(t);
    const ecef = eciStateToEcef(p, v, gmstRad(t));
    return lookAnglesFromEcef(this.site, ecef.r, ecef.v);
  }

  private sunAtTime(t: number): SunVector {
    if (!(Math.abs(t - this.sunAt) < SUN_REFRESH_MS)) {
      this.sun = sunVector(t);
      this.sunAt = t;
    }
    return this.sun;
  }

  /** The observer's Sun elevation at t, deg. */
  observerSunElevationDeg(t: number): number {
    return sunElevationDeg(this.site, this.sunAtTime(t), gmstRad(t));
  }

  /** Whether the satellite sees the Sun's centre at t. */
  sunlitAt(t: number): boolean {
    return isSunlit(this.state(t).p, this.sunAtTime(t));
  }

  /** The pass-visibility condition at one instant: observer in (at least civil) darkness, satellite sunlit. */
  visibleAt(t: number): boolean {
    if (this.observerSunElevationDeg(t) >= CIVIL_TWILIGHT_DEG) return false;
    return this.sunlitAt(t);
  }
}

/** Brent's method for a root of f in [a, b] where f(a), f(b) differ in sign (Brent 1973, ch. 4). */
function brentRoot(f: (t: number) => number, a0: number, b0: number, fa0: number, fb0: number, tol: number): number {
  let a = a0;
  let b = b0;
  let fa = fa0;
  let fb = fb0;
  if (fa === 0) return a;
  if (fb === 0) return b;
  let c = a;
  let fc = fa;
  let d = b - a;
  let e = d;
  for (let iter = 0; iter < 100; iter++) {
    if ((fb > 0) === (fc > 0)) {
      c = a;
      fc = fa;
      d = b - a;
      e = d;
    }
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    const m = 0.5 * (c - b);
    if (Math.abs(m) <= tol || fb === 0) return b;
    if (Math.abs(e) >= tol && Math.abs(fa) > Math.abs(fb)) {
      let p: number;
      let q: number;
      const s = fb / fa;
      if (a === c) {
        p = 2 * m * s;
        q = 1 - s;
      } else {
        const qq = fa / fc;
        const r = fb / fc;
        p = s * (2 * m * qq * (qq - r) - (b - a) * (r - 1));
        q = (qq - 1) * (r - 1) * (s - 1);
      }
      if (p > 0) q = -q;
      else p = -p;
      if (2 * p < Math.min(3 * m * q - Math.abs(tol * q), Math.abs(e * q))) {
        e = d;
        d = p / q;
      } else {
        d = m;
        e = m;
      }
    } else {
      d = m;
      e = m;
    }
    a = b;
    fa = fb;
    b += Math.abs(d) > tol ? d : m > 0 ? tol : -tol;
    fb = f(b);
  }
  return b;
}

/** Golden-section search for the extremum of f on [a, b] (sign = 1: maximum, -1: minimum). */
function goldenExtremum(f: (t: number) => number, a0: number, b0: number, sign: 1 | -1, tol: number): { t: number; e: number } {
  let a = a0;
  let b = b0;
  let x1 = b - INV_PHI * (b - a);
  let x2 = a + INV_PHI * (b - a);
  let f1 = sign * f(x1);
  let f2 = sign * f(x2);
  while (b - a > tol) {
    if (f1 < f2) {
      a = x1;
      x1 = x2;
      f1 = f2;
      x2 = a + INV_PHI * (b - a);
      f2 = sign * f(x2);
    } else {
      b = x2;
      x2 = x1;
      f2 = f1;
      x1 = b - INV_PHI * (b - a);
      f1 = sign * f(x1);
    }
  }
  return f1 > f2 ? { t: x1, e: sign * f1 } : { t: x2, e: sign * f2 };
}

interface Sample {
  t: number;
  e: number;
}

function validatePassInput(observer: Observer, options: PassOptions): string | undefined {
  const bad = validateObserver(observer);
  if (bad) return bad;
  if (!Number.isFinite(options.startMs)) return 'startMs must be a finite Unix time in ms';
  if (!(options.days > 0 && options.days <= MAX_PASS_SEARCH_DAYS)) return `days must be within (0, ${MAX_PASS_SEARCH_DAYS}]`;
  const mask = options.minElevationDeg ?? 0;
  if (!Number.isFinite(mask) || mask < -90 || mask >= 90) return 'minElevationDeg must be within [-90, 90)';
  return undefined;
}

/**
 * Passes of the satellite over `observer` from `startMs` for `days` (at most 14): rise,
 * culmination and set (Unix ms, azimuth deg, culmination elevation deg and range km) above the
 * mask, and `visible`. A pass under way at the start or at the end is cut to the window and
 * flagged. A satellite above the mask for the whole window gives `alwaysUp: true` and no passes.
 */
export function findPasses(
  satrec: SatRec,
  observer: Observer,
  options: PassOptions,
): Result<PassList, PassErrorCode> {
  const bad = validatePassInput(observer, options);
  if (bad) {
    return { ok: false, code: bad.startsWith('startMs') || bad.startsWith('days') ? 'invalid-window' : 'invalid-observer', message: bad };
  }
  const view = new SkyView(satrec, observerSite(observer), options.minElevationDeg ?? 0);
  try {
    return { ok: true, ...searchPasses(view, options.startMs, options.startMs + options.days * MS_PER_DAY, options.sunlitCheck ?? true) };
  } catch (err) {
    if (err instanceof PropagationStop) return err.failure;
    throw err;
  }
}

/**
 * Bounds for skipping: the largest geocentric angle from the observer at which the satellite can
 * be above the mask, and the fastest the satellite's direction can move over the ground.
 * Spherical geometry: a satellite at radius r seen from radius Ro at elevation eps lies
 * acos((Ro / r) cos eps) - eps from the observer (Wertz SMAD 5.2 with the observer's radius).
 * Margins cover the ellipsoid (geodetic and geocentric vertical differ by < 0.2 deg, common
 * practice) and the periodic terms SGP4 adds to the mean elements.
 */
function horizonReach(view: SkyView): { maxCentralAngleRad: number; maxRateRadS: number } | undefined {
  const { satrec } = view;
  const e = Math.min(0.999, satrec.ecco + 0.02);
  const apogeeKm = satrec.a * (1 + e) * EARTH_RADIUS_WGS72_KM * 1.01 + 20;
  const epsRad = (Math.max(-89, view.maskDeg - 1) * Math.PI) / 180;
  const ratio = (view.observerRadiusKm / apogeeKm) * Math.cos(epsRad);
  if (!(ratio > 0 && ratio < 1) || !(satrec.no > 0)) return undefined;
  const maxCentralAngleRad = Math.acos(ratio) - epsRad;
  // Angular rate at perigee: n (1 + e)^2 / (1 - e^2)^(3/2) (two-body, from h = r^2 dnu/dt).
  const perigeeRate = ((satrec.no / 60) * (1 + e) ** 2) / (1 - e * e) ** 1.5;
  const maxRateRadS = perigeeRate * 1.1 + EARTH_ROTATION_RAD_S * 1.01;
  if (!(maxCentralAngleRad > 0 && maxCentralAngleRad < Math.PI && Number.isFinite(maxRateRadS))) return undefined;
  return { maxCentralAngleRad, maxRateRadS };
}

function searchPasses(view: SkyView, startMs: number, endMs: number, sunlitCheck: boolean): PassList {
  const f = (t: number): number => view.e(t);
  // Coarse scan: step so the satellite moves about COARSE_STEP_RAD relative to the ground; far
  // from the observer, jump as far as the satellite surely stays below the mask.
  const reach = horizonReach(view);
  const grid: Sample[] = [];
  /** safe[k]: the satellite is surely below the mask between grid[k] and grid[k + 1]. */
  const safe: boolean[] = [];
  let t = startMs;
  for (;;) {
    const { e, angularRateRadS, centralAngleRad } = view.elevation(t);
    grid.push({ t, e });
    if (t >= endMs) break;
    let step = Math.min(MAX_STEP_MS, Math.max(MIN_STEP_MS, (COARSE_STEP_RAD / (angularRateRadS + EARTH_ROTATION_RAD_S)) * 1000));
    let isSafe = false;
    if (reach && e < 0) {
      const jump = ((centralAngleRad - reach.maxCentralAngleRad) / reach.maxRateRadS) * 1000;
      if (jump > step) {
        step = jump;
        isSafe = true;
      }
    }
    safe.push(isSafe);
    t = Math.min(endMs, t + step);
  }

  // Refine every local maximum (and every dip that stays above the mask) between coarse samples;
  // a neighbour across a safe jump does not count (the satellite is below the mask in there).
  const maxima: Sample[] = [];
  const extra: Sample[] = [];
  const n = grid.length;
  for (let k = 0; k < n; k++) {
    const cur = grid[k] as Sample;
    const prev = safe[k - 1] ? undefined : grid[k - 1];
    const next = safe[k] ? undefined : grid[k + 1];
    if (!prev && !next) {
      if (cur.e > 0 || n === 1) maxima.push(cur);
      continue;
    }
    const lo = prev ? prev.t : cur.t;
    const hi = next ? next.t : cur.t;
    if ((!prev || prev.e < cur.e) && (!next || cur.e >= next.e)) {
      const peak = goldenExtremum(f, lo, hi, 1, TIME_TOLERANCE_MS);
      const best = peak.e >= cur.e ? peak : cur;
      maxima.push(best);
      if (best !== cur) extra.push(best);
    } else if ((!prev || prev.e > cur.e) && (!next || cur.e <= next.e) && cur.e > 0) {
      const dip = goldenExtremum(f, lo, hi, -1, TIME_TOLERANCE_MS);
      if (dip.e <= 0) extra.push(dip);
    }
  }
  const pts = extra.length > 0 ? [...grid, ...extra].sort((a, b) => a.t - b.t) : grid;

  // Mask crossings.
  const crossings: { t: number; rising: boolean }[] = [];
  for (let k = 1; k < pts.length; k++) {
    const a = pts[k - 1] as Sample;
    const b = pts[k] as Sample;
    if (a.e > 0 !== b.e > 0) {
      crossings.push({ t: brentRoot(f, a.t, b.t, a.e, b.e, TIME_TOLERANCE_MS / 2), rising: b.e > 0 });
    }
  }
  const first = pts[0] as Sample;
  if (crossings.length === 0 && first.e > 0) return { passes: [], alwaysUp: true };

  // Intervals above the mask.
  const intervals: { rise: number; set: number; atStart: boolean; atEnd: boolean }[] = [];
  let riseAt: number | undefined = first.e > 0 ? startMs : undefined;
  let atStart = first.e > 0;
  for (const c of crossings) {
    if (c.rising) {
      riseAt = c.t;
    } else if (riseAt !== undefined) {
      intervals.push({ rise: riseAt, set: c.t, atStart, atEnd: false });
      riseAt = undefined;
      atStart = false;
    }
  }
  if (riseAt !== undefined) intervals.push({ rise: riseAt, set: endMs, atStart, atEnd: true });

  const passes: Pass[] = [];
  for (const iv of intervals) {
    let culm: Sample | undefined;
    for (const m of maxima) {
      if (m.t >= iv.rise && m.t <= iv.set && (!culm || m.e > culm.e)) culm = m;
    }
    if (!culm) {
      // Monotonic inside a cut window: the highest point is at an edge.
      const eRise = iv.atStart ? f(iv.rise) : 0;
      const eSet = iv.atEnd ? f(iv.set) : 0;
      culm = eRise >= eSet ? { t: iv.rise, e: eRise } : { t: iv.set, e: eSet };
    }
    const top = view.look(culm.t);
    passes.push({
      rise: { t: iv.rise, azimuthDeg: view.look(iv.rise).azimuthDeg },
      culmination: { t: culm.t, azimuthDeg: top.azimuthDeg, elevationDeg: top.elevationDeg, rangeKm: top.rangeKm },
      set: { t: iv.set, azimuthDeg: view.look(iv.set).azimuthDeg },
      visible: sunlitCheck ? passVisible(view, iv.rise, iv.set) : false,
      inProgressAtStart: iv.atStart,
      inProgressAtEnd: iv.atEnd,
    });
  }
  return { passes, alwaysUp: false };
}

/** First time in (a, b] where `test` no longer gives `from`, to within 0.5 s (bisection). */
function boolEdge(test: (t: number) => boolean, a0: number, b0: number, from: boolean): number {
  let a = a0;
  let b = b0;
  while (b - a > 500) {
    const m = (a + b) / 2;
    if (test(m) === from) a = m;
    else b = m;
  }
  return b;
}

/**
 * Whether the visibility condition holds at some instant of [rise, set]. The observer's darkness
 * needs no propagation: it is sampled every 10 s and its edges bisected to 0.5 s. Only inside the
 * dark stretches is the satellite's sunlight looked at, at both ends and at least every 20 s.
 */
function passVisible(view: SkyView, rise: number, set: number): boolean {
  const darkAt = (t: number): boolean => view.observerSunElevationDeg(t) < CIVIL_TWILIGHT_DEG;
  const steps = Math.max(1, Math.ceil((set - rise) / VISIBILITY_STEP_MS));
  const darkRuns: [number, number][] = [];
  let prevT = rise;
  let prevDark = darkAt(rise);
  let darkFrom: number | undefined = prevDark ? rise : undefined;
  for (let i = 1; i <= steps; i++) {
    const t = rise + ((set - rise) * i) / steps;
    const dark = darkAt(t);
    if (dark !== prevDark) {
      const edge = boolEdge(darkAt, prevT, t, prevDark);
      if (dark) darkFrom = edge;
      else if (darkFrom !== undefined) {
        darkRuns.push([darkFrom, Math.max(darkFrom, edge - 500)]);
        darkFrom = undefined;
      }
    }
    prevDark = dark;
    prevT = t;
  }
  if (darkFrom !== undefined) darkRuns.push([darkFrom, set]);
  for (const [a, b] of darkRuns) {
    const n = Math.max(1, Math.ceil((b - a) / SUNLIT_STEP_MS));
    for (let j = 0; j <= n; j++) {
      if (view.sunlitAt(a + ((b - a) * j) / n)) return true;
    }
  }
  return false;
}
