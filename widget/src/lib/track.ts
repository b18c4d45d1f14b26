/**
 * Track samples from the /v1 API: fetch windows, interpolation between samples and
 * the split of a ground track into past / future lines cut at the antimeridian.
 * Pure functions, no DOM: tested in track.spec.ts.
 */

/** One sample as the widget keeps it (time as Unix ms). */
export interface Sample {
  t: number;
  lat: number;
  lon: number;
  altKm: number;
  sunlit: boolean;
}

/** A position between two samples. */
export interface Interpolated extends Sample {
  /** true when `t` lies outside the samples held, so the position is the nearest known one. */
  extrapolated: boolean;
}

/** [lon, lat] as GeoJSON orders them. */
export type LonLat = [number, number];

/** Fixed ladder of window sizes: every reader asks for the same URLs, so answers cache well. */
export const LADDER: readonly { spanMs: number; stepS: number }[] = [
  { spanMs: 2 * 3600_000, stepS: 30 }, // low orbits: 241 points a window
  { spanMs: 6 * 3600_000, stepS: 90 },
  { spanMs: 24 * 3600_000, stepS: 360 }, // high orbits
];

export interface WindowPlan {
  spanMs: number;
  stepS: number;
  /** Start (Unix ms) of every window needed, each a whole multiple of spanMs since the epoch. */
  starts: number[];
  /** Time range the track must cover: [now - behind, now + ahead]. */
  fromMs: number;
  toMs: number;
}

/**
 * The windows needed to draw `behind` orbits before and `ahead` orbits after `nowMs`.
 * Windows are aligned to multiples of their span, so the URL of a window is the same for
 * everyone during its lifetime. The plan always reaches at least a quarter span past now,
 * so the next window is fetched well before the current one runs out.
 */
export function planWindows(nowMs: number, periodMin: number, behind: number, ahead: number): WindowPlan {
  const periodMs = Math.max(1, periodMin) * 60_000;
  const behindMs = Math.max(0, behind) * periodMs;
  const aheadMs = Math.max(0, ahead) * periodMs;
  const total = behindMs + aheadMs;
  // the smallest rung that keeps the number of windows reasonable
  const rung = LADDER.find((r) => total / r.spanMs <= 4) ?? LADDER[LADDER.length - 1]!;
  const fromMs = nowMs - behindMs;
  const toMs = nowMs + aheadMs;
  const reachMs = Math.max(toMs, nowMs + rung.spanMs / 4);
  const first = Math.floor(fromMs / rung.spanMs) * rung.spanMs;
  const starts: number[] = [];
  for (let s = first; s < reachMs; s += rung.spanMs) starts.push(s);
  return { spanMs: rung.spanMs, stepS: rung.stepS, starts, fromMs, toMs };
}

/** Wrap a longitude into [-180, 180). */
export function wrapLon(lon: number): number {
  return ((((lon + 180) % 360) + 360) % 360) - 180;
}

/** Signed shortest longitude step from a to b, in (-180, 180]. */
export function lonStep(a: number, b: number): number {
  let d = (b - a) % 360;
  if (d > 180) d -= 360;
  if (d <= -180) d += 360;
  return d;
}

/** Index of the last sample whose time is <= t (samples sorted by time), or -1. */
function lastAtOrBefore(samples: readonly Sample[], t: number): number {
  let lo = 0;
  let hi = samples.length - 1;
  let found = -1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    if (samples[mid]!.t <= t) {
      found = mid;
      lo = mid + 1;
    } else hi = mid - 1;
  }
  return found;
}

/**
 * The sub-satellite point at time t, linearly interpolated between the two samples around it.
 * Longitude takes the short way round, so a pass over the antimeridian does not sweep the globe.
 * Outside the samples, or in a hole between windows (a gap more than twice the step beside it), the
 * nearest sample is returned with `extrapolated: true`; none at all gives null.
 */
export function interpolate(samples: readonly Sample[], t: number): Interpolated | null {
  if (samples.length === 0) return null;
  const i = lastAtOrBefore(samples, t);
  if (i < 0) return { ...samples[0]!, t, extrapolated: true };
  const a = samples[i]!;
  const b = samples[i + 1];
  if (!b) return { ...a, t, extrapolated: t > a.t };
  // a hole between two windows (the one between not held yet) is not bridged by a straight line:
  // the nearest sample stands in, marked extrapolated, until the window comes
  const gap = b.t - a.t;
  const stepNear = Math.max(a.t - (samples[i - 1]?.t ?? a.t), (samples[i + 2]?.t ?? b.t) - b.t);
  if (stepNear > 0 && gap > 2 * stepNear) return { ...(t - a.t <= b.t - t ? a : b), t, extrapolated: true };
  const f = gap === 0 ? 0 : (t - a.t) / gap;
  return {
    t,
    lat: a.lat + (b.lat - a.lat) * f,
    lon: wrapLon(a.lon + lonStep(a.lon, b.lon) * f),
    altKm: a.altKm + (b.altKm - a.altKm) * f,
    sunlit: f < 0.5 ? a.sunlit : b.sunlit,
    extrapolated: false,
  };
}

/**
 * Cut a line of points where it crosses the antimeridian (RFC 7946 section 3.1.9): each piece
 * ends at +/-180 and the next starts at the opposite side, at the latitude found by
 * interpolation. Returns one or more lines of [lon, lat].
 */
export function splitAtAntimeridian(points: readonly { lat: number; lon: number }[]): LonLat[][] {
  const lines: LonLat[][] = [];
  let line: LonLat[] = [];
  let prev: { lat: number; lon: number } | undefined;
  const add = (pt: LonLat) => {
    const last = line[line.length - 1];
    if (!last || last[0] !== pt[0] || last[1] !== pt[1]) line.push(pt);
  };
  for (const p of points) {
    const lon = wrapLon(p.lon);
    if (prev) {
      const pl = wrapLon(prev.lon);
      const step = lonStep(pl, lon);
      const target = pl + step;
      if (target >= 180 || target < -180) {
        const edge = target >= 180 ? 180 : -180;
        const f = (edge - pl) / step;
        const lat = prev.lat + (p.lat - prev.lat) * f;
        add([edge, lat]);
        if (line.length > 1) lines.push(line);
        line = [[-edge, lat]];
      }
    }
    add([lon, p.lat]);
    prev = p;
  }
  if (line.length > 1) lines.push(line);
  return lines;
}

/**
 * Past and future ground track around `nowMs`: the samples in [fromMs, nowMs] and [nowMs, toMs],
 * each joined to the interpolated point at now and cut at the antimeridian.
 */
export function trackLines(
  samples: readonly Sample[],
  nowMs: number,
  fromMs: number,
  toMs: number,
): { past: LonLat[][]; future: LonLat[][]; here: Interpolated | null } {
  const here = interpolate(samples, nowMs);
  if (!here) return { past: [], future: [], here };
  const past: { lat: number; lon: number }[] = [];
  const future: { lat: number; lon: number }[] = [];
  const start = interpolate(samples, fromMs);
  const end = interpolate(samples, toMs);
  if (start && !start.extrapolated && fromMs < nowMs) past.push(start);
  for (const s of samples) {
    if (s.t > fromMs && s.t < nowMs) past.push(s);
    else if (s.t > nowMs && s.t < toMs) future.push(s);
  }
  if (!here.extrapolated) {
    past.push(here);
    future.unshift(here);
  }
  if (end && !end.extrapolated && toMs > nowMs) future.push(end);
  return { past: splitAtAntimeridian(past), future: splitAtAntimeridian(future), here };
}

/** Merge windows of samples into one sorted list without duplicate times. */
export function mergeSamples(windows: readonly (readonly Sample[])[]): Sample[] {
  const all = windows.flat().slice().sort((a, b) => a.t - b.t);
  const out: Sample[] = [];
  for (const s of all) if (out.length === 0 || out[out.length - 1]!.t !== s.t) out.push(s);
  return out;
}
