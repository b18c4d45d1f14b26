import { describe, expect, it } from 'vitest';
import { geoContains } from 'd3-geo';
import { subsolarPoint } from '@nadirline/shared/orbit/sun-earth.ts';
import { footprintAngleDeg, nightBands, speedKmS } from './geo.ts';

describe('footprintAngleDeg', () => {
  // values computed from Wertz, SMAD section 5.2 with Re = 6378.137 km (references.md)
  it.each([
    [400, 0, 19.7821],
    [400, 10, 12.0753],
    [35786, 0, 81.2995],
    [35786, 5, 76.3329],
  ])('gives %f km at %f degrees minimum elevation a central angle of %f degrees', (h, eps, lambda) => {
    expect(footprintAngleDeg(h, eps)).toBeCloseTo(lambda, 3);
  });
});

describe('speedKmS', () => {
  it('gives the circular speed of a 400 km orbit, about 7.67 km/s (vis-viva, common practice)', () => {
    expect(speedKmS(400, 6378.137 + 400)).toBeCloseTo(7.669, 2);
  });
});

describe('nightBands', () => {
  it('puts the antisolar point in every band and the sub-solar point in none', () => {
    const ms = Date.parse('2026-06-21T12:00:00Z');
    const { latDeg, lonDeg } = subsolarPoint(ms);
    const sun = { lat: latDeg, lon: lonDeg };
    const bands = nightBands(ms);
    expect(bands).toHaveLength(4);
    for (const b of bands) {
      expect(geoContains(b, [sun.lon + 180, -sun.lat])).toBe(true);
      expect(geoContains(b, [sun.lon, sun.lat])).toBe(false);
    }
  });
  it('shades a place just past the terminator only in the lightest band', () => {
    const ms = Date.parse('2026-03-20T12:00:00Z');
    const { latDeg, lonDeg } = subsolarPoint(ms);
    const sun = { lat: latDeg, lon: lonDeg };
    // 93 degrees from the Sun on the equator: Sun 3 degrees below the horizon
    const place: [number, number] = [sun.lon + 93, 0];
    expect(nightBands(ms).map((b) => geoContains(b, place))).toEqual([true, false, false, false]);
  });
});
