/**
 * Where the Sun is overhead, small enough for the widget bundle.
 * Low-precision solar coordinates of the Astronomical Almanac (section C, "Low precision
 * formulas for the Sun", good to about 0.01 degree between 1950 and 2050; coefficients from
 * memory of that page, checked against astronomy-engine in sun.spec.ts) and the GMST
 * polynomial of the same almanac (linear term only).
 */
import { geoCircle } from 'd3-geo';
import type { Polygon } from 'geojson';
import { wrapLon } from './track.ts';

const RAD = Math.PI / 180;

/** Sub-solar point (geocentric latitude = declination) at Unix ms. */
export function subsolarPoint(ms: number): { lat: number; lon: number } {
  const n = ms / 86_400_000 + 2440587.5 - 2451545.0; // days since J2000.0
  const L = 280.46 + 0.9856474 * n; // mean longitude
  const g = (357.528 + 0.9856003 * n) * RAD; // mean anomaly
  const lambda = (L + 1.915 * Math.sin(g) + 0.02 * Math.sin(2 * g)) * RAD; // ecliptic longitude
  const eps = (23.439 - 0.0000004 * n) * RAD; // obliquity
  const ra = Math.atan2(Math.cos(eps) * Math.sin(lambda), Math.cos(lambda)) / RAD;
  const dec = Math.asin(Math.sin(eps) * Math.sin(lambda)) / RAD;
  const gmst = 280.46061837 + 360.98564736629 * n;
  return { lat: dec, lon: wrapLon(ra - gmst) };
}

/**
 * The night side and its twilight bands as polygons d3-geo draws correctly: the region where
 * the Sun is below `-depressionDeg` is a spherical cap of radius 90 - depression degrees around
 * the antisolar point (refraction and the Sun's radius ignored).
 * Returned from the lightest (Sun below the horizon) to the darkest (astronomical night).
 */
export function nightBands(ms: number, depressionsDeg: readonly number[] = [0, 6, 12, 18]): Polygon[] {
  const sun = subsolarPoint(ms);
  const anti: [number, number] = [wrapLon(sun.lon + 180), -sun.lat];
  return depressionsDeg.map((d) => geoCircle().center(anti).radius(90 - d).precision(3)() as Polygon);
}
