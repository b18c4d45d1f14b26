import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as d3 from 'd3-geo';
import { feature } from 'topojson-client';
import type { Topology } from 'topojson-specification';
import { grid15 } from '../src/lib/svgpath.ts';
import { trimD3 } from './trim-d3.ts';

const require = createRequire(import.meta.url);
const geoFile = require.resolve('d3-geo');
const arrayFile = createRequire(geoFile).resolve('d3-array');
// inside the workspace, where the test runner may load modules from
const cache = path.join(path.dirname(fileURLToPath(import.meta.url)), '..', 'node_modules', '.cache');
mkdirSync(cache, { recursive: true });
const dir = mkdtempSync(path.join(cache, 'trim-d3-'));
let geo: typeof d3;
/** What the widget's d3-geo takes from d3-array, and the bisect helpers whose load-time reads were marked pure. */
interface D3Array {
  Adder: new () => { add(x: number): unknown; valueOf(): number };
  merge<T>(arrays: T[][]): T[];
  bisectRight(a: number[], x: number): number;
  bisectLeft(a: number[], x: number): number;
  bisectCenter(a: number[], x: number): number;
}
let arr: D3Array;

beforeAll(async () => {
  const a = trimD3(readFileSync(arrayFile, 'utf8'), arrayFile)!;
  const g = trimD3(readFileSync(geoFile, 'utf8'), geoFile)!;
  writeFileSync(path.join(dir, 'd3-array.mjs'), a.code);
  // the trimmed d3-geo takes the trimmed d3-array, as in the bundle
  writeFileSync(path.join(dir, 'd3-geo.mjs'), g.code.replace(/from 'd3-array'/, `from ${JSON.stringify(path.join(dir, 'd3-array.mjs'))}`));
  arr = (await import(/* @vite-ignore */ path.join(dir, 'd3-array.mjs'))) as D3Array;
  geo = (await import(/* @vite-ignore */ path.join(dir, 'd3-geo.mjs'))) as typeof d3;
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const topo = JSON.parse(readFileSync(require.resolve('world-atlas/countries-110m.json'), 'utf8')) as Topology;
const land = feature(topo, topo.objects.land!);
const track = {
  type: 'MultiLineString' as const,
  coordinates: [
    [
      [-170, -40],
      [-100, 10],
      [-20, 51.6],
      [60, 10],
      [175, -40],
    ],
  ],
};

/** The projections MapView makes (flat and globe, turned, resampled to a pixel, fitted to a box), from one d3-geo. */
function mapProjections(g: typeof d3): [string, d3.GeoProjection][] {
  const fit = (p: d3.GeoProjection) =>
    p.precision(1).fitExtent(
      [
        [4, 4],
        [636, 356],
      ],
      { type: 'Sphere' },
    );
  return [
    ['flat', fit(g.geoEqualEarth().rotate([0, 0]))],
    ['flat turned', fit(g.geoEqualEarth().rotate([-150, 0]))],
    ['globe', fit(g.geoOrthographic().rotate([-10, -45]))],
    ['globe turned', fit(g.geoOrthographic().rotate([170, 60]))],
  ];
}

describe('trimD3', () => {
  it('finds every place it trims in the pinned d3-array and d3-geo, and leaves other modules alone', () => {
    const a = trimD3(readFileSync(arrayFile, 'utf8'), arrayFile)!;
    const g = trimD3(readFileSync(geoFile, 'utf8'), geoFile)!;
    expect(a.changes['load-time reads']).toBeGreaterThanOrEqual(4);
    expect(g.changes).toEqual({ 'new Adder()': expect.any(Number), clipExtent: expect.any(Number), 'fitSize, fitWidth, fitHeight': expect.any(Number) });
    for (const n of Object.values(g.changes)) expect(n).toBeGreaterThan(0);
    expect(trimD3('export const x = Math.PI;', '/repo/node_modules/vue/index.js')).toBeNull();
  });

  it('draws the map with the same path text as untrimmed d3-geo', () => {
    const mine = mapProjections(geo);
    const theirs = mapProjections(d3);
    mine.forEach(([name, p], i) => {
      const q = theirs[i]![1];
      expect(p.scale(), name).toBe(q.scale());
      expect(p.translate(), name).toEqual(q.translate());
      for (const object of [land, grid15(), track, { type: 'Sphere' }] as d3.GeoPermissibleObjects[]) {
        expect(geo.geoPath(p)(object), name).toBe(d3.geoPath(q)(object));
      }
      expect(p([12.5, 41.9]), name).toEqual(q([12.5, 41.9]));
      expect(p.invert!([300, 200]), name).toEqual(q.invert!([300, 200]));
    });
  });

  it('says plainly that the rectangular clip and fitSize are left out, and keeps the rest of the clip extent getter and setter', () => {
    const p = geo.geoEqualEarth();
    expect(p.clipExtent()).toBeNull();
    expect(() => p.clipExtent(null)).not.toThrow();
    expect(() =>
      p.clipExtent([
        [0, 0],
        [10, 10],
      ]),
    ).toThrow(/clipExtent with an extent: left out of the widget build/);
    expect(() => p.fitSize([10, 10], { type: 'Sphere' })).toThrow(/fitSize: left out/);
    expect(() => p.fitWidth(10, { type: 'Sphere' })).toThrow(/fitWidth: left out/);
    expect(() => p.fitHeight(10, { type: 'Sphere' })).toThrow(/fitHeight: left out/);
  });

  it('keeps the values of the d3-array reads it marked pure', () => {
    expect(arr.bisectRight([1, 2, 3], 2)).toBe(2);
    expect(arr.bisectLeft([1, 2, 3], 2)).toBe(1);
    expect(arr.bisectCenter([1, 2, 3], 2.4)).toBe(1);
    const sum = new arr.Adder();
    for (const x of [1e20, 1, -1e20]) sum.add(x);
    expect(+sum).toBe(1);
    expect(arr.merge([[1], [2, 3]])).toEqual([1, 2, 3]);
  });
});
