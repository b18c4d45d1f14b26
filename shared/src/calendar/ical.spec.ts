/**
 * iCalendar text rules of RFC 5545: section 3.1 (lines of at most 75 octets, folded with CRLF and
 * one space, never inside a UTF-8 character), 3.3.11 (TEXT escaping), 3.3.5 (UTC DATE-TIME form),
 * 3.6.1 (VEVENT with UID, DTSTAMP, DTSTART, DTEND). A maintained parser reads the same text in
 * tests/integration/passes-ics.spec.ts.
 */
import { describe, expect, it } from 'vitest';
import { compassPoint, escapeText, foldLine, icalTime, passCalendar, passUid } from './ical.ts';

const unfold = (text: string) => text.replace(/\r\n[ \t]/g, '');

describe('iCalendar text', () => {
  it('escapes backslash, semicolon, comma and newlines', () => {
    expect(escapeText('a\\b;c,d\ne\r\nf')).toBe('a\\\\b\\;c\\,d\\ne\\nf');
  });

  it('folds at 75 octets without cutting a UTF-8 character', () => {
    const line = `DESCRIPTION:${'Höhe 42° '.repeat(30)}`;
    const folded = foldLine(line);
    for (const l of folded.split('\r\n')) expect(new TextEncoder().encode(l).length).toBeLessThanOrEqual(75);
    expect(unfold(folded)).toBe(line);
    expect(foldLine('SHORT:x')).toBe('SHORT:x');
  });

  it('writes UTC times in the basic form', () => {
    expect(icalTime(Date.UTC(2026, 2, 20, 21, 43, 5, 900))).toBe('20260320T214305Z');
  });

  it('names 16 compass points', () => {
    expect([0, 44, 90, 181, 270, 337.6, 359].map(compassPoint)).toEqual(['N', 'NE', 'E', 'S', 'W', 'NNW', 'N']);
  });

  it('keeps a UID per satellite, observer and rise minute', () => {
    const o = { latDeg: 47.1, lonDeg: 8.5, altM: 400 };
    const t = Date.UTC(2026, 2, 20, 21, 43, 5);
    expect(passUid('sat1', o, t)).toBe(passUid('sat1', o, t + 20_000));
    expect(passUid('sat1', o, t)).not.toBe(passUid('sat1', o, t + 60_000));
    expect(passUid('sat1', o, t)).not.toBe(passUid('sat2', o, t));
    expect(passUid('sat1', o, t)).not.toBe(passUid('sat1', { ...o, latDeg: 47.2 }, t));
  });

  it('writes one VEVENT per pass with CRLF lines and the cautions', () => {
    const rise = Date.UTC(2026, 2, 20, 21, 43, 5);
    const text = passCalendar({
      satellite: { id: 'sat1', name: 'Lumen, 2; test' },
      observer: { latDeg: 47.1, lonDeg: 8.5, altM: 400 },
      minElevationDeg: 10,
      generatedMs: rise - 3_600_000,
      passes: [0, 1].map((i) => ({
        rise: { t: rise + i * 5_400_000, azimuthDeg: 300 },
        culmination: { t: rise + i * 5_400_000 + 240_000, azimuthDeg: 20, elevationDeg: 54.4 },
        set: { t: rise + i * 5_400_000 + 480_000, azimuthDeg: 120 },
        visible: i === 0,
      })),
    });
    expect(text.endsWith('\r\n')).toBe(true);
    expect(text.replace(/\r\n/g, '').includes('\n')).toBe(false);
    const flat = unfold(text);
    expect(flat.match(/BEGIN:VEVENT/g)).toHaveLength(2);
    expect(flat).toContain('DTSTART:20260320T214305Z');
    expect(flat).toContain('DTEND:20260320T215105Z');
    expect(flat).toContain('SUMMARY:Lumen\\, 2\\; test pass\\, 54° high\\, visible');
    expect(flat).toContain('Highest 54° above the horizon towards NNE (20°)');
    expect(flat).toContain('Rises WNW (300°)');
    expect(flat).toContain('not for collision avoidance');
  });
});
