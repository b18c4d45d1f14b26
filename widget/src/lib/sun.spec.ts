import { describe, expect, it } from 'vitest';
import { Body, Equator, Observer, SiderealTime } from 'astronomy-engine';
import { geoContains } from 'd3-geo';
import { nightBands, subsolarPoint } from './sun.ts';

/** Sub-solar point from astronomy-engine (the cross-check library named in references.md). */
function reference(ms: number) {
  const date = new Date(ms);
  const eq = Equator(Body.Sun, date, new Observer(0, 0, 0), true, true);
  const gast = SiderealTime(date) * 15;
  let lon = eq.ra * 15 - gast;
  lon = ((((lon + 180) % 360) + 360) % 360) - 180;
  return { lat: eq.dec, lon };
}

describe('subsolarPoint', () => {
  it('agrees with astronomy-engine within 0.05 degree over several years', () => {
    for (const iso of ['2024-03-20T03:06:00Z', '2025-06-21T12:00:00Z', '2026-12-01T22:00:00Z', '2028-09-15T06:30:00Z', '2030-01-01T00:00:00Z']) {
      const ms = Date.parse(iso);
      const ours = subsolarPoint(ms);
      const ref = reference(ms);
      expect(Math.abs(ours.lat - ref.lat)).toBeLessThan(0.05);
      const dLon = Math.abs(((ours.lon - ref.lon + 540) % 360) - 180);
      expect(dLon).toBeLessThan(0.05);
    }
  });
});

describe('nightBands', () => {
  it('puts the antisolar point in every band and the sub-solar point in none', () => {
    const ms = Date.parse('2026-06-21T12:00:00Z');
    const sun = subsolarPoint(ms);
    const bands = nightBands(ms);
    expect(bands).toHaveLength(4);
    for (const b of bands) {
      expect(geoContains(b, [sun.lon + 180, -sun.lat])).toBe(true);
      expect(geoContains(b, [sun.lon, sun.lat])).toBe(false);
    }
  });
  it('shades a place just past the terminator only in the lightest band', () => {
    const ms = Date.parse('2026-03-20T12:00:00Z');
    const sun = subsolarPoint(ms);
    // 93 degrees from the Sun on the equator: Sun 3 degrees below the horizon
    const place: [number, number] = [sun.lon + 93, 0];
    expect(nightBands(ms).map((b) => geoContains(b, place))).toEqual([true, false, false, false]);
  });
});
