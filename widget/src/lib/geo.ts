/** Footprint and orbital speed from a sub-satellite point; pure maths. */
import { geoCircle } from 'd3-geo';
import type { Polygon } from 'geojson';

/** WGS-84 equatorial radius, km (NIMA TR8350.2). */
export const EARTH_RADIUS_KM = 6378.137;
/** WGS-84 gravitational parameter, km^3/s^2 (NIMA TR8350.2). */
export const MU_KM3_S2 = 398600.4418;

/**
 * Earth central angle of the footprint, degrees (Wertz, SMAD section 5.2):
 * sin(rho) = Re / (Re + H); sin(eta) = sin(rho) cos(eps); lambda = 90 - eps - eta.
 */
export function footprintAngleDeg(altKm: number, minElevDeg = 0): number {
  const rad = Math.PI / 180;
  const sinRho = EARTH_RADIUS_KM / (EARTH_RADIUS_KM + Math.max(0, altKm));
  const eta = Math.asin(sinRho * Math.cos(minElevDeg * rad)) / rad;
  return 90 - minElevDeg - eta;
}

/** The footprint as a polygon (a small circle) d3-geo can draw on any projection. */
export function footprintPolygon(lat: number, lon: number, altKm: number, minElevDeg = 0): Polygon {
  return geoCircle()
    .center([lon, lat])
    .radius(footprintAngleDeg(altKm, minElevDeg))
    .precision(3)() as Polygon;
}

/** Orbital speed by the vis-viva equation v^2 = mu (2/r - 1/a); r from the altitude above the equatorial radius. */
export function speedKmS(altKm: number, semiMajorAxisKm: number): number {
  const r = EARTH_RADIUS_KM + altKm;
  return Math.sqrt(MU_KM3_S2 * Math.max(0, 2 / r - 1 / semiMajorAxisKm));
}
