import { describe, expect, it } from 'vitest';
import {
  epochMsFromUs,
  epochUsFromMs,
  formatEpochIso,
  parseEpochText,
  tleEpochFields,
  tleEpochToUs,
  unixDay,
} from './epoch.ts';

function us(text: string): number {
  const p = parseEpochText(text);
  if (!p.ok) throw new Error(p.reason);
  return p.epochUs;
}

describe('epochs to the microsecond', () => {
  it('reads calendar and ordinal-day CCSDS times to the same instant (CCSDS 502.0-B-3 section 7.5.10)', () => {
    expect(us('2000-06-27T18:50:19.733568')).toBe(us('2000-179T18:50:19.733568'));
    expect(formatEpochIso(us('2007-064T10:34:41.4264'))).toBe('2007-03-05T10:34:41.426400Z');
    expect(formatEpochIso(us('2024-366T23:59:59.999999'))).toBe('2024-12-31T23:59:59.999999Z');
  });

  it('recovers the exact microsecond from the float millisecond epoch for every year 1957-2056', () => {
    for (let year = 1957; year <= 2056; year++) {
      const exact = unixDay(year, 7, 1) * 86_400_000_000 + 45_296_123_457; // 12:34:56.123457
      expect(epochUsFromMs(epochMsFromUs(exact))).toBe(exact);
      expect(formatEpochIso(exact)).toBe(`${year}-07-01T12:34:56.123457Z`);
    }
  });

  it('converts a TLE day fraction of eight decimals exactly (1e-8 day = 864 us)', () => {
    expect(formatEpochIso(tleEpochToUs(2000, 179, '78495062'))).toBe('2000-06-27T18:50:19.733568Z');
    expect(tleEpochFields(tleEpochToUs(2000, 179, '78495062'))).toEqual({ year: 2000, dayOfYear: 179, fraction8: 78495062 });
  });

  it('rejects impossible dates and times with a reason', () => {
    for (const bad of ['2023-02-29T00:00:00', '2023-366T00:00:00', '2023-13-01T00:00:00', '2023-01-01T24:00:00', '2023-01-01T00:60:00', '2023-01-01T00:00:60', '2023-01-01', 'NaN', '']) {
      const p = parseEpochText(bad);
      expect(p.ok).toBe(false);
      if (!p.ok) expect(p.reason.length).toBeGreaterThan(5);
    }
  });

  it('reads a trailing Z and numeric offsets', () => {
    expect(us('2026-01-01T00:00:00Z')).toBe(us('2026-01-01T00:00:00'));
    expect(us('2026-01-01T01:30:00+01:30')).toBe(us('2026-01-01T00:00:00'));
    expect(us('2025-12-31T22:00:00-02:00')).toBe(us('2026-01-01T00:00:00'));
  });
});
