/** Words about keys: what uses a key, the quiet spell of a replaced key, and what still calls it. */
import type { ApiKey, KeyOrigin } from '../api/types.ts';
import { formatCount, formatDay } from './format.ts';

/** "at once", "90 minutes", "1 hour", "6 hours", "1 day", "3 days". */
export function formatQuiet(minutes: number | null | undefined): string {
  if (minutes === null || minutes === undefined || !Number.isFinite(minutes)) return '—';
  if (minutes <= 0) return 'at once';
  const plural = (n: number, one: string) => `${formatCount(n)} ${one}${n === 1 ? '' : 's'}`;
  if (minutes % 1440 === 0) return plural(minutes / 1440, 'day');
  if (minutes % 60 === 0) return plural(minutes / 60, 'hour');
  return plural(minutes, 'minute');
}

/** An origin as a person reads it; requests that named none came from a backend or the command line. */
export function originLabel(origin: string): string {
  return origin === '' ? 'no origin (a backend or the command line)' : origin;
}

/** "3 embeds", "1 embed", "no embed". */
export function embedCount(n: number): string {
  return n === 0 ? 'no embed' : `${formatCount(n)} ${n === 1 ? 'embed' : 'embeds'}`;
}

/** "Used by 3 embeds; seen from 2 origins in the last 7 days" (or "not called in the last 7 days"). */
export function keyUseSummary(key: Pick<ApiKey, 'use'>): string {
  const embeds = `Used by ${embedCount(key.use.embeds.length)}`;
  const n = key.use.origins.length;
  const seen = n === 0 ? 'not called in the last 7 days' : `seen from ${n === 1 ? 'this origin' : `these ${formatCount(n)} origins`} in the last 7 days`;
  return `${embeds}; ${seen}`;
}

/** "https://www.example.org: 1 204 requests, last on 02 Dec 2026". */
export function originLine(o: KeyOrigin): string {
  return `${originLabel(o.origin)}: ${formatCount(o.count)} ${o.count === 1 ? 'request' : 'requests'}, last on ${formatDay(o.lastDay)}`;
}

/** The origins that called a replaced key since the day it was replaced: the pages that still need the new key. */
export function stillCalling(key: Pick<ApiKey, 'use' | 'replacedAt'>): KeyOrigin[] {
  const since = key.replacedAt ? key.replacedAt.slice(0, 10) : null;
  return since ? key.use.origins.filter((o) => o.lastDay >= since) : [];
}
