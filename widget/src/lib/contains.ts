/**
 * Whether a point lies in a country's outline on the sphere, edges being great-circle arcs as
 * d3-geo draws them: the answer of d3-geo's geoContains for the outlines the widget ships
 * (contains.spec.ts checks it on every country of world-atlas countries-110m and on many points),
 * in far fewer bytes of the 60 KB budget.
 *
 * The test follows the point's meridian south to the pole and counts the edges it crosses: each
 * ring flips the answer once per crossing, and once more when the ring holds the south pole. A
 * ring that does not go round a pole holds the smaller side of the sphere (every country of the
 * atlas is smaller than a hemisphere); one that goes round a pole holds the side on its right, as
 * d3-geo winds outlines (clockwise seen from space): going east, the south.
 */
import type { Geometry, Position } from 'geojson';

const RAD = Math.PI / 180;
/** A longitude difference in (-180, 180]. */
const wrap = (d: number): number => d - 360 * Math.ceil((d - 180) / 360);

function ringsHold(rings: Position[][], lon: number, lat: number): boolean {
  const cl = Math.cos(lon * RAD);
  const sl = Math.sin(lon * RAD);
  let inside = false;
  for (const ring of rings) {
    let turn = 0;
    let a = ring[ring.length - 1]!;
    for (const b of ring) {
      turn += wrap(b[0]! - a[0]!);
      // the short arc a-b crosses the point's meridian (not the opposite one) when its ends lie
      // either side of it, or on one side for an arc over the antimeridian; where it crosses, the
      // great circle through a and b, normal n = a x b, has tan(latitude) = -(nx cos(lon) + ny sin(lon)) / nz
      if (a[0]! >= lon !== b[0]! >= lon !== Math.abs(b[0]! - a[0]!) > 180) {
        const [ax, ay, az] = unit(a);
        const [bx, by, bz] = unit(b);
        const cross = Math.atan(-((ay * bz - az * by) * cl + (az * bx - ax * bz) * sl) / (ax * by - ay * bx));
        if (cross < lat * RAD) inside = !inside;
      }
      a = b;
    }
    // once round the pole going east: the ring holds the south pole
    if (turn > 180) inside = !inside;
  }
  return inside;
}

function unit(p: Position): [number, number, number] {
  const l = p[0]! * RAD;
  const f = p[1]! * RAD;
  return [Math.cos(f) * Math.cos(l), Math.cos(f) * Math.sin(l), Math.sin(f)];
}

/** Whether the point [lon, lat] (degrees) lies inside a Polygon or MultiPolygon. */
export function outlineHolds(g: Geometry | null, lon: number, lat: number): boolean {
  if (g?.type === 'Polygon') return ringsHold(g.coordinates, lon, lat);
  return g?.type === 'MultiPolygon' && g.coordinates.some((rings) => ringsHold(rings, lon, lat));
}
