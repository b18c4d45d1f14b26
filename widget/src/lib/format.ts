/** Words and times for people: compass directions, latitudes, pass rows, ages. */
import type { Pass } from './api.ts';
import { compassIn, compassPhrase, english, type Translate } from './words.ts';

/** Azimuth in degrees (0 north, 90 east) as one of eight English compass words; `compassIn` for other languages. */
export function compassWord(azimuthDeg: number): string {
  return compassIn(english, azimuthDeg);
}

/** "51.6 degrees south" style latitude, and the same for longitude, in the words of `t`. */
export function latWords(lat: number, t: Translate = english, locale?: string): string {
  const a = Math.abs(lat).toFixed(1);
  if (a === '0.0') return t('equator');
  return t(lat >= 0 ? 'latNorth' : 'latSouth', { d: localDecimal(Math.abs(lat), locale) });
}
export function lonWords(lon: number, t: Translate = english, locale?: string): string {
  const a = Math.abs(lon).toFixed(1);
  const d = localDecimal(Math.abs(lon), locale);
  return a === '0.0' || a === '180.0' ? t('lonPlain', { d }) : t(lon >= 0 ? 'lonEast' : 'lonWest', { d });
}

/** One decimal in the locale's digits and separator ("51,6" in German); plain digits without a locale. */
function localDecimal(x: number, locale: string | undefined): string {
  if (!locale) return x.toFixed(1);
  try {
    return x.toLocaleString(locale, { minimumFractionDigits: 1, maximumFractionDigits: 1 });
  } catch {
    return x.toFixed(1);
  }
}

/** Short coordinates for the panel: 51.6° S, 20.3° W (51,6° S, 20,3° W in German), in the words of `t`. */
export function latLonShort(lat: number, lon: number, t: Translate = english, locale?: string): string {
  return `${localDecimal(Math.abs(lat), locale)}° ${t(lat >= 0 ? 'abbrN' : 'abbrS')}, ${localDecimal(Math.abs(lon), locale)}° ${t(lon >= 0 ? 'abbrE' : 'abbrW')}`;
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
export function passRow(p: Pass, nowMs: number, opts: ClockOptions, minElevationDeg = 10, t: Translate = english): PassRow {
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
    riseDir: compassIn(t, p.rise.azimuth),
    highest: fmt.format(top),
    highestDir: compassIn(t, p.culmination.azimuth),
    elevation: open ? t('soFar', { deg: elev }) : `${elev}°`,
    set: fmt.format(set),
    setDir: compassIn(t, p.set.azimuth),
    visible: p.visible,
    open,
  };
  const sentence = t(open ? 'passSentenceOpen' : 'passSentence', {
    day: day ? `${day} ` : '',
    mask: minElevationDeg,
    rise: row.rise,
    riseDirIn: compassPhrase(t, p.rise.azimuth),
    highest: row.highest,
    deg: elev,
    highestDirIn: compassPhrase(t, p.culmination.azimuth),
    set: row.set,
    setDirIn: compassPhrase(t, p.set.azimuth),
    visibility: t(p.visible ? 'visibleToEye' : 'notVisibleToEye'),
  });
  return { ...row, sentence };
}

/** "3.2 days" / "5 hours" for element-set ages, in the words of `t`. */
export function ageWords(ageDays: number, t: Translate = english, locale?: string): string {
  if (ageDays < 1) {
    const h = Math.max(1, Math.round(ageDays * 24));
    return t('hours', { n: h });
  }
  const d = ageDays < 10 ? Math.round(ageDays * 10) / 10 : Math.round(ageDays);
  let n = ageDays < 10 ? d.toFixed(1) : String(d);
  try {
    if (locale) n = d.toLocaleString(locale, { minimumFractionDigits: ageDays < 10 ? 1 : 0, maximumFractionDigits: 1 });
  } catch {
    // unknown locale: plain digits
  }
  return t('days', { n });
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
