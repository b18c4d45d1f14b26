import { Body, GeoVector, RotateVector, Rotation_EQJ_EQD, VectorObserver } from 'astronomy-engine';
import { geoArea, geoContains, geoDistance } from 'd3-geo';
import type { Polygon } from 'geojson';
import { describe, expect, it } from 'vitest';
import type { GeoPoint } from '../types.ts';
import { DEG_PER_RAD } from './constants.ts';
import { wrapLonDeg } from './frames.ts';
import { antipode, footprintCircle, footprintRadius, subsolarPoint, terminator, twilightBands } from './sun-earth.ts';

const times = [Date.UTC(2026, 2, 20, 14, 46), Date.UTC(2026, 5, 21, 3, 0), Date.UTC(2026, 11, 21, 20, 30), Date.UTC(1999, 7, 11, 11, 3)];
const contains = (poly: Polygon, p: GeoPoint): boolean => geoContains(poly, [p.lonDeg, p.latDeg]);
const dist = (a: GeoPoint, b: GeoPoint): number => geoDistance([a.lonDeg, a.latDeg], [b.lonDeg, b.latDeg]) * DEG_PER_RAD;

describe('subsolarPoint', () => {
  it.each(times.map((t) => [new Date(t).toISOString(), t]))(
    'lies within 0.02 deg of the point astronomy-engine finds under the Sun at %s (VectorObserver)',
    (_iso, t) => {
      const date = new Date(t);
      const eqd = RotateVector(Rotation_EQJ_EQD(date), GeoVector(Body.Sun, date, true));
      const ref = VectorObserver(eqd, true);
      const ours = subsolarPoint(t);
      expect(Math.abs(ours.latDeg - ref.latitude)).toBeLessThan(0.02);
      expect(Math.abs(wrapLonDeg(ours.lonDeg - ref.longitude))).toBeLessThan(0.02);
    },
  );

  it('stands near the equator at the March equinox and near 23.44 deg N at the June solstice', () => {
    expect(Math.abs(subsolarPoint(Date.UTC(2026, 2, 20, 14, 46)).latDeg)).toBeLessThan(0.05);
    expect(subsolarPoint(Date.UTC(2026, 5, 21, 8, 24)).latDeg).toBeCloseTo(23.44, 1);
  });
});

describe('terminator (the night side, for d3-geo)', () => {
  it.each(times.map((t) => [new Date(t).toISOString(), t]))(
    'contains the antisolar point and not the sub-solar point at %s (d3-geo geoContains)',
    (_iso, t) => {
      const night = terminator(t);
      const sun = subsolarPoint(t);
      expect(contains(night, antipode(sun))).toBe(true);
      expect(contains(night, sun)).toBe(false);
      // Slightly less than a hemisphere: the cap of radius 89.167 deg (d3-geo geoArea, steradians).
      const cap = 2 * Math.PI * (1 - Math.cos((89.167 * Math.PI) / 180));
      expect(geoArea(night)).toBeCloseTo(cap, 2);
    },
  );

  it('puts its edge where the Sun stands at the requested elevation', () => {
    const t = times[1] as number;
    const sun = subsolarPoint(t);
    for (const [lon, lat] of (terminator(t, -0.833).coordinates[0] ?? []).slice(0, 20)) {
      expect(90 - dist(sun, { latDeg: lat as number, lonDeg: lon as number })).toBeCloseTo(-0.833, 6);
    }
  });

  it('nests civil, nautical and astronomical twilight caps around the antisolar point', () => {
    const t = times[2] as number;
    const bands = twilightBands(t);
    const a = [bands.civil, bands.nautical, bands.astronomical].map((p) => geoArea(p));
    expect(a[0]).toBeGreaterThan(a[1] as number);
    expect(a[1]).toBeGreaterThan(a[2] as number);
    const anti = antipode(subsolarPoint(t));
    // A point 80 deg from the antisolar point sees the Sun 10 deg down: civil and nautical night, not astronomical.
    const probe: GeoPoint = { latDeg: anti.latDeg > 0 ? anti.latDeg - 80 : anti.latDeg + 80, lonDeg: anti.lonDeg };
    expect(contains(bands.civil, probe)).toBe(true);
    expect(contains(bands.nautical, probe)).toBe(false);
    expect(contains(bands.astronomical, probe)).toBe(false);
  });
});

describe('footprint', () => {
  it.each([
    [400, 0, 19.7821],
    [400, 10, 12.0753],
    [35786, 0, 81.2995],
    [35786, 5, 76.3329],
  ])('has an Earth central angle at H = %s km, eps = %s deg of %s deg (Wertz SMAD 5.2, references.md)', (h, eps, lambda) => {
    const r = footprintRadius(h, eps);
    expect(r.centralAngleDeg).toBeCloseTo(lambda, 4);
    expect(r.radiusKm).toBeCloseTo((lambda * Math.PI * 6378.137) / 180, 0);
  });

  it('is empty for a height at or below the ground', () => {
    expect(footprintRadius(0)).toEqual({ centralAngleDeg: 0, radiusKm: 0 });
    expect(footprintRadius(-5, 10)).toEqual({ centralAngleDeg: 0, radiusKm: 0 });
  });

  it.each([
    ['over the antimeridian', 10, 179.5],
    ['over the north pole', 88, -40],
    ['over the south pole', -89.9, 120],
    ['at mid-latitude', 47, 8.5],
  ])('draws a small cap %s that contains its centre and not the antipode (d3-geo)', (_name, lat, lon) => {
    const poly = footprintCircle(lat, lon, 700, 5, 96);
    const centre = { latDeg: lat, lonDeg: lon };
    expect(contains(poly, centre)).toBe(true);
    expect(contains(poly, antipode(centre))).toBe(false);
    const lambda = footprintRadius(700, 5).centralAngleDeg;
    const cap = 2 * Math.PI * (1 - Math.cos((lambda * Math.PI) / 180));
    expect(geoArea(poly)).toBeCloseTo(cap, 2);
    const ring = poly.coordinates[0] ?? [];
    expect(ring).toHaveLength(97);
    expect(ring[0]).toEqual(ring[96]);
    for (const [plon, plat] of ring) expect(dist(centre, { latDeg: plat as number, lonDeg: plon as number })).toBeCloseTo(lambda, 6);
  });
});
