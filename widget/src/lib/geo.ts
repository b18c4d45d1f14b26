/**
 * What the widget draws from the orbit engine: the night and twilight bands, the footprint, and
 * the orbital speed. The geometry is the engine's own (shared/src/orbit/sun-earth.ts), imported
 * module by module so the bundle takes only these functions.
 */
import type { Polygon } from 'geojson';
import { MU_WGS84_KM3_S2, EARTH_RADIUS_WGS84_KM } from '@nadirline/shared/orbit/constants.ts';
import { footprintCircle, footprintRadius, terminator, twilightBands } from '@nadirline/shared/orbit/sun-earth.ts';

/** Vertices per drawn circle: a 3-degree step, smooth at any widget size. */
const CIRCLE_POINTS = 120;

/**
 * The night side and its twilight bands as polygons d3-geo draws correctly, from the lightest
 * (the Sun below the horizon) to the darkest (astronomical night), stacked with a little opacity each.
 */
export function nightBands(ms: number): Polygon[] {
  const bands = twilightBands(ms, CIRCLE_POINTS);
  return [terminator(ms, undefined, CIRCLE_POINTS), bands.civil, bands.nautical, bands.astronomical];
}

/** Earth central angle of the footprint, degrees (the engine's footprintRadius, Wertz SMAD section 5.2). */
export function footprintAngleDeg(altKm: number, minElevDeg = 0): number {
  return footprintRadius(altKm, minElevDeg).centralAngleDeg;
}

/** The footprint as a polygon (a small circle) d3-geo can draw on any projection. */
export function footprintPolygon(lat: number, lon: number, altKm: number, minElevDeg = 0): Polygon {
  return footprintCircle(lat, lon, altKm, minElevDeg, CIRCLE_POINTS);
}

/** Orbital speed by the vis-viva equation v^2 = mu (2/r - 1/a); r from the altitude above the equatorial radius. */
export function speedKmS(altKm: number, semiMajorAxisKm: number): number {
  const r = EARTH_RADIUS_WGS84_KM + altKm;
  return Math.sqrt(MU_WGS84_KM3_S2 * Math.max(0, 2 / r - 1 / semiMajorAxisKm));
}
