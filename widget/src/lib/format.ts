/** Words and times for people: compass directions, latitudes, pass rows, ages. */
import type { Pass } from './api.ts';

const COMPASS = ['north', 'north-east', 'east', 'south-east', 'south', 'south-west', 'west', 'north-west'] as const;

/** Azimuth in degrees (0 north, 90 east) as one of eight compass words. */
export function compassWord(azimuthDeg: number): string {
  const i = Math.round((((azimuthDeg % 360) + 360) % 360) / 45) % 8;
  return COMPASS[i]!;
}

/** "51.6 degrees south" style latitude, and the same for longitude. */
export function latWords(lat: number): string {
  const a = Math.abs(lat).toFixed(1);
  return a === '0.0' ? 'the equator' : `${a} degrees ${lat >= 0 ? 'north' : 'south'}`;
}
export function lonWords(lon: number): string {
  const a = Math.abs(lon).toFixed(1);
  return a === '0.0' || a === '180.0' ? `${a} degrees` : `${a} degrees ${lon >= 0 ? 'east' : 'west'}`;
}

/** Short coordinates for the panel: 51.6° S, 20.3° W. */
export function latLonShort(lat: number, lon: number): string {
  return `${Math.abs(lat).toFixed(1)}° ${lat >= 0 ? 'N' : 'S'}, ${Math.abs(lon).toFixed(1)}° ${lon >= 0 ? 'E' : 'W'}`;
}

export interface ClockOptions {
  timeZone?: string | undefined;
  locale?: string | undefined;
}

/** A time-of-day formatter in the reader's (or the configured) zone and locale; falls back safely. */
export function clock(opts: ClockOptions, withDay = false): Intl.DateTimeFormat {
  const o: Intl.DateTimeFormatOptions = { hour: '2-digit', minute: '2-digit', ...(withDay ? { weekday: 'short' } : {}) };
  try {
    return new Intl.DateTimeFormat(opts.locale || undefined, { ...o, timeZone: opts.timeZone || undefined });
  } catch {
    return new Intl.DateTimeFormat(undefined, o); // unknown zone or locale: the reader's own
  }
}

/** Calendar day key (YYYY-MM-DD) of a time in a zone, to tell "today" from other days. */
function dayKey(ms: number, timeZone: string | undefined): string {
  try {
    return new Intl.DateTimeFormat('en-CA', { timeZone: timeZone || undefined, year: 'numeric', month: '2-digit', day: '2-digit' }).format(ms);
  } catch {
    return new Intl.DateTimeFormat('en-CA', { year: 'numeric', month: '2-digit', day: '2-digit' }).format(ms);
  }
}

export interface PassRow {
  key: string;
  /** Day label when the pass is not today in the zone, e.g. "Tue"; empty for today. */
  day: string;
  rise: string;
  riseDir: string;
  highest: string;
  highestDir: string;
  elevation: string;
  set: string;
  setDir: string;
  visible: boolean;
  /** Still under way when the forecast window ends: `set` is that end, not a true set. */
  open: boolean;
  /** One sentence for screen readers and the live region. */
  sentence: string;
}

/**
 * Format one pass for the list, in the given zone and locale. Rise and set are at the elevation
 * mask (`minElevationDeg`), not the horizon, and the sentence says so. A pass still under way when
 * the two-day forecast ends has no true set: it reads "still up at ..." with its height so far.
 */
export function passRow(p: Pass, nowMs: number, opts: ClockOptions, minElevationDeg = 10): PassRow {
  const fmt = clock(opts);
  const dayFmt = (() => {
    try {
      return new Intl.DateTimeFormat(opts.locale || undefined, { weekday: 'short', timeZone: opts.timeZone || undefined });
    } catch {
      return new Intl.DateTimeFormat(undefined, { weekday: 'short' });
    }
  })();
  const rise = Date.parse(p.rise.t);
  const top = Date.parse(p.culmination.t);
  const set = Date.parse(p.set.t);
  const open = p.inProgressAtEnd === true;
  const day = dayKey(rise, opts.timeZone) === dayKey(nowMs, opts.timeZone) ? '' : dayFmt.format(rise);
  const elev = Math.round(p.culmination.elevation);
  const row = {
    key: p.rise.t,
    day,
    rise: fmt.format(rise),
    riseDir: compassWord(p.rise.azimuth),
    highest: fmt.format(top),
    highestDir: compassWord(p.culmination.azimuth),
    elevation: open ? `${elev}° so far` : `${elev}°`,
    set: fmt.format(set),
    setDir: compassWord(p.set.azimuth),
    visible: p.visible,
    open,
  };
  const mask = `${minElevationDeg} degrees`;
  const sentence =
    `${day ? `${day} ` : ''}climbs above ${mask} at ${row.rise} in the ${row.riseDir}, ` +
    (open
      ? `still up at ${row.set} when the forecast ends, ${elev} degrees up so far`
      : `highest at ${row.highest}, ${elev} degrees up in the ${row.highestDir}, sinks below ${mask} at ${row.set} in the ${row.setDir}`) +
    (p.visible ? ', visible to the eye' : ', not visible to the eye');
  return { ...row, sentence };
}

/** "3.2 days" / "5 hours" for element-set ages. */
export function ageWords(ageDays: number): string {
  if (ageDays < 1) {
    const h = Math.max(1, Math.round(ageDays * 24));
    return `${h} hour${h === 1 ? '' : 's'}`;
  }
  const d = ageDays < 10 ? ageDays.toFixed(1) : String(Math.round(ageDays));
  return `${d} days`;
}

/**
 * A time zone as people say it, in the reader's language: "Eastern Time", "Mitteleuropäische
 * Zeit", "heure d’Europe centrale" (Intl's generic long name, else its long name at `atMs`),
 * never the raw "America/New_York". An unknown zone or an engine without these names falls back
 * to the zone id read as words ("New York"), then to `fallback`.
 */
export function zoneWords(timeZone: string | undefined, locale: string | undefined, atMs: number, fallback = 'local time'): string {
  let zone = timeZone;
  try {
    zone ||= Intl.DateTimeFormat().resolvedOptions().timeZone;
  } catch {
    zone = undefined;
  }
  if (!zone) return fallback;
  for (const style of ['longGeneric', 'long'] as const) {
    try {
      const part = new Intl.DateTimeFormat(locale || undefined, { timeZone: zone, timeZoneName: style })
        .formatToParts(atMs)
        .find((p) => p.type === 'timeZoneName')?.value;
      // engines without a name for the zone give an offset ("GMT-5"), which is no better than the city
      if (part && !/^(GMT|UTC)[+−-]\d/.test(part)) return part;
    } catch {
      // unknown zone or style: try the next
    }
  }
  if (/^(Etc\/)?(UTC|GMT|UCT|Zulu)$/i.test(zone)) return 'UTC';
  return zone.split('/').pop()!.replace(/_/g, ' ') || fallback;
}
