import { describe, expect, it } from 'vitest';
import { interpolate, lonStep, mergeSamples, planWindows, splitAtAntimeridian, trackLines, wrapLon, type Sample } from './track.ts';

const s = (t: number, lat: number, lon: number, altKm = 420, sunlit = true): Sample => ({ t, lat, lon, altKm, sunlit });

describe('longitude helpers', () => {
  it('wraps longitudes into [-180, 180)', () => {
    expect(wrapLon(190)).toBe(-170);
    expect(wrapLon(-190)).toBe(170);
    expect(wrapLon(180)).toBe(-180);
    expect(wrapLon(540)).toBe(-180);
    expect(wrapLon(12.5)).toBe(12.5);
  });
  it('takes the short way round between two longitudes', () => {
    expect(lonStep(179, -179)).toBe(2);
    expect(lonStep(-179, 179)).toBe(-2);
    expect(lonStep(10, 20)).toBe(10);
  });
});

describe('interpolate', () => {
  it('does not bridge a hole between two windows with a straight line', () => {
    // two windows of 60 s steps an hour apart: the hour between is not known yet
    const w1: Sample[] = [0, 60, 120].map((k) => ({ t: k * 1000, lat: k / 60, lon: k / 60, altKm: 500, sunlit: true }));
    const w2: Sample[] = [3720, 3780, 3840].map((k) => ({ t: k * 1000, lat: -k / 600, lon: 100, altKm: 500, sunlit: true }));
    const both = mergeSamples([w1, w2]);
    expect(interpolate(both, 600_000)).toMatchObject({ lat: 2, lon: 2, extrapolated: true });
    expect(interpolate(both, 3_500_000)).toMatchObject({ lon: 100, extrapolated: true });
    // inside a window, and across the seam of adjacent windows of different steps, it interpolates
    expect(interpolate(both, 90_000)).toMatchObject({ lat: 1.5, extrapolated: false });
    const w3: Sample[] = [240, 360, 480].map((k) => ({ t: k * 1000, lat: 0, lon: 0, altKm: 500, sunlit: true }));
    expect(interpolate(mergeSamples([w1, w3]), 180_000)).toMatchObject({ extrapolated: false });
  });

  const samples = [s(0, 0, 0, 400), s(60_000, 2, 4, 410, false), s(120_000, 4, 8, 420, false)];

  it('puts the sub-satellite point between the two samples around the time', () => {
    const p = interpolate(samples, 30_000)!;
    expect(p.lat).toBeCloseTo(1, 9);
    expect(p.lon).toBeCloseTo(2, 9);
    expect(p.altKm).toBeCloseTo(405, 9);
    expect(p.extrapolated).toBe(false);
  });

  it('moves continuously across the antimeridian instead of sweeping round the world', () => {
    const across = [s(0, 10, 178), s(60_000, 12, -178)];
    const p = interpolate(across, 45_000)!;
    expect(p.lon).toBeCloseTo(-179, 9); // 178 + 4 * 0.75 = 181 -> -179
    expect(p.lat).toBeCloseTo(11.5, 9);
  });

  it('returns the nearest sample marked as extrapolated outside the samples held', () => {
    expect(interpolate(samples, 500_000)).toMatchObject({ lat: 4, lon: 8, extrapolated: true, t: 500_000 });
    expect(interpolate(samples, -5)).toMatchObject({ lat: 0, extrapolated: true });
  });

  it('returns null when there are no samples', () => {
    expect(interpolate([], 0)).toBeNull();
  });
});

describe('planWindows', () => {
  const hour = 3_600_000;

  it('aligns every window to a whole multiple of its span so answers are shared and cacheable', () => {
    const now = Date.UTC(2026, 2, 4, 13, 17, 41);
    const plan = planWindows(now, 92.7, 1, 1);
    for (const start of plan.starts) expect(start % plan.spanMs).toBe(0);
    const later = planWindows(now + 60_000, 92.7, 1, 1);
    expect(later.starts).toEqual(plan.starts); // a minute later asks for the very same windows
  });

  it('covers the requested orbits behind and ahead', () => {
    const now = Date.UTC(2026, 2, 4, 13, 17, 41);
    const plan = planWindows(now, 90, 2, 1);
    expect(plan.fromMs).toBe(now - 3 * hour);
    expect(plan.toMs).toBe(now + 1.5 * hour);
    expect(plan.starts[0]!).toBeLessThanOrEqual(plan.fromMs);
    expect(plan.starts[plan.starts.length - 1]! + plan.spanMs).toBeGreaterThanOrEqual(plan.toMs);
  });

  it('already holds the next window a quarter span before the current one ends', () => {
    const span = planWindows(0, 90, 0, 0).spanMs;
    const nearEnd = 10 * span + 0.8 * span; // 80 % into a window, nothing ahead requested
    const plan = planWindows(nearEnd, 90, 0, 0);
    expect(plan.starts).toContain(11 * span);
  });

  it('uses longer windows with coarser steps for high orbits and keeps each under 250 points', () => {
    const low = planWindows(0, 92, 1, 1);
    const geo = planWindows(0, 1436, 1, 1);
    expect(geo.spanMs).toBeGreaterThan(low.spanMs);
    for (const p of [low, geo]) expect(p.spanMs / 1000 / p.stepS).toBeLessThan(250);
    expect(geo.starts.length).toBeLessThanOrEqual(4);
  });
});

describe('splitAtAntimeridian', () => {
  it('cuts an eastward line at +180 and goes on from -180 at the interpolated latitude (RFC 7946 3.1.9)', () => {
    const lines = splitAtAntimeridian([
      { lat: 0, lon: 176 },
      { lat: 4, lon: -176 },
      { lat: 6, lon: -172 },
    ]);
    expect(lines).toHaveLength(2);
    expect(lines[0]).toEqual([
      [176, 0],
      [180, 2],
    ]);
    expect(lines[1]![0]).toEqual([-180, 2]);
    expect(lines[1]![lines[1]!.length - 1]).toEqual([-172, 6]);
  });

  it('cuts a westward line at -180 and goes on from +180', () => {
    const lines = splitAtAntimeridian([
      { lat: 10, lon: -178 },
      { lat: 12, lon: 178 },
    ]);
    expect(lines).toEqual([
      [
        [-178, 10],
        [-180, 11],
      ],
      [
        [180, 11],
        [178, 12],
      ],
    ]);
  });

  it('leaves a line that does not cross alone, and never keeps single points', () => {
    expect(splitAtAntimeridian([{ lat: 0, lon: 10 }, { lat: 1, lon: 20 }])).toEqual([
      [
        [10, 0],
        [20, 1],
      ],
    ]);
    expect(splitAtAntimeridian([{ lat: 0, lon: 10 }])).toEqual([]);
  });

  it('keeps every piece within [-180, 180] for a whole day of a low orbit', () => {
    const pts = Array.from({ length: 1440 }, (_, i) => ({ lat: 51 * Math.sin(i / 14.6), lon: wrapLon(i * 3.9 - 170) }));
    const lines = splitAtAntimeridian(pts);
    expect(lines.length).toBeGreaterThan(10);
    for (const line of lines) {
      for (let i = 1; i < line.length; i++) expect(Math.abs(line[i]![0] - line[i - 1]![0])).toBeLessThan(180);
    }
  });
});

describe('trackLines', () => {
  const samples = [s(0, 0, 170), s(60_000, 1, 175), s(120_000, 2, -180), s(180_000, 3, -175), s(240_000, 4, -170)];

  it('splits the track at now into a past and a future that meet at the interpolated point', () => {
    const { past, future, here } = trackLines(samples, 90_000, 0, 240_000);
    expect(here).toMatchObject({ lat: 1.5, extrapolated: false });
    const lastPast = past[past.length - 1]!;
    expect(lastPast[lastPast.length - 1]).toEqual([here!.lon, here!.lat]);
    expect(future[0]![0]).toEqual([here!.lon, here!.lat]);
  });

  it('cuts the future where it crosses the antimeridian', () => {
    const { future } = trackLines(samples, 30_000, 0, 240_000);
    expect(future.length).toBe(2);
    expect(future[0]![future[0]!.length - 1]![0]).toBe(180);
  });

  it('starts the past at the requested time by interpolation', () => {
    const { past } = trackLines(samples, 150_000, 30_000, 240_000);
    expect(past[0]![0]).toEqual([172.5, 0.5]);
  });
});

describe('mergeSamples', () => {
  it('merges windows into one time-sorted list without the shared edge sample twice', () => {
    const a = [s(0, 0, 0), s(60_000, 1, 1)];
    const b = [s(60_000, 1, 1), s(120_000, 2, 2)];
    expect(mergeSamples([b, a]).map((x) => x.t)).toEqual([0, 60_000, 120_000]);
  });
});
