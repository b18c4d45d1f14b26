/**
 * Time scales, Earth rotation, the WGS-84 ellipsoid and the Sun: the small pieces every other
 * orbit module stands on. Pure functions; angles in radians unless the name says Deg.
 */
import {
  AU_KM,
  DEG_PER_RAD,
  EARTH_RADIUS_WGS84_KM,
  ECCENTRICITY_SQ_WGS84,
  JD_UNIX_EPOCH,
  MS_PER_DAY,
  RAD_PER_DEG,
} from './constants.ts';

/** A Cartesian vector; the frame and unit are in the name of the field that holds it. */
export interface Vec3 {
  x: number;
  y: number;
  z: number;
}

const TWO_PI = 2 * Math.PI;

/** Julian date (UTC taken as UT1, common practice for SGP4 work) of a Unix time in ms. */
export function julianDateFromMs(ms: number): number {
  return ms / MS_PER_DAY + JD_UNIX_EPOCH;
}

/** Unix ms of a Julian date. */
export function msFromJulianDate(jd: number): number {
  return (jd - JD_UNIX_EPOCH) * MS_PER_DAY;
}

/**
 * Greenwich mean sidereal time, rad in [0, 2 pi) (Vallado, Fundamentals of Astrodynamics and
 * Applications, eq. 3-45, the IAU-82 polynomial SGP4 uses). Written here rather than imported
 * from satellite.js so the Sun and Earth module pulls nothing of SGP4 into the widget's bundle;
 * frames.spec.ts checks it equals satellite.js's gstime.
 */
export function gmstRad(ms: number): number {
  const tut1 = (julianDateFromMs(ms) - 2451545.0) / 36525.0;
  const sec = -6.2e-6 * tut1 * tut1 * tut1 + 0.093104 * tut1 * tut1 + (876600.0 * 3600 + 8640184.812866) * tut1 + 67310.54841;
  const rad = ((sec * RAD_PER_DEG) / 240.0) % TWO_PI; // 360 deg per 86400 s = 1/240 deg per s
  return rad < 0 ? rad + TWO_PI : rad;
}

/** Wrap an angle in degrees to [-180, 180). */
export function wrapLonDeg(lonDeg: number): number {
  const w = (((lonDeg + 180) % 360) + 360) % 360 - 180;
  return w;
}

/** Wrap an angle in degrees to [0, 360). */
export function wrap360Deg(deg: number): number {
  return ((deg % 360) + 360) % 360;
}

/** Geodetic coordinates on WGS-84, radians and km. */
export interface Geodetic {
  latRad: number;
  lonRad: number;
  altKm: number;
}

/**
 * Rotate an ECI (TEME) vector into the Earth-fixed frame by GMST (polar motion ignored, as
 * common practice with SGP4): [x y z]ecf = R3(gmst) [x y z]eci.
 */
export function eciToEcef(v: Vec3, gmst: number): Vec3 {
  const c = Math.cos(gmst);
  const s = Math.sin(gmst);
  return { x: c * v.x + s * v.y, y: -s * v.x + c * v.y, z: v.z };
}

/**
 * Earth-fixed Cartesian (km) to WGS-84 geodetic. Fixed-point iteration on latitude
 * (Kelso, "Orbital Coordinate Systems, Part III", the method satellite.js eciToGeodetic uses),
 * stopped once latitude changes by less than 1e-12 rad instead of after a fixed 20 rounds.
 * `lonOffsetRad` is subtracted from the longitude (pass GMST to start from ECI coordinates).
 */
export function cartesianToGeodetic(x: number, y: number, z: number, lonOffsetRad = 0): Geodetic {
  const a = EARTH_RADIUS_WGS84_KM;
  const e2 = ECCENTRICITY_SQ_WGS84;
  const r = Math.sqrt(x * x + y * y);
  let lon = Math.atan2(y, x) - lonOffsetRad;
  lon = ((((lon + Math.PI) % TWO_PI) + TWO_PI) % TWO_PI) - Math.PI;
  let lat = Math.atan2(z, r * (1 - e2));
  let c = 1;
  for (let k = 0; k < 12; k++) {
    const sinLat = Math.sin(lat);
    c = 1 / Math.sqrt(1 - e2 * sinLat * sinLat);
    const next = Math.atan2(z + a * c * e2 * sinLat, r);
    const done = Math.abs(next - lat) < 1e-12;
    lat = next;
    if (done) break;
  }
  const sinLat = Math.sin(lat);
  c = 1 / Math.sqrt(1 - e2 * sinLat * sinLat);
  const cosLat = Math.cos(lat);
  // Near the poles r / cos(lat) is ill-conditioned: use the z form there (same ellipsoid height).
  const altKm = Math.abs(cosLat) > 1e-3 ? r / cosLat - a * c : z / sinLat - a * c * (1 - e2);
  return { latRad: lat, lonRad: lon, altKm };
}

/** WGS-84 geodetic (radians, km) to Earth-fixed Cartesian km (NIMA TR8350.2 eq. 4-14). */
export function geodeticToEcef(latRad: number, lonRad: number, altKm: number): Vec3 {
  const a = EARTH_RADIUS_WGS84_KM;
  const e2 = ECCENTRICITY_SQ_WGS84;
  const sinLat = Math.sin(latRad);
  const cosLat = Math.cos(latRad);
  const n = a / Math.sqrt(1 - e2 * sinLat * sinLat);
  return {
    x: (n + altKm) * cosLat * Math.cos(lonRad),
    y: (n + altKm) * cosLat * Math.sin(lonRad),
    z: (n * (1 - e2) + altKm) * sinLat,
  };
}

/** The Sun as seen from the Earth's centre, in the mean-equator-of-date frame SGP4 output shares. */
export interface SunVector {
  /** Unit vector towards the Sun. */
  x: number;
  y: number;
  z: number;
  distanceKm: number;
  rightAscensionRad: number;
  declinationRad: number;
}

/**
 * Sun direction and distance (Vallado's low-precision solar ephemeris, Fundamentals of
 * Astrodynamics and Applications, algorithm 29: about 0.01 deg for 1950-2050; references.md
 * checks it against Meeus example 25.a). The same formulas as satellite.js sunPos, written here
 * so the widget can draw the night without SGP4 in its bundle; frames.spec.ts checks they agree.
 */
export function sunVector(ms: number): SunVector {
  const tut1 = (julianDateFromMs(ms) - 2451545.0) / 36525.0;
  const meanLongDeg = (280.46 + 36000.77 * tut1) % 360;
  let meanAnomaly = ((357.5277233 + 35999.05034 * tut1) * RAD_PER_DEG) % TWO_PI;
  if (meanAnomaly < 0) meanAnomaly += TWO_PI;
  const eclLong = ((meanLongDeg + 1.914666471 * Math.sin(meanAnomaly) + 0.019994643 * Math.sin(2 * meanAnomaly)) % 360) * RAD_PER_DEG;
  const obliquity = (23.439291 - 0.0130042 * tut1) * RAD_PER_DEG;
  const au = 1.000140612 - 0.016708617 * Math.cos(meanAnomaly) - 0.000139589 * Math.cos(2 * meanAnomaly);
  const rx = au * Math.cos(eclLong);
  const ry = au * Math.cos(obliquity) * Math.sin(eclLong);
  const rz = au * Math.sin(obliquity) * Math.sin(eclLong);
  // right ascension in the quadrant of the ecliptic longitude
  let ra = Math.atan(Math.cos(obliquity) * Math.tan(eclLong));
  if (Math.abs(eclLong - ra) > Math.PI / 2) ra += (Math.PI / 2) * Math.round((eclLong - ra) / (Math.PI / 2));
  const norm = Math.sqrt(rx * rx + ry * ry + rz * rz);
  return {
    x: rx / norm,
    y: ry / norm,
    z: rz / norm,
    distanceKm: norm * AU_KM,
    rightAscensionRad: ra,
    declinationRad: Math.asin(Math.sin(obliquity) * Math.sin(eclLong)),
  };
}

/**
 * Whether a satellite at `satEciKm` sees the centre of the Sun: the line of sight from the
 * satellite to the Sun's centre (at its true distance) must miss a spherical Earth of WGS-84
 * equatorial radius. This is the middle of the penumbra of the conical shadow model (the Sun is
 * more than half visible), computed without trigonometry: a ray p + s u (s > 0) meets the sphere
 * when p.u < 0 and |p|^2 - (p.u)^2 < R^2.
 */
export function isSunlit(satEciKm: Vec3, sun: SunVector): boolean {
  const sx = sun.x * sun.distanceKm - satEciKm.x;
  const sy = sun.y * sun.distanceKm - satEciKm.y;
  const sz = sun.z * sun.distanceKm - satEciKm.z;
  const inv = 1 / Math.sqrt(sx * sx + sy * sy + sz * sz);
  const pu = (satEciKm.x * sx + satEciKm.y * sy + satEciKm.z * sz) * inv;
  if (pu >= 0) return true;
  const p2 = satEciKm.x * satEciKm.x + satEciKm.y * satEciKm.y + satEciKm.z * satEciKm.z;
  return p2 - pu * pu >= EARTH_RADIUS_WGS84_KM * EARTH_RADIUS_WGS84_KM;
}

/** Radians to degrees. */
export function toDeg(rad: number): number {
  return rad * DEG_PER_RAD;
}
