import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import type { Feature, FeatureCollection, Geometry, Polygon } from 'geojson';
import { geoBounds } from 'd3-geo';
import { feature } from 'topojson-client';
import type { GeometryCollection, Topology } from 'topojson-specification';
import { namedAreas, oceanName, placeName } from './places.ts';
import { translator, type WordTable } from './words.ts';

/** The countries the widget ships (world-atlas countries-110m), as it reads them. */
function shippedCountries() {
  const require = createRequire(import.meta.url);
  const topo = JSON.parse(readFileSync(require.resolve('world-atlas/countries-110m.json'), 'utf8')) as Topology;
  return namedAreas((feature(topo, topo.objects.countries as GeometryCollection) as FeatureCollection<Geometry, { name?: string }>).features);
}

const box = (name: string, w: number, s: number, e: number, n: number): Feature<Polygon, { name: string }> => ({
  type: 'Feature',
  properties: { name },
  geometry: {
    type: 'Polygon',
    // counter-clockwise exterior as d3-geo expects on the sphere
    coordinates: [
      [
        [w, s],
        [e, s],
        [e, n],
        [w, n],
        [w, s],
      ],
    ].map((r) => r.reverse()),
  },
});

describe('placeName', () => {
  const areas = namedAreas([box('Invented Land', 10, 10, 20, 20), box('United Isles', -40, -5, -30, 5)]);

  it('names the country under the point', () => {
    expect(placeName(15, 15, areas)).toBe('Invented Land');
  });
  it('adds "the" where a country name reads better with it', () => {
    expect(placeName(0, -35, areas)).toBe('the United Isles');
  });
  it('names the ocean otherwise', () => {
    expect(placeName(-51.6, -20.3, areas)).toBe('the South Atlantic');
  });
  it('names nothing while the country outlines are not loaded, rather than guess an ocean', () => {
    expect(placeName(50.9, 104.3, [])).toBeNull();
  });
});

describe('placeName with the countries the widget ships', () => {
  const areas = shippedCountries();
  it.each([
    [50.9, 104.3, 'Russia'], // QA saw "the North Pacific" here before the map had loaded
    [0.1, 10.0, 'Gabon'], // and "the North Atlantic" here
    [39.5, -98.4, 'the United States of America'],
    [-15.8, -47.9, 'Brazil'],
    [67, -175, 'Russia'], // west of the antimeridian, in the western hemisphere
    [-17.8, 178.1, 'Fiji'],
    [-82, 40, 'Antarctica'],
    [42, 51, 'the Caspian Sea'],
    [43.2, 34, 'the Black Sea'],
    [45.5, -3.5, 'the North Atlantic'], // Bay of Biscay
    [38, 5, 'the Mediterranean Sea'],
    [0, -30, 'the North Atlantic'],
    [-40, -120, 'the South Pacific'],
    [58, -86, 'Hudson Bay'],
  ])('calls %f, %f %s', (lat, lon, name) => {
    expect(placeName(lat, lon, areas)).toBe(name);
  });
});

describe('placeName in the reader’s language', () => {
  const areas = shippedCountries();
  const locale = (lang: string) => JSON.parse(readFileSync(path.join(path.dirname(fileURLToPath(import.meta.url)), '..', 'locales', `${lang}.json`), 'utf8')) as WordTable;
  it.each([
    ['de', 52.5, 13.4, 'Deutschland', 'Über Deutschland'],
    ['de', 39.5, -98.4, 'den Vereinigten Staaten', 'Über den Vereinigten Staaten'],
    ['de', 46.8, 8.2, 'der Schweiz', 'Über der Schweiz'],
    ['de', 42, 51, 'dem Kaspischen Meer', 'Über dem Kaspischen Meer'],
    ['fr', 39.5, -98.4, 'des États-Unis', 'Au-dessus des États-Unis'],
    ['fr', 56, -100, 'du Canada', 'Au-dessus du Canada'],
    ['fr', 46.5, 2.5, 'de la France', 'Au-dessus de la France'],
    ['fr', 26.5, 52, 'du golfe Persique', 'Au-dessus du golfe Persique'],
    ['es', -15.8, -47.9, 'Brasil', 'Sobre Brasil'],
    ['es', 54, -2, 'el Reino Unido', 'Sobre el Reino Unido'],
    ['es', 45.5, -3.5, 'el Atlántico Norte', 'Sobre el Atlántico Norte'],
  ] as const)('%s: %f, %f is %s', (lang, lat, lon, name, over) => {
    const t = translator(lang, locale(lang));
    expect(placeName(lat, lon, areas, t)).toBe(name);
    expect(t('over', { place: name })).toBe(over);
  });
  it('falls back to the map’s English name (without "the") when the language has no name for a country', () => {
    const t = translator('de', { countries: {} });
    expect(placeName(39.5, -98.4, areas, t)).toBe('United States of America');
    expect(placeName(52.5, 13.4, areas, translator('de'))).toBe('Germany');
  });
  it('finds the areas the atlas gives no id by their English name', () => {
    const kosovo = areas.find((a) => a.name === 'Kosovo')!;
    expect(kosovo.key).toBe('Kosovo');
    expect(areas.find((a) => a.name === 'Germany')!.key).toBe('276');
    expect(placeName(42.6, 20.9, areas, translator('de', locale('de')))).toBe('dem Kosovo');
  });
});

describe('oceanName', () => {
  it.each([
    [-30, -150, 'the South Pacific'],
    [30, 160, 'the North Pacific'],
    [-20, 70, 'the Indian Ocean'],
    [25, -90, 'the North Atlantic'], // Gulf of Mexico
    [10, -95, 'the North Pacific'], // off Central America
    [75, 0, 'the Arctic Ocean'],
    [-65, 100, 'the Southern Ocean'],
    [35, 18, 'the Mediterranean Sea'],
  ])('calls %f, %f %s', (lat, lon, name) => {
    expect(oceanName(lat, lon)).toBe(name);
  });
});

describe('namedAreas boxes', () => {
  it('hold the whole of every shipped country (d3-geo geoBounds inside the box)', () => {
    const areas = shippedCountries();
    expect(areas.length).toBeGreaterThan(150);
    for (const a of areas) {
      const [[w, s], [e, n]] = a.bounds;
      const [[gw, gs], [ge, gn]] = geoBounds(a.feature);
      expect(s, a.name).toBeLessThanOrEqual(gs);
      expect(n, a.name).toBeGreaterThanOrEqual(gn);
      if (gw <= ge) {
        expect(w, a.name).toBeLessThanOrEqual(gw);
        expect(e, a.name).toBeGreaterThanOrEqual(ge);
      } else {
        // across the antimeridian: the box takes every longitude
        expect([w, e], a.name).toEqual([-180, 180]);
      }
    }
  });
  it('take the whole Earth for an area without outline points', () => {
    const [a] = namedAreas([{ type: 'Feature', properties: { name: 'Nowhere' }, geometry: { type: 'GeometryCollection', geometries: [] } }]);
    expect(a!.bounds).toEqual([
      [-180, -90],
      [180, 90],
    ]);
  });
});
