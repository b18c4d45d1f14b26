import { describe, expect, it } from 'vitest';
import { formatGroundTrackShift, formatHour, formatPrice, formatShare } from './format.ts';

describe('plan prices', () => {
  it('shows whole euros without decimals and other amounts with cents', () => {
    expect(formatPrice(39, 'EUR')).toBe('€39');
    expect(formatPrice(4.5, 'eur')).toBe('€4.50');
    expect(formatPrice(240, 'USD')).toBe('US$240');
  });

  it('falls back to the number and the code when the currency is unknown or missing', () => {
    expect(formatPrice(39, 'nope')).toBe('39 NOPE');
    expect(formatPrice(39, undefined)).toBe('39');
  });
});

describe('the ground-track shift per orbit', () => {
  it('reads a positive shift as west and a negative one as east, never a negative west', () => {
    expect(formatGroundTrackShift(23.757)).toBe('23.76° west');
    expect(formatGroundTrackShift(-179.951)).toBe('179.95° east');
    expect(formatGroundTrackShift(180)).toBe('180.00° west');
  });

  it('says a geostationary track stays in place, and an inclined geosynchronous one keeps its longitude', () => {
    expect(formatGroundTrackShift(0.013, { inclinationDeg: 0.05, eccentricity: 0.0002 })).toBe('Stays in place (geostationary)');
    expect(formatGroundTrackShift(-0.02, { inclinationDeg: 63.4, eccentricity: 0.27 })).toBe('Same longitude each orbit (geosynchronous)');
  });

  it('shows a dash when there is no figure', () => {
    expect(formatGroundTrackShift(Number.NaN)).toBe('—');
    expect(formatGroundTrackShift(null)).toBe('—');
  });
});

describe('shares and hours', () => {
  it('writes a small but real share as <1 %, never as 0 %', () => {
    expect(formatShare(3, 1000)).toBe('<1 %');
    expect(formatShare(0, 1000)).toBe('0 %');
    expect(formatShare(370, 1000)).toBe('37 %');
    expect(formatShare(999, 1000)).toBe('>99 %');
    expect(formatShare(1000, 1000)).toBe('100 %');
    expect(formatShare(1, 0)).toBe('—');
  });
  it('writes a UTC hour like the console writes days', () => {
    expect(formatHour('2026-12-02T14')).toBe('02 Dec, 14:00');
  });
});
