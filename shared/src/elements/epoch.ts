/**
 * Epochs to the microsecond. An epoch is held as an integer count of microseconds since
 * 1970-01-01T00:00:00Z (`epochUs`); every Unix microsecond from 1957 to 2056 is below 2^53,
 * so the count is exact in a double. Calendar arithmetic works on whole days only (Date.UTC is
 * exact there); the fraction of the day never passes through a Date, which would cut it to
 * whole milliseconds.
 */

export const US_PER_MS = 1000;
export const US_PER_SECOND = 1_000_000;
export const US_PER_DAY = 86_400_000_000;
export const MS_PER_DAY = 86_400_000;

/** The years a TLE can carry: 57-99 mean 19xx, 00-56 mean 20xx (AIAA 2006-6753 Appendix B). */
export const FIRST_TLE_YEAR = 1957;
export const LAST_TLE_YEAR = 2056;

export function isLeapYear(year: number): boolean {
  return (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0;
}

export function daysInYear(year: number): number {
  return isLeapYear(year) ? 366 : 365;
}

const MONTH_DAYS = [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31] as const;

export function daysInMonth(year: number, month: number): number {
  if (month === 2 && isLeapYear(year)) return 29;
  return MONTH_DAYS[month - 1] ?? 0;
}

/** Unix day number (days since 1970-01-01) of a calendar date. */
export function unixDay(year: number, month: number, day: number): number {
  // Date.UTC maps years 0-99 to 19xx; our years are four-digit, but guard anyway.
  const d = new Date(0);
  d.setUTCFullYear(year, month - 1, day);
  return Math.round(d.getTime() / MS_PER_DAY);
}

/** Calendar parts of an exact microsecond epoch. */
export interface EpochParts {
  year: number;
  month: number;
  day: number;
  dayOfYear: number;
  hour: number;
  minute: number;
  second: number;
  /** Microseconds within the second, 0..999999. */
  micro: number;
  /** Microseconds since the start of the UTC day. */
  microOfDay: number;
}

export function epochParts(epochUs: number): EpochParts {
  const dayNo = Math.floor(epochUs / US_PER_DAY);
  const microOfDay = epochUs - dayNo * US_PER_DAY;
  const date = new Date(dayNo * MS_PER_DAY);
  const year = date.getUTCFullYear();
  const month = date.getUTCMonth() + 1;
  const day = date.getUTCDate();
  const dayOfYear = dayNo - unixDay(year, 1, 1) + 1;
  const secOfDay = Math.floor(microOfDay / US_PER_SECOND);
  return {
    year,
    month,
    day,
    dayOfYear,
    hour: Math.floor(secOfDay / 3600),
    minute: Math.floor((secOfDay % 3600) / 60),
    second: secOfDay % 60,
    micro: microOfDay - secOfDay * US_PER_SECOND,
    microOfDay,
  };
}

function pad(n: number, width: number): string {
  return String(n).padStart(width, '0');
}

/** "2000-06-27T18:50:19.733568" (CCSDS calendar form, six decimals, no zone letter). */
export function formatEpochCalendar(epochUs: number): string {
  const p = epochParts(epochUs);
  return (
    `${pad(p.year, 4)}-${pad(p.month, 2)}-${pad(p.day, 2)}` +
    `T${pad(p.hour, 2)}:${pad(p.minute, 2)}:${pad(p.second, 2)}.${pad(p.micro, 6)}`
  );
}

/** ISO 8601 UTC with six decimals: "2000-06-27T18:50:19.733568Z". */
export function formatEpochIso(epochUs: number): string {
  return `${formatEpochCalendar(epochUs)}Z`;
}

/** Unix milliseconds (float; the fraction holds the microseconds). */
export function epochMsFromUs(epochUs: number): number {
  return epochUs / US_PER_MS;
}

/**
 * Exact microseconds back from a float millisecond epoch. The double nearest to us/1000 times
 * 1000 lies within half a microsecond of `us` for every epoch this module handles, so rounding
 * recovers it.
 */
export function epochUsFromMs(epochMs: number): number {
  return Math.round(epochMs * US_PER_MS);
}

/** Microseconds of a decimal fraction given by its digits ("78495062" means 0.78495062) times `unitUs`. */
export function fractionToMicros(digits: string, unitUs: number): number {
  if (digits.length === 0) return 0;
  // Digits past the 15th cannot move the result by a microsecond; dropping them bounds the work.
  if (digits.length > 15) digits = digits.slice(0, 15);
  // BigInt keeps the product exact for any number of digits; round half up to the microsecond.
  const num = BigInt(digits) * BigInt(unitUs);
  const den = 10n ** BigInt(digits.length);
  return Number((num * 2n + den) / (2n * den));
}

export type EpochParse = { ok: true; epochUs: number } | { ok: false; reason: string };

const CALENDAR = /^(\d{4})-(\d{2})-(\d{2})T(\d{2}):(\d{2}):(\d{2})(?:\.(\d+))?(Z|[+-]\d{2}:\d{2})?$/;
const ORDINAL = /^(\d{4})-(\d{3})T(\d{2}):(\d{2}):(\d{2})(?:\.(\d+))?(Z|[+-]\d{2}:\d{2})?$/;

/**
 * CCSDS ASCII time (CCSDS 502.0-B-3 section 7.5.10 and CCSDS 301.0-B-4): calendar
 * `YYYY-MM-DDThh:mm:ss[.d...]` or ordinal day `YYYY-DDDThh:mm:ss[.d...]`, optionally followed by
 * `Z` (and, for ISO input, a `+hh:mm` offset). Kept to the microsecond; further digits round.
 */
export function parseEpochText(text: string): EpochParse {
  const s = text.trim();
  let dayNo: number;
  let time: (string | undefined)[];
  const cal = CALENDAR.exec(s);
  const ord = cal ? null : ORDINAL.exec(s);
  if (cal) {
    const year = Number(cal[1]);
    const month = Number(cal[2]);
    const day = Number(cal[3]);
    if (month < 1 || month > 12) return { ok: false, reason: `month ${cal[2]} is not 01-12` };
    if (day < 1 || day > daysInMonth(year, month)) {
      return { ok: false, reason: `day ${cal[3]} does not exist in ${cal[1]}-${cal[2]}` };
    }
    dayNo = unixDay(year, month, day);
    time = cal.slice(4);
  } else if (ord) {
    const year = Number(ord[1]);
    const doy = Number(ord[2]);
    if (doy < 1 || doy > daysInYear(year)) {
      return { ok: false, reason: `day of year ${ord[2]} does not exist in ${ord[1]} (001-${daysInYear(year)})` };
    }
    dayNo = unixDay(year, 1, 1) + doy - 1;
    time = ord.slice(3);
  } else {
    return {
      ok: false,
      reason: `"${clip(s)}" is not a CCSDS time (YYYY-MM-DDThh:mm:ss.ffffff or YYYY-DDDThh:mm:ss.ffffff)`,
    };
  }
  const [hh = '', mm = '', ss = '', frac = '', zone] = time;
  const hour = Number(hh);
  const minute = Number(mm);
  const second = Number(ss);
  if (hour > 23) return { ok: false, reason: `hour ${hh} is not 00-23` };
  if (minute > 59) return { ok: false, reason: `minute ${mm} is not 00-59` };
  if (second > 59) return { ok: false, reason: `second ${ss} is not 00-59 (leap seconds are not supported)` };
  const micro = fractionToMicros(frac, US_PER_SECOND);
  let offsetMin = 0;
  if (zone !== undefined && zone !== 'Z') {
    const oh = Number(zone.slice(1, 3));
    const om = Number(zone.slice(4, 6));
    if (oh > 23 || om > 59) return { ok: false, reason: `time zone offset ${zone} is not valid` };
    offsetMin = (zone.startsWith('-') ? -1 : 1) * (oh * 60 + om);
  }
  const epochUs =
    dayNo * US_PER_DAY + ((hour * 60 + minute - offsetMin) * 60 + second) * US_PER_SECOND + micro;
  return { ok: true, epochUs };
}

/** Epoch of a TLE: two-digit year (57-99 => 19xx) and day of year with fraction digits. */
export function tleEpochToUs(year: number, dayOfYear: number, fractionDigits: string): number {
  return (unixDay(year, 1, 1) + dayOfYear - 1) * US_PER_DAY + fractionToMicros(fractionDigits, US_PER_DAY);
}

/** Year, whole day of year and the day fraction in units of 1e-8 day, as a TLE writes them. */
export function tleEpochFields(epochUs: number): { year: number; dayOfYear: number; fraction8: number } {
  const p = epochParts(epochUs);
  // 1e-8 day = 864 microseconds exactly.
  let fraction8 = Math.round(p.microOfDay / 864);
  let dayOfYear = p.dayOfYear;
  let year = p.year;
  if (fraction8 >= 100_000_000) {
    fraction8 -= 100_000_000;
    dayOfYear += 1;
    if (dayOfYear > daysInYear(year)) {
      dayOfYear = 1;
      year += 1;
    }
  }
  return { year, dayOfYear, fraction8 };
}

/** Julian date of a Unix-ms instant (JD 2440587.5 is 1970-01-01T00:00Z). */
export function julianDateFromMs(ms: number): number {
  return 2440587.5 + ms / MS_PER_DAY;
}

/** First and last microsecond an element set epoch may take (the TLE year range). */
export const MIN_EPOCH_US = unixDay(FIRST_TLE_YEAR, 1, 1) * US_PER_DAY;
export const END_EPOCH_US = unixDay(LAST_TLE_YEAR + 1, 1, 1) * US_PER_DAY;

export function clip(s: string, max = 40): string {
  return s.length > max ? `${s.slice(0, max)}...` : s;
}
