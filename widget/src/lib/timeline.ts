/**
 * The time control's model: how far from now (or from the pinned `at` time) the map is shown,
 * within a range some hours back and ahead, and that offset in plain words for the panel and for
 * screen readers.
 */
import { english, type Translate } from './words.ts';

/** How far the reader may move the map, hours either side of now (or of `at`). */
export const TIME_RANGE_H = 12;
/** Slider step (arrow keys), minutes; Page Up / Page Down move ten steps. */
export const TIME_STEP_MIN = 1;

const MIN = 60_000;

/** The offset kept within the range and on whole minutes. */
export function clampOffsetMs(offsetMs: number, rangeH = TIME_RANGE_H): number {
  const max = rangeH * 60 * MIN;
  const v = Math.round(offsetMs / MIN) * MIN;
  return Math.max(-max, Math.min(max, v));
}

/** "2 h 10 min", "35 min", "1 h", in the words of `t`. */
export function spanWords(ms: number, t: Translate = english): string {
  const total = Math.round(Math.abs(ms) / MIN);
  const h = Math.floor(total / 60);
  const m = total % 60;
  if (h === 0) return t('spanM', { m });
  return m === 0 ? t('spanH', { h }) : t('spanHM', { h, m });
}

/**
 * The offset as the panel says it, in the words of `t`: "now", "2 h 10 min ahead", "35 min
 * back". With a pinned time (`pinned`), relative to it: "the pinned time", "20 min after the
 * pinned time". (The table, not Intl.DurationFormat, which Node 20 lacks.)
 */
export function offsetWords(offsetMs: number, pinned = false, t: Translate = english): string {
  if (Math.abs(offsetMs) < MIN / 2) return t(pinned ? 'offsetPinned' : 'offsetNow');
  const span = spanWords(offsetMs, t);
  if (pinned) return t(offsetMs > 0 ? 'offsetAfterPinned' : 'offsetBeforePinned', { span });
  return t(offsetMs > 0 ? 'offsetAhead' : 'offsetBack', { span });
}

/** Parse the `at` attribute (ISO 8601 with a zone); undefined when absent or not a time. */
export function parseAt(value: string | null | undefined): number | undefined {
  if (!value) return undefined;
  const v = value.trim();
  if (!/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}:?\d{2})$/i.test(v)) return undefined;
  const ms = Date.parse(v);
  return Number.isFinite(ms) ? ms : undefined;
}
