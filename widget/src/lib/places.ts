/**
 * A name for the place under a satellite, for the live region: a country from the map's
 * countries when the point is on land, otherwise a coarse ocean name from longitude and
 * latitude boxes drawn for Nadirline (good enough for "over the South Atlantic", not a gazetteer).
 */
import { geoBounds, geoContains } from 'd3-geo';
import type { Feature, Geometry } from 'geojson';

export interface NamedArea {
  name: string;
  feature: Feature<Geometry, { name?: string }>;
  /** [[west, south], [east, north]] from geoBounds; west > east when the area spans the antimeridian. */
  bounds: [[number, number], [number, number]];
}

export function namedAreas(features: readonly Feature<Geometry, { name?: string }>[]): NamedArea[] {
  return features
    .filter((f) => typeof f.properties?.name === 'string')
    .map((f) => ({ name: f.properties.name!, feature: f, bounds: geoBounds(f) }));
}

function inBounds(b: NamedArea['bounds'], lat: number, lon: number): boolean {
  const [[w, s], [e, n]] = b;
  if (lat < s || lat > n) return false;
  return w <= e ? lon >= w && lon <= e : lon >= w || lon <= e;
}

/** Ocean name (with "the") for a point assumed to be over water. */
export function oceanName(lat: number, lon: number): string {
  if (lat > 66) return 'the Arctic Ocean';
  if (lat < -60) return 'the Southern Ocean';
  if (lat > 30 && lat < 46 && lon > -6 && lon < 36) return 'the Mediterranean Sea';
  const ns = lat >= 0 ? 'North' : 'South';
  const indian = (lat < 30 && lon >= 20 && lon < 100) || (lat < -8 && lon >= 100 && lon < 147);
  if (indian) return 'the Indian Ocean';
  const atlantic =
    (lon >= -70 && lon < 20) ||
    (lat >= 18 && lat < 31 && lon >= -98 && lon < -70) || // Gulf of Mexico
    (lat >= 9 && lat < 18 && lon >= -84 && lon < -70) || // Caribbean
    (lat >= 31 && lon >= -82 && lon < -70);
  return atlantic ? `the ${ns} Atlantic` : `the ${ns} Pacific`;
}

/** Country names that read better with "the" in a sentence. */
const WITH_THE = /^(United|Dem\. Rep\.|Central African|Dominican|Solomon|Falkland|Bahamas|Philippines|Netherlands|Gambia|Czech|Fr\. S\.)/;

/** "Brazil", "the United States of America" or "the South Atlantic". */
export function placeName(lat: number, lon: number, areas: readonly NamedArea[]): string {
  for (const a of areas) {
    if (inBounds(a.bounds, lat, lon) && geoContains(a.feature, [lon, lat])) return WITH_THE.test(a.name) ? `the ${a.name}` : a.name;
  }
  return oceanName(lat, lon);
}
