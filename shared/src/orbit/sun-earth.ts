/**
 * The Sun over the Earth and circles on the sphere: sub-solar point, terminator and twilight
 * polygons, footprints. Polygons are spherical: d3-geo joins vertices by great-circle arcs and
 * takes the ring's winding to tell inside from outside (clockwise as seen on a map = the small
 * side), so a ring built like d3.geoCircle draws correctly on every projection, across the
 * antimeridian and around a pole. That winding is the reverse of RFC 7946's advisory
 * right-hand rule, which RFC 7946 section 3.1.6 tells parsers not to reject.
 */
import type { Polygon } from 'geojson';
import type { GeoPoint } from '../types.ts';
import {
  ASTRONOMICAL_TWILIGHT_DEG,
  CIVIL_TWILIGHT_DEG,
  DEG_PER_RAD,
  EARTH_RADIUS_WGS84_KM,
  NAUTICAL_TWILIGHT_DEG,
  RAD_PER_DEG,
  SUNRISE_ELEVATION_DEG,
} from './constants.ts';
import { gmstRad, sunVector, wrapLonDeg } from './frames.ts';

/**
 * Where the Sun stands at the zenith at `ms`: latitude = the Sun's declination, longitude =
 * its right ascension minus Greenwich mean sidereal time (Vallado's solar ephemeris and GMST via
 * satellite.js; the Sun is far enough that geodetic and geocentric latitude agree here).
 */
export function subsolarPoint(ms: number): GeoPoint {
  const sun = sunVector(ms);
  const lonRad = Math.atan2(sun.y, sun.x) - gmstRad(ms);
  return {
    latDeg: Math.asin(Math.max(-1, Math.min(1, sun.z))) * DEG_PER_RAD,
    lonDeg: wrapLonDeg(lonRad * DEG_PER_RAD),
  };
}

/** The point opposite `p` on the sphere. */
export function antipode(p: GeoPoint): GeoPoint {
  return { latDeg: -p.latDeg, lonDeg: wrapLonDeg(p.lonDeg + 180) };
}

/**
 * A closed ring of `points` vertices (plus the closing repeat) at angular distance `radiusDeg`
 * from the centre, walked with increasing bearing (north, east, south, west: clockwise on a map),
 * which d3-geo reads as the small circle's inside. Spherical direct problem:
 * lat = asin(sin lat0 cos r + cos lat0 sin r cos b),
 * lon = lon0 + atan2(sin b sin r cos lat0, cos r - sin lat0 sin lat) (any spherical trigonometry text).
 */
export function smallCircleRing(centre: GeoPoint, radiusDeg: number, points = 96): number[][] {
  const n = Math.max(4, Math.floor(points));
  const lat0 = centre.latDeg * RAD_PER_DEG;
  const r = radiusDeg * RAD_PER_DEG;
  const sinLat0 = Math.sin(lat0);
  const cosLat0 = Math.cos(lat0);
  const sinR = Math.sin(r);
  const cosR = Math.cos(r);
  const ring: number[][] = [];
  for (let k = 0; k < n; k++) {
    const b = (2 * Math.PI * k) / n;
    const sinLat = sinLat0 * cosR + cosLat0 * sinR * Math.cos(b);
    const lat = Math.asin(Math.max(-1, Math.min(1, sinLat)));
    const dLon = Math.atan2(Math.sin(b) * sinR * cosLat0, cosR - sinLat0 * sinLat);
    ring.push([wrapLonDeg(centre.lonDeg + dLon * DEG_PER_RAD), lat * DEG_PER_RAD]);
  }
  const first = ring[0] as number[];
  ring.push([first[0] as number, first[1] as number]);
  return ring;
}

/** A GeoJSON Polygon of the spherical cap of `radiusDeg` around `centre` (d3-geo winding). */
export function capPolygon(centre: GeoPoint, radiusDeg: number, points = 96): Polygon {
  return { type: 'Polygon', coordinates: [smallCircleRing(centre, radiusDeg, points)] };
}

/**
 * The NIGHT side at `ms`: where the Sun stands below `sunElevationDeg` (default -0.833 deg,
 * sunset with refraction and the Sun's semi-diameter, common practice). A point sees the Sun at
 * elevation 90 - z where z is its angular distance from the sub-solar point, so the region is
 * the cap of radius 90 + sunElevationDeg around the antisolar point (spherical Earth).
 */
export function terminator(ms: number, sunElevationDeg: number = SUNRISE_ELEVATION_DEG, points = 180): Polygon {
  return capPolygon(antipode(subsolarPoint(ms)), 90 + sunElevationDeg, points);
}

export interface TwilightBands {
  /** Sun below -6 deg. */
  civil: Polygon;
  /** Sun below -12 deg. */
  nautical: Polygon;
  /** Sun below -18 deg. */
  astronomical: Polygon;
}

/**
 * Twilight boundaries at `ms` as nested night caps (common practice definitions): each polygon
 * covers everywhere the Sun is below its threshold, so drawing them stacked with a little
 * opacity each shades the civil, nautical and astronomical bands.
 */
export function twilightBands(ms: number, points = 180): TwilightBands {
  const anti = antipode(subsolarPoint(ms));
  return {
    civil: capPolygon(anti, 90 + CIVIL_TWILIGHT_DEG, points),
    nautical: capPolygon(anti, 90 + NAUTICAL_TWILIGHT_DEG, points),
    astronomical: capPolygon(anti, 90 + ASTRONOMICAL_TWILIGHT_DEG, points),
  };
}

export interface FootprintRadius {
  /** Earth central angle from the sub-satellite point to the footprint edge, deg. */
  centralAngleDeg: number;
  /** The same along the surface of a sphere of WGS-84 equatorial radius, km. */
  radiusKm: number;
}

/**
 * Footprint of a satellite at `altKm` for a minimum elevation (Wertz, Space Mission Analysis and
 * Design, section 5.2): sin rho = Re / (Re + H); sin eta = sin rho cos eps;
 * lambda = 90 deg - eps - eta. Altitudes at or below zero, or a mask outside (-90, 90) deg, give
 * an empty footprint.
 */
export function footprintRadius(altKm: number, minElevationDeg = 0): FootprintRadius {
  if (!(altKm > 0) || !Number.isFinite(altKm) || !(minElevationDeg < 90 && minElevationDeg > -90)) {
    return { centralAngleDeg: 0, radiusKm: 0 };
  }
  const re = EARTH_RADIUS_WGS84_KM;
  const eps = minElevationDeg * RAD_PER_DEG;
  const sinRho = re / (re + altKm);
  const eta = Math.asin(sinRho * Math.cos(eps));
  const lambda = Math.max(0, Math.PI / 2 - eps - eta);
  return { centralAngleDeg: lambda * DEG_PER_RAD, radiusKm: lambda * re };
}

/**
 * The footprint edge as a GeoJSON Polygon around the sub-satellite point (a spherical cap with
 * d3-geo winding: correct over a pole and across the antimeridian).
 */
export function footprintCircle(
  latDeg: number,
  lonDeg: number,
  altKm: number,
  minElevationDeg = 0,
  points = 96,
): Polygon {
  const { centralAngleDeg } = footprintRadius(altKm, minElevationDeg);
  return capPolygon({ latDeg, lonDeg }, centralAngleDeg, points);
}
