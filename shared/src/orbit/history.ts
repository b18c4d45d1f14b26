/**
 * The set in force: which of a satellite's stored element sets answers for a time, and how a
 * window that spans several sets is cut into parts, each computed from its own set.
 *
 * Nadirline rule: at time t the set in force is the one whose epoch is the latest at or before
 * t; before every epoch it is the earliest set. A window is cut at the epoch of each later set
 * that falls inside it, so every part names the set it came from.
 */
import type { SatRec } from 'satellite.js';
import type { Result, TrackSample } from '../types.ts';
import { MS_PER_DAY } from './constants.ts';
import type { Observer } from './observer.ts';
import { findPasses } from './passes.ts';
import type { Pass, PassErrorCode, PassOptions } from './passes.ts';
import { DEFAULT_MAX_TRACK_SAMPLES, sampleTrack, trackGrid } from './track.ts';
import type { TrackErrorCode, TrackWindow } from './track.ts';

/** Anything with an epoch (Unix ms): a stored set row, a parsed ElementSet, a cached satrec. */
export interface HasEpoch {
  epochMs: number;
}

/** Sets ordered by epoch, earliest first (a copy; the input is left alone). */
export function byEpoch<T extends HasEpoch>(sets: readonly T[]): T[] {
  return [...sets].sort((a, b) => a.epochMs - b.epochMs);
}

/**
 * Index of the set in force at `tMs` in `sorted` (earliest epoch first): the latest epoch at or
 * before tMs, else 0 (tMs before every epoch). -1 when there is no set.
 */
export function indexInForce(sorted: readonly HasEpoch[], tMs: number): number {
  if (sorted.length === 0) return -1;
  let lo = 0;
  let hi = sorted.length - 1;
  if (tMs < (sorted[0] as HasEpoch).epochMs) return 0;
  // Invariant: sorted[lo].epochMs <= tMs; find the last such index.
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if ((sorted[mid] as HasEpoch).epochMs <= tMs) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

/** The set in force at `tMs` among `sorted` (earliest epoch first), or undefined when there is none. */
export function setInForce<T extends HasEpoch>(sorted: readonly T[], tMs: number): T | undefined {
  const i = indexInForce(sorted, tMs);
  return i < 0 ? undefined : sorted[i];
}

/** Age of a set at `tMs`, days (negative when tMs lies before the epoch). */
export function ageDaysAt(set: HasEpoch, tMs: number): number {
  return (tMs - set.epochMs) / MS_PER_DAY;
}

/** One part of a window: from `startMs` (inclusive) to `endMs` (exclusive, inclusive for the last part). */
export interface WindowPart<T> {
  set: T;
  startMs: number;
  endMs: number;
}

/**
 * Cut [startMs, endMs] where the set in force changes: one part per set, in time order. The
 * first part starts at startMs with the set in force there; each later part starts at the epoch
 * of the next set. Empty when there is no set.
 */
export function piecewiseWindows<T extends HasEpoch>(sorted: readonly T[], startMs: number, endMs: number): WindowPart<T>[] {
  const first = indexInForce(sorted, startMs);
  if (first < 0) return [];
  const parts: WindowPart<T>[] = [];
  let i = first;
  let from = startMs;
  for (;;) {
    const next = sorted[i + 1];
    if (next === undefined || next.epochMs > endMs) {
      parts.push({ set: sorted[i] as T, startMs: from, endMs });
      return parts;
    }
    if (next.epochMs > from) {
      parts.push({ set: sorted[i] as T, startMs: from, endMs: next.epochMs });
      from = next.epochMs;
    }
    i++;
  }
}

/** A set ready to propagate: its epoch and its satrec, with whatever the caller keeps beside them. */
export interface PropagatableSet extends HasEpoch {
  satrec: SatRec;
}

/** The samples of one part of a track, and the set they came from. */
export interface TrackPart<T> {
  set: T;
  samples: TrackSample[];
}

/**
 * Sample a track on one time grid (startMs + k * stepS) across several sets: each sample comes
 * from the set in force at its time, and the track is split into parts where the set changes.
 * Parts that hold no sample of the grid (two epochs within one step) are left out. Any
 * propagation failure fails the whole track, as in `sampleTrack`; the window is checked the same
 * way (`trackGrid`).
 */
export function sampleTrackAcrossSets<T extends PropagatableSet>(
  sorted: readonly T[],
  window: TrackWindow,
): Result<{ parts: TrackPart<T>[] }, TrackErrorCode> {
  const grid = trackGrid(window);
  if (!grid.ok) return grid;
  const { startMs, stepS } = window;
  const maxSamples = window.maxSamples ?? DEFAULT_MAX_TRACK_SAMPLES;
  const { stepMs, count } = grid;
  const lastMs = startMs + (count - 1) * stepMs;
  const parts: TrackPart<T>[] = [];
  const windows = piecewiseWindows(sorted, startMs, lastMs);
  for (let n = 0; n < windows.length; n++) {
    const w = windows[n] as WindowPart<T>;
    const isLast = n === windows.length - 1;
    // First grid index at or after the part's start; last grid index before its end (at or before, for the last part).
    const k0 = Math.ceil((w.startMs - startMs) / stepMs - 1e-9);
    let k1 = Math.floor((w.endMs - startMs) / stepMs + 1e-9);
    if (!isLast && startMs + k1 * stepMs >= w.endMs) k1--;
    if (k1 < k0) continue;
    const r = sampleTrack(w.set.satrec, { startMs: startMs + k0 * stepMs, endMs: startMs + k1 * stepMs, stepS, maxSamples });
    if (!r.ok) return r;
    parts.push({ set: w.set, samples: r.samples });
  }
  return { ok: true, parts };
}

/** A pass and the set it was computed from (the set in force at its rise). */
export type PassFromSet<T> = Pass & { inForce: T };

/**
 * Passes over a window that may span several sets: each part of the window is searched with
 * its own set, and a pass cut by a set change (under way at the end of one part and at the
 * start of the next) is joined into one, named by the set in force at its rise.
 */
export function findPassesAcrossSets<T extends PropagatableSet>(
  sorted: readonly T[],
  observer: Observer,
  options: PassOptions,
): Result<{ passes: PassFromSet<T>[]; alwaysUp: boolean; sets: T[] }, PassErrorCode> {
  const endMs = options.startMs + options.days * MS_PER_DAY;
  const parts = piecewiseWindows(sorted, options.startMs, endMs).filter((p, i, all) => p.endMs > p.startMs || all.length === 1);
  const passes: PassFromSet<T>[] = [];
  let alwaysUp = parts.length > 0;
  for (const part of parts) {
    const days = Math.max((part.endMs - part.startMs) / MS_PER_DAY, 1e-9);
    const r = findPasses(part.set.satrec, observer, { ...options, startMs: part.startMs, days });
    if (!r.ok) return r;
    alwaysUp &&= r.alwaysUp;
    for (const p of r.passes) {
      const prev = passes[passes.length - 1];
      if (prev && prev.inProgressAtEnd && p.inProgressAtStart && Math.abs(p.rise.t - prev.set.t) < 1000) {
        passes[passes.length - 1] = {
          ...prev,
          culmination: p.culmination.elevationDeg > prev.culmination.elevationDeg ? p.culmination : prev.culmination,
          set: p.set,
          visible: prev.visible || p.visible,
          inProgressAtEnd: p.inProgressAtEnd,
        };
      } else {
        passes.push({ ...p, inForce: part.set });
      }
    }
  }
  return { ok: true, passes, alwaysUp: alwaysUp && passes.length === 0, sets: parts.map((p) => p.set) };
}
