/**
 * SVG path text of a geometry in a projection: the text d3-geo's geoPath gives (coordinates
 * rounded to 3 decimals), without the area, centroid and length measures that come with geoPath
 * and that the widget never uses (a few kilobytes of the 60 KB budget). The map draws no Point
 * geometries, so points get no circle.
 */
import { geoStream, type GeoPermissibleObjects, type GeoProjection } from 'd3-geo';

const round = (v: number): number => Math.round(v * 1000) / 1000;

export function pathText(projection: GeoProjection, object: GeoPermissibleObjects | null): string {
  if (!object) return '';
  let text = '';
  let ring = NaN;
  let at = NaN;
  geoStream(
    object,
    projection.stream({
      polygonStart: () => void (ring = 0),
      polygonEnd: () => void (ring = NaN),
      lineStart: () => void (at = 0),
      lineEnd() {
        if (ring === 0) text += 'Z';
        at = NaN;
      },
      point(x, y) {
        text += `${at === 1 ? 'L' : 'M'}${round(x)},${round(y)}`;
        if (at === 0) at = 1;
      },
      sphere() {},
    }),
  );
  return text;
}

/** The projected bounding box [[x0, y0], [x1, y1]] of a geometry (geoPath's bounds). */
export function pathBounds(projection: GeoProjection, object: GeoPermissibleObjects): [[number, number], [number, number]] {
  let x0 = Infinity;
  let y0 = Infinity;
  let x1 = -Infinity;
  let y1 = -Infinity;
  const none = () => {};
  geoStream(
    object,
    projection.stream({
      point(x, y) {
        if (x < x0) x0 = x;
        if (x > x1) x1 = x;
        if (y < y0) y0 = y;
        if (y > y1) y1 = y;
      },
      lineStart: none,
      lineEnd: none,
      polygonStart: none,
      polygonEnd: none,
      sphere: none,
    }),
  );
  return [
    [x0, y0],
    [x1, y1],
  ];
}

/**
 * The map's 15-degree grid as one MultiLineString: the same lines and points as d3-geo's
 * `geoGraticule().step([15, 15])()` (meridians from pole to pole, a point every 90 degrees for
 * the projection to resample; parallels from 75 S to 75 N, a point every 2.5 degrees), without
 * the graticule builder's code.
 */
export function grid15(): { type: 'MultiLineString'; coordinates: [number, number][][] } {
  const e = 1e-6;
  const lines: [number, number][][] = [];
  for (let i = 0; i < 24; i++) {
    const x = -180 + i * 15;
    lines.push([
      [x, -90 + e],
      [x, -90 + e + 90],
      [x, 90 - e],
    ]);
  }
  for (let j = 0; j < 11; j++) {
    const y = -75 + j * 15;
    const line: [number, number][] = [];
    for (let k = 0; k <= 144; k++) line.push([-180 + k * 2.5, y]);
    lines.push(line);
  }
  return { type: 'MultiLineString', coordinates: lines };
}
