import { describe, expect, it } from 'vitest';
import { trackToGeoJSON, type TrackSample } from '@nadirline/shared';
import { isoTime, pointJson, roundedJson, trackGeoJsonText, trackPointsJson } from './serialize.ts';

/** A small deterministic generator (mulberry32), so a failure can be replayed. */
function random(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4_294_967_296;
  };
}

describe('track answers written as text', () => {
  it('writes times exactly as toISOString does', () => {
    const next = random(1);
    const cases = [0, 1, 999, 86_399_999, 86_400_000, Date.UTC(2024, 1, 29, 23, 59, 59, 7), Date.UTC(2099, 11, 31, 23, 59, 59, 999), 1.5, -1, 253_402_300_800_000];
    for (let i = 0; i < 20_000; i++) cases.push(Math.floor(next() * 4_102_444_800_000));
    for (const ms of cases) expect(isoTime(ms)).toBe(new Date(ms).toISOString());
  });

  it('writes rounded numbers exactly as JSON.stringify writes the rounded double', () => {
    const next = random(2);
    const values = [0, -0, 0.000004, -0.000004, 0.00001, 180, -180, 179.999996, -179.999996, 89.999999, 1e-7, 35_786.0004, 400_000.12345, 1e16, Number.NaN, Infinity];
    for (let i = 0; i < 15_000; i++) values.push((next() - 0.5) * 360, (next() - 0.5) * 1e-3, next() * 50_000);
    for (const v of values) {
      for (const digits of [3, 5]) {
        const f = 10 ** digits;
        expect(roundedJson(v, digits), `${v} to ${digits}`).toBe(JSON.stringify(Math.round(v * f) / f) ?? 'null');
      }
    }
  });

  it('writes points as JSON.stringify writes the point objects', () => {
    const next = random(3);
    const t0 = Date.UTC(2025, 0, 31, 23, 0, 0);
    const samples: TrackSample[] = Array.from({ length: 500 }, (_, i) => ({
      t: t0 + i * 60_000,
      lat: (next() - 0.5) * 170,
      lon: (next() - 0.5) * 360,
      altKm: 400 + next() * 36_000,
      sunlit: next() > 0.5,
    })) as TrackSample[];
    expect(trackPointsJson(samples)).toBe(JSON.stringify(samples.map(pointJson)));
    expect(trackPointsJson([])).toBe('[]');
  });

  it('writes GeoJSON as JSON.stringify would, coordinates rounded to 5 decimals and split points exact', () => {
    const next = random(4);
    const t0 = Date.UTC(2025, 0, 31, 23, 0, 0);
    let lon = 170;
    const samples = Array.from({ length: 300 }, (_, i) => {
      lon += 3.7 + next();
      if (lon >= 180) lon -= 360;
      return { t: t0 + i * 30_000, lat: Math.sin(i / 20) * 51.6 + next() * 1e-9, lon, altKm: 420, sunlit: true };
    }) as TrackSample[];
    const fc = trackToGeoJSON(samples, { satelliteId: 'sat_x', name: 'X "quoted"' }, { points: true });
    const text = trackGeoJsonText(fc);
    const rounded = JSON.parse(JSON.stringify(fc), (_k, v: unknown) => (typeof v === 'number' ? Math.round(v * 1e5) / 1e5 : v));
    expect(text).toBe(JSON.stringify(rounded));
    const parts = JSON.parse(text).features[0].geometry.coordinates as number[][][];
    expect(parts.length).toBeGreaterThan(3);
    for (let i = 1; i < parts.length; i++) {
      expect(Math.abs(parts[i - 1]!.at(-1)![0]!)).toBe(180);
      expect(parts[i]![0]![1]).toBe(parts[i - 1]!.at(-1)![1]);
    }
  });
});
