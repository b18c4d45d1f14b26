/**
 * Reference pass scanner for tests and the bench only: it looks at the sky every `stepS`
 * seconds (default 1 s), with no cleverness, so `findPasses` can be checked against it.
 * Rise and set are interpolated linearly between the two samples that straddle the mask,
 * culmination is the highest sample refined by a parabola through it and its neighbours.
 * Not part of the public API of Nadirline (it is slow on purpose).
 */
import type { SatRec } from 'satellite.js';
import type { Result } from '../types.ts';
import { MS_PER_DAY } from './constants.ts';
import { observerSite, validateObserver } from './observer.ts';
import type { Observer } from './observer.ts';
import { PropagationStop, SkyView } from './passes.ts';
import type { Pass, PassErrorCode, PassList, PassOptions } from './passes.ts';
import { propagateEci } from './propagate.ts';

export function findPassesBruteForce(
  satrec: SatRec,
  observer: Observer,
  options: PassOptions & { stepS?: number },
): Result<PassList, PassErrorCode> {
  try {
    return scan(satrec, observer, options);
  } catch (err) {
    if (err instanceof PropagationStop) return err.failure;
    throw err;
  }
}

function scan(satrec: SatRec, observer: Observer, options: PassOptions & { stepS?: number }): Result<PassList, PassErrorCode> {
  const bad = validateObserver(observer);
  if (bad) return { ok: false, code: 'invalid-observer', message: bad };
  const view = new SkyView(satrec, observerSite(observer), options.minElevationDeg ?? 0);
  const stepMs = (options.stepS ?? 1) * 1000;
  const startMs = options.startMs;
  const endMs = startMs + options.days * MS_PER_DAY;
  const count = Math.floor((endMs - startMs) / stepMs + 1e-9) + 1;
  const tAt = (i: number): number => Math.min(endMs, startMs + i * stepMs);
  const sunlitCheck = options.sunlitCheck ?? true;

  const probe = propagateEci(satrec, startMs);
  if (!probe.ok) return probe;

  const passes: Pass[] = [];
  let prevE = Number.NaN;
  let rise: number | undefined;
  let atStart = false;
  let best = { i: -1, e: -Infinity };
  let eBefore = Number.NaN;
  let eAfterBest = Number.NaN;
  let visible = false;
  let allUp = true;
  const lastIndex = tAt(count - 1) < endMs ? count : count - 1;

  const close = (setT: number, atEnd: boolean): void => {
    if (rise === undefined) return;
    // Parabola through the best sample and its neighbours (when both exist inside the pass).
    let culmT = tAt(best.i);
    if (Number.isFinite(eBefore) && Number.isFinite(eAfterBest)) {
      const denom = eBefore - 2 * best.e + eAfterBest;
      if (denom < 0) culmT += (0.5 * (eBefore - eAfterBest) / denom) * stepMs;
    }
    culmT = Math.min(setT, Math.max(rise, culmT));
    const top = view.look(culmT);
    passes.push({
      rise: { t: rise, azimuthDeg: view.look(rise).azimuthDeg },
      culmination: { t: culmT, azimuthDeg: top.azimuthDeg, elevationDeg: top.elevationDeg, rangeKm: top.rangeKm },
      set: { t: setT, azimuthDeg: view.look(setT).azimuthDeg },
      visible: sunlitCheck && visible,
      inProgressAtStart: atStart,
      inProgressAtEnd: atEnd,
    });
    rise = undefined;
  };

  for (let i = 0; i <= lastIndex; i++) {
    const t = tAt(i);
    const e = view.e(t);
    const up = e > 0;
    if (!up) allUp = false;
    if (up && rise === undefined) {
      atStart = i === 0;
      rise = atStart ? t : tAt(i - 1) + ((0 - prevE) / (e - prevE)) * (t - tAt(i - 1));
      best = { i, e };
      eBefore = atStart ? Number.NaN : prevE;
      eAfterBest = Number.NaN;
      visible = false;
    } else if (up) {
      if (e > best.e) {
        eBefore = prevE;
        best = { i, e };
        eAfterBest = Number.NaN;
      } else if (i === best.i + 1) {
        eAfterBest = e;
      }
    } else if (rise !== undefined) {
      if (i === best.i + 1) eAfterBest = e;
      close(tAt(i - 1) + ((0 - prevE) / (e - prevE)) * (t - tAt(i - 1)), false);
    }
    if (up && sunlitCheck && !visible) visible = view.visibleAt(t);
    prevE = e;
  }
  if (allUp) return { ok: true, passes: [], alwaysUp: true };
  close(endMs, true);
  return { ok: true, passes, alwaysUp: false };
}
