/**
 * Pass calendars as iCalendar text (RFC 5545): one VEVENT per pass, DTSTART at rise and DTEND at
 * set (UTC), a UID that stays the same for a satellite, an observer and a rise minute so a
 * subscribed calendar updates an event instead of adding a copy, a summary, and a description
 * with the highest elevation, the directions and the cautions. Text values are escaped
 * (section 3.3.11) and content lines folded at 75 octets (section 3.1), lines end in CRLF.
 */

/** The cautions every calendar carries (the product's own wording). */
export const PASS_CAUTIONS =
  'Times come from mean element sets and SGP4: good to a few seconds near the set\u2019s epoch and worse as it ages. ' +
  'For outreach and planning only; not for collision avoidance, navigation or safety-of-life; defer to the operator\u2019s own orbit determination. ' +
  'Never look at or point anything at the Sun.';

const POINTS = ['N', 'NNE', 'NE', 'ENE', 'E', 'ESE', 'SE', 'SSE', 'S', 'SSW', 'SW', 'WSW', 'W', 'WNW', 'NW', 'NNW'];

/** 16-point compass direction of an azimuth (deg clockwise from north). */
export function compassPoint(azimuthDeg: number): string {
  const i = Math.round((((azimuthDeg % 360) + 360) % 360) / 22.5) % 16;
  return POINTS[i] as string;
}

/** Escape a TEXT value (RFC 5545 section 3.3.11): backslash, semicolon, comma, newline. */
export function escapeText(value: string): string {
  return value.replace(/\\/g, '\\\\').replace(/;/g, '\\;').replace(/,/g, '\\,').replace(/\r\n|\r|\n/g, '\\n');
}

/** Octets of one character in UTF-8. */
function utf8Length(ch: string): number {
  const cp = ch.codePointAt(0) ?? 0;
  return cp < 0x80 ? 1 : cp < 0x800 ? 2 : cp < 0x10000 ? 3 : 4;
}

/**
 * Fold one content line (RFC 5545 section 3.1): no line longer than 75 octets of UTF-8, each
 * continuation starting with one space; a character is never cut in the middle.
 */
export function foldLine(line: string): string {
  const out: string[] = [];
  let current = '';
  let octets = 0;
  for (const ch of line) {
    const n = utf8Length(ch);
    const limit = out.length === 0 ? 75 : 74; // continuation lines lose one octet to the leading space
    if (octets + n > limit) {
      out.push(current);
      current = '';
      octets = 0;
    }
    current += ch;
    octets += n;
  }
  out.push(current);
  return out.join('\r\n ');
}

/** A UTC DATE-TIME value, e.g. 20260320T214305Z (seconds truncated toward the past). */
export function icalTime(ms: number): string {
  return new Date(Math.floor(ms / 1000) * 1000).toISOString().replace(/[-:]/g, '').replace(/\.\d{3}/, '');
}

export interface CalendarPass {
  rise: { t: number; azimuthDeg: number };
  culmination: { t: number; azimuthDeg: number; elevationDeg: number };
  set: { t: number; azimuthDeg: number };
  visible: boolean;
}

export interface PassCalendarInput {
  satellite: { id: string; name: string };
  observer: { latDeg: number; lonDeg: number; altM: number };
  passes: readonly CalendarPass[];
  /** DTSTAMP of every event (when the calendar was made), Unix ms. */
  generatedMs: number;
  /** The minimum elevation the passes were searched with, deg. */
  minElevationDeg: number;
  /** Link to a page or document the calendar app may show; optional. */
  url?: string;
}

/** Stable event UID: satellite, observer (to 3 decimals and whole metres) and the rise minute. */
export function passUid(satelliteId: string, observer: PassCalendarInput['observer'], riseMs: number): string {
  const minute = icalTime(Math.floor(riseMs / 60_000) * 60_000).slice(0, 13);
  const place = `${observer.latDeg.toFixed(3)}_${observer.lonDeg.toFixed(3)}_${Math.round(observer.altM)}`;
  return `pass-${satelliteId}-${place}-${minute}@nadirline`;
}

const deg = (v: number) => `${Math.round(v)}\u00b0`;
const hm = (ms: number) => new Date(ms).toISOString().slice(11, 16);

/** The calendar document, lines joined with CRLF and ending in CRLF. */
export function passCalendar(input: PassCalendarInput): string {
  const { satellite, observer } = input;
  const lines: string[] = [
    'BEGIN:VCALENDAR',
    'VERSION:2.0',
    'PRODID:-//Nadirline//Pass calendar//EN',
    'CALSCALE:GREGORIAN',
    'METHOD:PUBLISH',
    `NAME:${escapeText(`${satellite.name} passes`)}`,
    `X-WR-CALNAME:${escapeText(`${satellite.name} passes`)}`,
    'REFRESH-INTERVAL;VALUE=DURATION:PT6H',
    'X-PUBLISHED-TTL:PT6H',
  ];
  const place = `${observer.latDeg.toFixed(3)}, ${observer.lonDeg.toFixed(3)}`;
  for (const p of input.passes) {
    const summary = `${satellite.name} pass, ${deg(p.culmination.elevationDeg)} high${p.visible ? ', visible' : ''}`;
    const description = [
      `Rises ${compassPoint(p.rise.azimuthDeg)} (${deg(p.rise.azimuthDeg)}) at ${hm(p.rise.t)} UTC.`,
      `Highest ${deg(p.culmination.elevationDeg)} above the horizon towards ${compassPoint(p.culmination.azimuthDeg)} (${deg(p.culmination.azimuthDeg)}) at ${hm(p.culmination.t)} UTC.`,
      `Sets ${compassPoint(p.set.azimuthDeg)} (${deg(p.set.azimuthDeg)}) at ${hm(p.set.t)} UTC.`,
      p.visible
        ? 'Visible to the eye if the sky is clear: the satellite is sunlit while your sky is dark.'
        : 'Not visible to the eye: the satellite is in the Earth\u2019s shadow or your sky is light.',
      `Observer ${place}, ${Math.round(observer.altM)} m; passes above ${deg(input.minElevationDeg)}.`,
      PASS_CAUTIONS,
    ].join('\n');
    lines.push(
      'BEGIN:VEVENT',
      `UID:${passUid(satellite.id, observer, p.rise.t)}`,
      `DTSTAMP:${icalTime(input.generatedMs)}`,
      `DTSTART:${icalTime(p.rise.t)}`,
      `DTEND:${icalTime(Math.max(p.set.t, p.rise.t + 1000))}`,
      `SUMMARY:${escapeText(summary)}`,
      `DESCRIPTION:${escapeText(description)}`,
      `GEO:${observer.latDeg.toFixed(6)};${observer.lonDeg.toFixed(6)}`,
      'TRANSP:TRANSPARENT',
      ...(input.url ? [`URL:${input.url}`] : []),
      'END:VEVENT',
    );
  }
  lines.push('END:VCALENDAR');
  return `${lines.map(foldLine).join('\r\n')}\r\n`;
}
