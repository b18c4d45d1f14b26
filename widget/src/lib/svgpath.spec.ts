import { createRequire } from 'node:module';
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { geoEqualEarth, geoGraticule, geoOrthographic, geoPath, type GeoPermissibleObjects, type GeoProjection } from 'd3-geo';
import { feature } from 'topojson-client';
import type { Topology } from 'topojson-specification';
import { footprintCircle, terminator } from '@nadirline/shared/orbit/sun-earth.ts';
import { grid15, pathBounds, pathText } from './svgpath.ts';

const require = createRequire(import.meta.url);
const topo = JSON.parse(readFileSync(require.resolve('world-atlas/land-110m.json'), 'utf8')) as Topology;
const land = feature(topo, topo.objects.land!) as GeoPermissibleObjects;

/** The projections the map draws with (MapView.ce.vue): flat and globe, turned, fitted to a box. */
function projections(): [string, GeoProjection][] {
  const fit = (p: GeoProjection) => p.precision(1).fitExtent([[4, 4], [636, 356]], { type: 'Sphere' });
  return [
    ['flat', fit(geoEqualEarth().rotate([0, 0]))],
    ['flat turned', fit(geoEqualEarth().rotate([-150, 0]))],
    ['globe', fit(geoOrthographic().rotate([-10, -45]))],
    ['globe turned', fit(geoOrthographic().rotate([170, 60]))],
  ];
}

describe('pathText', () => {
  const track = {
    type: 'MultiLineString',
    coordinates: [
      [[-170, -40], [-100, 10], [-20, 51.6], [60, 10], [175, -40]],
      [[-175, 20], [179, 25]],
    ],
  } as GeoPermissibleObjects;
  const footprint = footprintCircle(30, 120, 20) as unknown as GeoPermissibleObjects;
  const night = terminator(Date.UTC(2026, 5, 21, 12)) as unknown as GeoPermissibleObjects;
  it.each(projections())('draws the same SVG text as d3-geo geoPath on the %s map', (_name, p) => {
    const d3 = geoPath(p);
    for (const g of [land, track, footprint, night, { type: 'Sphere' } as GeoPermissibleObjects, grid15() as GeoPermissibleObjects]) {
      expect(pathText(p, g)).toBe(d3(g) ?? '');
    }
    expect(pathText(p, land).length).toBeGreaterThan(1000);
  });
  it('gives no text for no geometry', () => {
    expect(pathText(projections()[0]![1], null)).toBe('');
  });
});

describe('pathBounds', () => {
  it.each(projections())('gives the box d3-geo geoPath gives of the sphere on the %s map', (_name, p) => {
    expect(pathBounds(p, { type: 'Sphere' })).toEqual(geoPath(p).bounds({ type: 'Sphere' }));
  });
});

describe('grid15', () => {
  it('is the 15-degree graticule of d3-geo, line for line and point for point', () => {
    expect(grid15()).toEqual(geoGraticule().step([15, 15])());
  });
});
