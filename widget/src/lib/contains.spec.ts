import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { geoContains } from 'd3-geo';
import type { Feature, FeatureCollection, Geometry } from 'geojson';
import { feature } from 'topojson-client';
import type { GeometryCollection, Topology } from 'topojson-specification';
import { outlineHolds } from './contains.ts';

const require = createRequire(import.meta.url);
const topo = JSON.parse(readFileSync(require.resolve('world-atlas/countries-110m.json'), 'utf8')) as Topology;
const countries = (feature(topo, topo.objects.countries as GeometryCollection) as FeatureCollection<Geometry, { name: string }>).features;

/** A repeatable sequence of numbers in [0, 1) (a 32-bit linear congruential generator). */
function numbers(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

/** Points spread evenly over the sphere. */
function spherePoints(n: number, seed: number): [number, number][] {
  const r = numbers(seed);
  return Array.from({ length: n }, () => [r() * 360 - 180, (Math.asin(2 * r() - 1) * 180) / Math.PI]);
}

/** Points in and around a country's longitude-latitude box, two degrees wider on each side. */
function nearPoints(f: Feature<Geometry>, n: number, seed: number): [number, number][] {
  const xs: number[] = [];
  const ys: number[] = [];
  const walk = (c: unknown): void => {
    if (typeof (c as number[])[0] === 'number') {
      xs.push((c as number[])[0]!);
      ys.push((c as number[])[1]!);
    } else (c as unknown[]).forEach(walk);
  };
  if ('coordinates' in f.geometry) walk(f.geometry.coordinates);
  const w = Math.min(...xs) - 2;
  const e = Math.max(...xs) + 2;
  const s = Math.max(-90, Math.min(...ys) - 2);
  const nn = Math.min(90, Math.max(...ys) + 2);
  const r = numbers(seed);
  return Array.from({ length: n }, () => [((w + r() * (e - w) + 540) % 360) - 180, s + r() * (nn - s)]);
}

const mismatches = (f: Feature<Geometry>, pts: [number, number][]) =>
  pts.filter(([lon, lat]) => outlineHolds(f.geometry, lon, lat) !== geoContains(f, [lon, lat])).map(([lon, lat]) => `${f.properties?.name} ${lon},${lat}`);

describe('outlineHolds', () => {
  it('agrees with d3-geo geoContains in and around every shipped country', () => {
    expect(countries.length).toBe(177);
    let inside = 0;
    const wrong: string[] = [];
    countries.forEach((f, i) => {
      const pts = nearPoints(f, 300, 1000 + i);
      inside += pts.filter(([lon, lat]) => geoContains(f, [lon, lat])).length;
      wrong.push(...mismatches(f, pts));
    });
    expect(wrong).toEqual([]);
    // the check means something only if many of the points are inside
    expect(inside).toBeGreaterThan(9_000);
  }, 60_000);

  it('agrees with geoContains for points all over the sphere, the poles and the antimeridian', () => {
    const pts = [
      ...spherePoints(1200, 7),
      [0, -90],
      [0, -89.9],
      [123, -89.99],
      [0, 90],
      [0, 89.9],
      [180, 66],
      [-180, 66],
      [179.9, 67],
      [-179.9, 67],
      [178.1, -17.8],
      [-178, -17],
      [180, -16.5],
    ] as [number, number][];
    const wrong = countries.flatMap((f) => mismatches(f, pts));
    expect(wrong).toEqual([]);
  }, 60_000);

  it('holds the pole in Antarctica and the far east of Russia across the antimeridian', () => {
    const byName = (n: string) => countries.find((f) => f.properties.name === n)!.geometry;
    expect(outlineHolds(byName('Antarctica'), 0, -89.9)).toBe(true);
    expect(outlineHolds(byName('Antarctica'), 0, -60)).toBe(false);
    expect(outlineHolds(byName('Russia'), -175, 67)).toBe(true);
    expect(outlineHolds(byName('Russia'), 175, 67)).toBe(true);
    expect(outlineHolds(byName('Fiji'), 178.1, -17.8)).toBe(true);
    expect(outlineHolds(byName('Brazil'), -47.9, -15.8)).toBe(true);
    expect(outlineHolds(byName('Brazil'), -30, -15.8)).toBe(false);
  });

  it('holds nothing for geometry that is not an area', () => {
    expect(outlineHolds(null, 0, 0)).toBe(false);
    expect(outlineHolds({ type: 'Point', coordinates: [0, 0] }, 0, 0)).toBe(false);
  });
});
