/**
 * Ground track: samples over a window, the antimeridian split of RFC 7946 section 3.1.9, and
 * GeoJSON output.
 */
import type { SatRec } from 'satellite.js';
import type { Feature, FeatureCollection, GeoJsonProperties, MultiLineString, Point } from 'geojson';
import type { Result, TrackSample } from '../types.ts';
import { DEG_PER_RAD, MS_PER_MIN } from './constants.ts';
import { cartesianToGeodetic, gmstRad, isSunlit, sunVector } from './frames.ts';
import type { SunVector } from './frames.ts';
import { propagateEci, satrecEpochMs } from './propagate.ts';
import type { PropagationErrorCode } from './propagate.ts';

export interface TrackWindow {
  /** Unix ms, first sample. */
  startMs: number;
  /** Unix ms; the last sample is at or before it. */
  endMs: number;
  /** Sample step, s (> 0). */
  stepS: number;
  /** Refuse windows that would give more samples than this (default 100 000). */
  maxSamples?: number;
}

export type TrackErrorCode = PropagationErrorCode | 'invalid-window' | 'too-many-samples';

/** The Sun moves about 0.04 deg in ten minutes: one solar position serves that long (ample for a shadow flag). */
const SUN_REFRESH_MS = 10 * MS_PER_MIN;
export const DEFAULT_MAX_TRACK_SAMPLES = 100_000;

/**
 * Samples of the grid startMs + k * stepS from startMs to endMs (the last at or before endMs;
 * a sample that misses endMs by under a nanosecond's share of a step still counts).
 */
export function gridCount(startMs: number, endMs: number, stepS: number): number {
  return Math.floor((endMs - startMs) / (stepS * 1000) + 1e-9) + 1;
}

/**
 * The time grid of a track window, checked: its step in ms and its number of samples, or why it
 * cannot be sampled (a non-finite or reversed window, a step that is not positive, more samples
 * than `maxSamples`). `sampleTrack` and `sampleTrackAcrossSets` share it.
 */
export function trackGrid(window: TrackWindow): Result<{ stepMs: number; count: number }, 'invalid-window' | 'too-many-samples'> {
  const { startMs, endMs, stepS } = window;
  const maxSamples = window.maxSamples ?? DEFAULT_MAX_TRACK_SAMPLES;
  if (!Number.isFinite(startMs) || !Number.isFinite(endMs) || endMs < startMs) {
    return { ok: false, code: 'invalid-window', message: 'the window needs finite startMs <= endMs' };
  }
  if (!Number.isFinite(stepS) || stepS <= 0) {
    return { ok: false, code: 'invalid-window', message: 'stepS must be a positive number of seconds' };
  }
  const count = gridCount(startMs, endMs, stepS);
  if (count > maxSamples) {
    return { ok: false, code: 'too-many-samples', message: `the window holds ${count} samples; at most ${maxSamples} are allowed` };
  }
  return { ok: true, stepMs: stepS * 1000, count };
}

/**
 * Sample the ground track from `startMs` to `endMs` every `stepS` seconds: WGS-84 geodetic
 * latitude and longitude (deg), height (km), and `sunlit` (the satellite sees the Sun's centre:
 * see `isSunlit`, the middle of the conical penumbra). Any propagation failure inside the window
 * fails the whole track with its code and the time it happened at.
 */
export function sampleTrack(
  satrec: SatRec,
  window: TrackWindow,
): Result<{ samples: TrackSample[] }, TrackErrorCode> {
  const grid = trackGrid(window);
  if (!grid.ok) return grid;
  const { startMs } = window;
  const { stepMs, count } = grid;
  const epochMs = satrecEpochMs(satrec);
  const samples: TrackSample[] = new Array<TrackSample>(count);
  let sun: SunVector = sunVector(startMs);
  let sunAt = startMs;
  for (let i = 0; i < count; i++) {
    const t = startMs + i * stepMs;
    const s = propagateEci(satrec, t, epochMs);
    if (!s.ok) {
      return { ok: false, code: s.code, message: `at ${new Date(t).toISOString()}: ${s.message}` };
    }
    if (t - sunAt >= SUN_REFRESH_MS) {
      sun = sunVector(t);
      sunAt = t;
    }
    const p = s.position;
    const g = cartesianToGeodetic(p.x, p.y, p.z, gmstRad(t));
    samples[i] = {
      t,
      lat: g.latRad * DEG_PER_RAD,
      lon: g.lonRad * DEG_PER_RAD,
      altKm: g.altKm,
      sunlit: isSunlit(p, sun),
    };
  }
  return { ok: true, samples };
}

/**
 * Cut a track where it crosses the antimeridian (RFC 7946 section 3.1.9). Between two samples
 * whose longitudes differ by more than 180 deg the track is taken to cross +-180 the short way;
 * the crossing is interpolated linearly in longitude (latitude, time and height follow the same
 * fraction) and added to both sides, at lon exactly 180 on the east side and -180 on the west.
 * No segment then holds a jump of more than 180 deg.
 */
export function splitAtAntimeridian(samples: readonly TrackSample[]): TrackSample[][] {
  const segments: TrackSample[][] = [];
  let current: TrackSample[] = [];
  let prev: TrackSample | undefined;
  for (const s of samples) {
    if (prev && Math.abs(s.lon - prev.lon) > 180) {
      const eastward = s.lon < prev.lon; // e.g. 179 -> -179 goes east over +180
      const edge = eastward ? 180 : -180;
      const nextLon = eastward ? s.lon + 360 : s.lon - 360;
      const f = (edge - prev.lon) / (nextLon - prev.lon);
      const lerp = (a: number, b: number): number => a + f * (b - a);
      const base = {
        t: lerp(prev.t, s.t),
        lat: lerp(prev.lat, s.lat),
        altKm: lerp(prev.altKm, s.altKm),
        sunlit: f < 0.5 ? prev.sunlit : s.sunlit,
      };
      if (prev.lon !== edge) current.push({ ...base, lon: edge });
      else current[current.length - 1] = { ...prev, lon: edge };
      segments.push(current);
      current = s.lon === -edge ? [] : [{ ...base, lon: -edge }];
    }
    current.push(s);
    prev = s;
  }
  if (current.length > 0) segments.push(current);
  return segments;
}

export interface TrackGeoJsonOptions {
  /** Add one Point feature per sample, with t (ISO), altKm and sunlit as properties. */
  points?: boolean;
}

/**
 * GeoJSON of a track: a FeatureCollection whose first feature is ONE MultiLineString holding
 * every antimeridian-split segment (segments of a single position are dropped, a LineString needs
 * two), with `properties` on it; then, if asked, one Point feature per sample.
 * Positions are [lon, lat] in degrees.
 */
export function trackToGeoJSON(
  samples: readonly TrackSample[],
  properties: GeoJsonProperties = {},
  options: TrackGeoJsonOptions = {},
): FeatureCollection<MultiLineString | Point> {
  const lines = splitAtAntimeridian(samples)
    .filter((seg) => seg.length >= 2)
    .map((seg) => seg.map((s) => [s.lon, s.lat]));
  const features: Feature<MultiLineString | Point>[] = [
    {
      type: 'Feature',
      geometry: { type: 'MultiLineString', coordinates: lines },
      properties: { ...properties },
    },
  ];
  if (options.points) {
    for (const s of samples) {
      features.push({
        type: 'Feature',
        geometry: { type: 'Point', coordinates: [s.lon, s.lat] },
        properties: { t: new Date(s.t).toISOString(), altKm: s.altKm, sunlit: s.sunlit },
      });
    }
  }
  return { type: 'FeatureCollection', features };
}
