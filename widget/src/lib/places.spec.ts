import { describe, expect, it } from 'vitest';
import type { Feature, Polygon } from 'geojson';
import { namedAreas, oceanName, placeName } from './places.ts';

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
