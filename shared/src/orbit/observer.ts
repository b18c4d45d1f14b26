/**
 * Observer geometry: look angles from a place on the ground to a satellite, and the Sun's
 * elevation there. Topocentric south-east-zenith frame (Kelso, "Orbital Coordinate Systems,
 * Part II"; the frame satellite.js ecfToLookAngles uses), Earth-fixed frame from GMST.
 */
import type { SatRec } from 'satellite.js';
import type { Result } from '../types.ts';
import { DEG_PER_RAD, EARTH_ROTATION_RAD_S, RAD_PER_DEG } from './constants.ts';
import { geodeticToEcef, gmstRad } from './frames.ts';
import type { SunVector, Vec3 } from './frames.ts';
import { propagateEci } from './propagate.ts';
import type { PropagationErrorCode } from './propagate.ts';

/** A place on the ground: WGS-84 geodetic latitude and longitude (deg), height (m). */
export interface Observer {
  latDeg: number;
  lonDeg: number;
  altM: number;
}

export interface LookAngles {
  /** Clockwise from true north, deg in [0, 360). */
  azimuthDeg: number;
  /** Above the geodetic horizon, deg (no refraction). */
  elevationDeg: number;
  rangeKm: number;
  /** Rate of change of range, km/s (positive: receding). */
  rangeRateKmS: number;
}

export type ObserverErrorCode = PropagationErrorCode | 'invalid-observer';

/** An observer with its Earth-fixed position and local axes computed once. */
export interface ObserverSite {
  observer: Observer;
  ecefKm: Vec3;
  sinLat: number;
  cosLat: number;
  sinLon: number;
  cosLon: number;
}

/** Check an observer: latitude in [-90, 90], longitude in [-180, 180], height in [-12 km, 100 km]. */
export function validateObserver(o: Observer): string | undefined {
  if (!Number.isFinite(o.latDeg) || o.latDeg < -90 || o.latDeg > 90) return 'latDeg must be within [-90, 90]';
  if (!Number.isFinite(o.lonDeg) || o.lonDeg < -180 || o.lonDeg > 180) return 'lonDeg must be within [-180, 180]';
  if (!Number.isFinite(o.altM) || o.altM < -12_000 || o.altM > 100_000) return 'altM must be within [-12000, 100000]';
  return undefined;
}

/** Precompute an observer's Earth-fixed position (WGS-84) and local axes. */
export function observerSite(observer: Observer): ObserverSite {
  const lat = observer.latDeg * RAD_PER_DEG;
  const lon = observer.lonDeg * RAD_PER_DEG;
  return {
    observer,
    ecefKm: geodeticToEcef(lat, lon, observer.altM / 1000),
    sinLat: Math.sin(lat),
    cosLat: Math.cos(lat),
    sinLon: Math.sin(lon),
    cosLon: Math.cos(lon),
  };
}

/**
 * Look angles to a target given in the Earth-fixed frame (km), with its Earth-fixed velocity
 * (km/s) for the range rate. South-east-zenith components of the range vector rho:
 * S = sin(lat)cos(lon) rx + sin(lat)sin(lon) ry - cos(lat) rz, E = -sin(lon) rx + cos(lon) ry,
 * Z = cos(lat)cos(lon) rx + cos(lat)sin(lon) ry + sin(lat) rz; az = atan2(E, -S),
 * el = atan2(Z, hypot(S, E)) (Kelso, Part II; Vallado, section 4.4).
 */
export function lookAnglesFromEcef(site: ObserverSite, targetEcefKm: Vec3, targetVelEcefKmS?: Vec3): LookAngles {
  const rx = targetEcefKm.x - site.ecefKm.x;
  const ry = targetEcefKm.y - site.ecefKm.y;
  const rz = targetEcefKm.z - site.ecefKm.z;
  const { sinLat, cosLat, sinLon, cosLon } = site;
  const s = sinLat * cosLon * rx + sinLat * sinLon * ry - cosLat * rz;
  const e = -sinLon * rx + cosLon * ry;
  const z = cosLat * cosLon * rx + cosLat * sinLon * ry + sinLat * rz;
  const horiz = Math.sqrt(s * s + e * e);
  const range = Math.sqrt(horiz * horiz + z * z);
  let az = Math.atan2(e, -s) * DEG_PER_RAD;
  if (az < 0) az += 360;
  const v = targetVelEcefKmS;
  const rangeRate = v ? (rx * v.x + ry * v.y + rz * v.z) / range : 0;
  return { azimuthDeg: az, elevationDeg: Math.atan2(z, horiz) * DEG_PER_RAD, rangeKm: range, rangeRateKmS: rangeRate };
}

/**
 * Earth-fixed position and velocity from TEME ones at sidereal angle `gmst`:
 * r_ecef = R3(gmst) r, v_ecef = R3(gmst) v - omega x r_ecef (Vallado, section 3.7).
 */
export function eciStateToEcef(r: Vec3, v: Vec3, gmst: number): { r: Vec3; v: Vec3 } {
  const c = Math.cos(gmst);
  const s = Math.sin(gmst);
  const rx = c * r.x + s * r.y;
  const ry = -s * r.x + c * r.y;
  const w = EARTH_ROTATION_RAD_S;
  return {
    r: { x: rx, y: ry, z: r.z },
    v: { x: c * v.x + s * v.y + w * ry, y: -s * v.x + c * v.y - w * rx, z: v.z },
  };
}

/** Elevation of the Sun's direction above the observer's geodetic horizon at sidereal angle `gmst`, deg. */
export function sunElevationDeg(site: ObserverSite, sun: SunVector, gmst: number): number {
  const c = Math.cos(gmst);
  const s = Math.sin(gmst);
  const x = c * sun.x + s * sun.y;
  const y = -s * sun.x + c * sun.y;
  const up = site.cosLat * site.cosLon * x + site.cosLat * site.sinLon * y + site.sinLat * sun.z;
  return Math.asin(Math.max(-1, Math.min(1, up))) * DEG_PER_RAD;
}

/** Azimuth, elevation, range and range rate of the satellite from `observer` at `tMs` (Unix ms). */
export function lookAngles(
  satrec: SatRec,
  observer: Observer,
  tMs: number,
): Result<LookAngles, ObserverErrorCode> {
  const bad = validateObserver(observer);
  if (bad) return { ok: false, code: 'invalid-observer', message: bad };
  const st = propagateEci(satrec, tMs);
  if (!st.ok) return st;
  const ecef = eciStateToEcef(st.position, st.velocity, gmstRad(tMs));
  return { ok: true, ...lookAnglesFromEcef(observerSite(observer), ecef.r, ecef.v) };
}
