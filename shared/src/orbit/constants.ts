/**
 * Constants of the Nadirline orbit engine, each with its unit and the document it comes from.
 * SGP4 itself runs on WGS-72 inside satellite.js; Earth-shape work (geodetic latitude,
 * altitudes, footprints) uses WGS-84.
 */

/** WGS-72 gravitational parameter, km^3/s^2 (AIAA 2006-6753 table 2; the constants SGP4 uses). */
export const MU_WGS72_KM3_S2 = 398600.8;
/** WGS-72 equatorial radius, km (AIAA 2006-6753 table 2). */
export const EARTH_RADIUS_WGS72_KM = 6378.135;
/** WGS-72 second zonal harmonic, dimensionless (AIAA 2006-6753 table 2). */
export const J2_WGS72 = 0.001082616;

/** WGS-84 gravitational parameter, km^3/s^2 (NIMA TR8350.2). */
export const MU_WGS84_KM3_S2 = 398600.4418;
/** WGS-84 semi-major axis (equatorial radius), km (NIMA TR8350.2). */
export const EARTH_RADIUS_WGS84_KM = 6378.137;
/** WGS-84 inverse flattening, dimensionless (NIMA TR8350.2). */
export const INVERSE_FLATTENING_WGS84 = 298.257223563;
/** WGS-84 flattening, dimensionless (NIMA TR8350.2). */
export const FLATTENING_WGS84 = 1 / INVERSE_FLATTENING_WGS84;
/** WGS-84 first eccentricity squared, dimensionless: e^2 = f (2 - f) (NIMA TR8350.2). */
export const ECCENTRICITY_SQ_WGS84 = FLATTENING_WGS84 * (2 - FLATTENING_WGS84);
/** WGS-84 second zonal harmonic J2, dimensionless (NIMA TR8350.2). */
export const J2_WGS84 = 0.00108262998905;
/** Earth rotation rate, rad/s (WGS-84, NIMA TR8350.2). */
export const EARTH_ROTATION_RAD_S = 7.292115e-5;

/** Sidereal day, s (IERS; Explanatory Supplement to the Astronomical Almanac, 1992). */
export const SIDEREAL_DAY_S = 86164.0905;
/** Mean solar day, s (definition). */
export const SOLAR_DAY_S = 86400;
/** Tropical year, days (Meeus, Astronomical Algorithms, 2nd ed., ch. 27, mean tropical year). */
export const TROPICAL_YEAR_DAYS = 365.2422;

/** Astronomical unit, km (IAU 2012 resolution B2: 149 597 870.700 km). */
export const AU_KM = 149597870.7;
/** Nominal solar radius, km (IAU 2015 resolution B3). */
export const SUN_RADIUS_KM = 695700;

/** Julian date of the Unix epoch 1970-01-01T00:00Z, days (definition of the Julian date). */
export const JD_UNIX_EPOCH = 2440587.5;
/** Milliseconds per day. */
export const MS_PER_DAY = 86_400_000;
/** Milliseconds per minute. */
export const MS_PER_MIN = 60_000;

/** Degrees per radian and radians per degree. */
export const DEG_PER_RAD = 180 / Math.PI;
export const RAD_PER_DEG = Math.PI / 180;

/**
 * Sun elevation of sunrise / sunset, deg: refraction at the horizon plus the Sun's semi-diameter
 * (common practice; the value almanacs use).
 */
export const SUNRISE_ELEVATION_DEG = -0.833;
/** Twilight boundaries, Sun elevation in deg (common practice, almanac definitions). */
export const CIVIL_TWILIGHT_DEG = -6;
export const NAUTICAL_TWILIGHT_DEG = -12;
export const ASTRONOMICAL_TWILIGHT_DEG = -18;

/**
 * Nadirline policy: propagation further than this from the element-set epoch, either side, is
 * refused with `too-far-from-epoch`. SGP4 with public element sets drifts by kilometres a day
 * (references.md, common practice); a year out the position is fiction for any low orbit.
 */
export const MAX_PROPAGATION_SPAN_DAYS = 365;

/**
 * Nadirline policy for element-set age (common practice: sets older than a week or two are
 * usually treated as stale, references.md): younger than 3 days is fresh, younger than 14 days
 * is aging, anything older is stale.
 */
export const FRESH_MAX_AGE_DAYS = 3;
export const AGING_MAX_AGE_DAYS = 14;
