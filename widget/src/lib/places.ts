/**
 * A name for the place under a satellite, for the live region: a country from the map's
 * countries when the point is on land, otherwise a coarse ocean name from longitude and
 * latitude boxes drawn for Nadirline (good enough for "over the South Atlantic", not a gazetteer).
 */
import type { Feature, Geometry } from 'geojson';
import { outlineHolds } from './contains.ts';
import { english, type Translate, type WordKey } from './words.ts';

export interface NamedArea {
  name: string;
  /** The atlas id (ISO 3166 numeric), else the English name: the key of the country names in the locale files. */
  key: string;
  feature: Feature<Geometry, { name?: string }>;
  /** [[west, south], [east, north]]; west > east when the area spans the antimeridian. */
  bounds: [[number, number], [number, number]];
}

/**
 * A box around an area's outline points, one degree wider on every side for the bulge of its
 * edges (great-circle arcs, a small fraction of a degree between the 110m outline's points):
 * only a first sieve before outlineHolds, so it need only hold the whole area (places.spec.ts
 * checks it holds d3-geo's geoBounds of every shipped country). Cheaper in bytes than geoBounds.
 */
function outlineBox(g: Geometry | null): NamedArea['bounds'] {
  let w = 180;
  let s = 90;
  let e = -180;
  let n = -90;
  const walk = (c: unknown): void => {
    if (typeof (c as number[])[0] === 'number') {
      const [x, y] = c as [number, number];
      w = Math.min(w, x);
      e = Math.max(e, x);
      s = Math.min(s, y);
      n = Math.max(n, y);
    } else (c as unknown[]).forEach(walk);
  };
  if (g && 'coordinates' in g) walk(g.coordinates);
  // no outline, or one round every longitude, which may hold a pole (Antarctica) or cross the
  // antimeridian (Russia, Fiji): the whole Earth, no sieve
  if (e - w >= 359 || w > e) {
    return [
      [-180, -90],
      [180, 90],
    ];
  }
  return [
    [Math.max(-180, w - 1), Math.max(-90, s - 1)],
    [Math.min(180, e + 1), Math.min(90, n + 1)],
  ];
}

export function namedAreas(features: readonly Feature<Geometry, { name?: string }>[]): NamedArea[] {
  return features
    .filter((f) => typeof f.properties?.name === 'string')
    .map((f) => ({ name: f.properties.name!, key: String(f.id ?? f.properties.name), feature: f, bounds: outlineBox(f.geometry) }));
}

function inBounds(b: NamedArea['bounds'], lat: number, lon: number): boolean {
  const [[w, s], [e, n]] = b;
  if (lat < s || lat > n) return false;
  return w <= e ? lon >= w && lon <= e : lon >= w || lon <= e;
}

/**
 * Seas that the 110m country outlines leave as water and that read better by their own name
 * than as part of an ocean; boxes drawn for Nadirline, tried in this order, [south, north, west, east].
 */
const SEAS: readonly [name: WordKey, s: number, n: number, w: number, e: number][] = [
  ['caspian', 36.5, 47.5, 46.5, 55],
  ['black', 40.9, 47.5, 27.3, 42],
  ['red', 12.5, 30.5, 32, 43.5],
  ['persian', 23.8, 30.6, 47.5, 56.6],
  ['baltic', 53.8, 66, 9.8, 30.5],
  ['northSea', 51, 61, -1.5, 9],
  ['hudson', 51, 66, -95.5, -76.5],
  ['southChina', 0, 23, 105, 121],
];

/** Ocean or sea name (with "the" in English) for a point assumed to be over water, in the words of `t`. */
export function oceanName(lat: number, lon: number, t: Translate = english): string {
  if (lat > 66) return t('arctic');
  if (lat < -60) return t('southern');
  for (const [name, s, n, w, e] of SEAS) if (lat >= s && lat <= n && lon >= w && lon <= e) return t(name);
  // west of 0 and north of 40 inside the box is the Bay of Biscay, which is the Atlantic
  if (lat > 30 && lat < 46 && lon > -5.6 && lon < 36.5 && !(lon < 0 && lat > 40)) return t('mediterranean');
  const north = lat >= 0;
  const indian = (lat < 30 && lon >= 20 && lon < 100) || (lat < -8 && lon >= 100 && lon < 147);
  if (indian) return t('indian');
  const atlantic =
    (lon >= -70 && lon < 20) ||
    (lat >= 18 && lat < 31 && lon >= -98 && lon < -70) || // Gulf of Mexico
    (lat >= 9 && lat < 18 && lon >= -84 && lon < -70) || // Caribbean
    (lat >= 31 && lon >= -82 && lon < -70);
  if (atlantic) return t(north ? 'northAtlantic' : 'southAtlantic');
  return t(north ? 'northPacific' : 'southPacific');
}

/** Country names that read better with "the" in a sentence. */
const WITH_THE = /^(United|Dem\. Rep\.|Central African|Dominican|Solomon|Falkland|Bahamas|Philippines|Netherlands|Gambia|Czech|Fr\. S\.)/;

/**
 * "Brazil", "the United States of America" or "the South Atlantic" (in German "den Vereinigten
 * Staaten", from the locale's country names, else the map's English name); null while the country
 * outlines are not loaded yet, since without them any point, inland Siberia too, would be called
 * an ocean (callers then give coordinates alone).
 */
export function placeName(lat: number, lon: number, areas: readonly NamedArea[], t: Translate = english): string | null {
  if (areas.length === 0) return null;
  for (const a of areas) {
    if (inBounds(a.bounds, lat, lon) && outlineHolds(a.feature.geometry, lon, lat)) return t.countries?.[a.key] ?? (t === english && WITH_THE.test(a.name) ? `the ${a.name}` : a.name);
  }
  return oceanName(lat, lon, t);
}
