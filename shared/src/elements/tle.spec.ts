import { describe, expect, it } from 'vitest';
import type { ElementSet, ElementSetError, ParseResult } from '../types.ts';
import { canExportTle, decodeAlpha5, encodeAlpha5, parseTle, tleChecksum, toTle } from './tle.ts';
import { AIAA_2006_6753_CASES } from './verification-cases.ts';

const [C5, C28129, C11801, C88888] = AIAA_2006_6753_CASES as [
  (typeof AIAA_2006_6753_CASES)[number],
  (typeof AIAA_2006_6753_CASES)[number],
  (typeof AIAA_2006_6753_CASES)[number],
  (typeof AIAA_2006_6753_CASES)[number],
];

function accepted(r: ParseResult): ElementSet {
  if (!r.ok) throw new Error(`expected an accepted set, got: ${r.message}`);
  return r.elementSet;
}

function rejected(r: ParseResult): ElementSetError {
  if (r.ok) throw new Error('expected a rejection, got an accepted set');
  return r;
}

/** Overwrite columns starting at `column` (1-based) and recompute the checksum. */
function edit(line: string, column: number, text: string): string {
  const s = line.slice(0, column - 1) + text + line.slice(column - 1 + text.length);
  return s.slice(0, 68) + String(tleChecksum(s));
}

describe('TLE checksum (AIAA 2006-6753 Appendix B; references.md)', () => {
  it('gives 3 and 7 for the two lines of the 00005 verification set', () => {
    expect(tleChecksum(C5.line1)).toBe(3);
    expect(tleChecksum(C5.line2)).toBe(7);
  });

  it('matches column 69 of every AIAA 2006-6753 Appendix D line', () => {
    for (const c of AIAA_2006_6753_CASES) {
      expect(tleChecksum(c.line1)).toBe(Number(c.line1[68]));
      expect(tleChecksum(c.line2)).toBe(Number(c.line2[68]));
    }
  });

  it('counts a minus sign as 1 and letters, blanks, points and plus signs as 0', () => {
    expect(tleChecksum('-')).toBe(1);
    expect(tleChecksum('A .+-9')).toBe(0);
  });

  it('rejects a wrong checksum naming line, column, expected and found digits', () => {
    const bad = `${C5.line1.slice(0, 68)}4`;
    const e = rejected(parseTle(`${bad}\n${C5.line2}`));
    expect(e).toMatchObject({ code: 'checksum', field: 'checksum', line: 1, column: 69 });
    expect(e.message).toBe('checksum: line 1 column 69: expected 3, found 4');
  });

  it('reports the line in the submitted text when a name line comes first', () => {
    const bad = `${C5.line2.slice(0, 68)}0`;
    const e = rejected(parseTle(`SAT\n${C5.line1}\n${bad}`));
    expect(e).toMatchObject({ code: 'checksum', line: 3, column: 69 });
    expect(e.message).toContain('expected 7, found 0');
  });

  it('rejects a line whose checksum column is missing', () => {
    const e = rejected(parseTle(`${C5.line1.slice(0, 68)}\n${C5.line2}`));
    expect(e).toMatchObject({ code: 'checksum', line: 1, column: 69 });
  });
});

describe('Alpha-5 catalog numbers (references.md)', () => {
  it('decodes A0000 as 100000, T0000 as 270000 and Z9999 as 339999', () => {
    expect(decodeAlpha5('A0000')).toBe(100000);
    expect(decodeAlpha5('T0000')).toBe(270000);
    expect(decodeAlpha5('Z9999')).toBe(339999);
    expect(decodeAlpha5('00005')).toBe(5);
    expect(decodeAlpha5('J0001')).toBe(180001);
  });

  it('rejects the letters I and O, lower case and wrong lengths', () => {
    expect(decodeAlpha5('I0000')).toBeNull();
    expect(decodeAlpha5('O1234')).toBeNull();
    expect(decodeAlpha5('a0000')).toBeNull();
    expect(decodeAlpha5('A000')).toBeNull();
  });

  it('encodes and decodes every thousandth number from 0 to 339999 to the same number', () => {
    for (let n = 0; n <= 339_999; n += 997) {
      const s = encodeAlpha5(n);
      expect(s).toHaveLength(5);
      expect(decodeAlpha5(s)).toBe(n);
    }
    expect(encodeAlpha5(100000)).toBe('A0000');
    expect(encodeAlpha5(339999)).toBe('Z9999');
    expect(encodeAlpha5(5)).toBe('00005');
  });

  it('throws RangeError for numbers a TLE cannot hold', () => {
    expect(() => encodeAlpha5(340000)).toThrow(RangeError);
    expect(() => encodeAlpha5(-1)).toThrow(RangeError);
    expect(() => encodeAlpha5(1.5)).toThrow(RangeError);
  });

  it('parses a TLE whose catalog number is Alpha-5 on both lines', () => {
    const es = accepted(parseTle(`${edit(C5.line1, 3, 'T0000')}\n${edit(C5.line2, 3, 'T0000')}`));
    expect(es.catalogNumber).toBe('270000');
  });

  it('rejects an Alpha-5 catalog number that uses the letter I, at column 3', () => {
    const e = rejected(parseTle(`${edit(C5.line1, 3, 'I0000')}\n${edit(C5.line2, 3, 'I0000')}`));
    expect(e).toMatchObject({ code: 'format', field: 'catalogNumber', line: 1, column: 3 });
    expect(e.message).toContain('I and O');
  });
});

describe('parseTle reads the fields of AIAA 2006-6753 Appendix D', () => {
  it('reads every field of the 00005 set, the epoch to the microsecond', () => {
    const es = accepted(parseTle(`${C5.line1}\n${C5.line2}`));
    expect(es).toMatchObject({
      source: 'tle',
      name: '',
      catalogNumber: '5',
      classification: 'U',
      intlDesignator: '58002B',
      // Day 179.78495062 of 2000: 0.78495062 d = 67819.733568 s exactly.
      epochIso: '2000-06-27T18:50:19.733568Z',
      meanMotionRevPerDay: 10.82419157,
      eccentricity: 0.1859667,
      inclinationDeg: 34.2682,
      raanDeg: 348.7242,
      argPerigeeDeg: 331.7664,
      meanAnomalyDeg: 19.3264,
      bstar: 0.28098e-4,
      meanMotionDot: 0.00000023,
      meanMotionDdot: 0,
      ephemerisType: 0,
      elementSetNo: 475,
      revAtEpoch: 41366,
    });
    expect(Math.round(es.epochMs * 1000)).toBe(Date.UTC(2000, 5, 27, 18, 50, 19, 733) * 1000 + 568);
  });

  it('reads a negative first derivative and a second derivative with its exponent', () => {
    expect(accepted(parseTle(`${C28129.line1}\n${C28129.line2}`)).meanMotionDot).toBe(-0.00000104);
    const es = accepted(parseTle(`${C88888.line1}\n${C88888.line2}`));
    expect(es.meanMotionDdot).toBe(0.13844e-3);
    expect(es.bstar).toBe(0.66816e-4);
    expect(es.revAtEpoch).toBe(105);
  });

  it('takes a blank ephemeris type and international designator as 0 and empty (case 11801)', () => {
    const es = accepted(parseTle(`${C11801.line1}\n${C11801.line2}`));
    expect(es.ephemerisType).toBe(0);
    expect(es.intlDesignator).toBe('');
    expect(es.elementSetNo).toBe(1);
  });

  it('tolerates CRLF, trailing blanks, blank lines and a name line with a leading "0 "', () => {
    const es = accepted(parseTle(`\r\n0 NADIR TEST 1   \r\n${C5.line1}   \r\n${C5.line2}\t\r\n\r\n`));
    expect(es.name).toBe('NADIR TEST 1');
    expect(es.catalogNumber).toBe('5');
  });

  it('applies the two-digit year rule: 57-99 are 19xx, 00-56 are 20xx', () => {
    expect(accepted(parseTle(`${edit(C5.line1, 19, '57')}\n${C5.line2}`)).epochIso.slice(0, 4)).toBe('1957');
    expect(accepted(parseTle(`${edit(C5.line1, 19, '56')}\n${C5.line2}`)).epochIso.slice(0, 4)).toBe('2056');
  });

  it('accepts day 366 in a leap year and rejects it in a common year', () => {
    expect(accepted(parseTle(`${edit(C5.line1, 19, '00366.50000000')}\n${C5.line2}`)).epochIso).toBe(
      '2000-12-31T12:00:00.000000Z',
    );
    const e = rejected(parseTle(`${edit(C5.line1, 19, '01366.50000000')}\n${C5.line2}`));
    expect(e).toMatchObject({ code: 'range', field: 'epoch', line: 1, column: 21 });
    expect(rejected(parseTle(`${edit(C5.line1, 19, '01000.50000000')}\n${C5.line2}`)).code).toBe('range');
  });
});

describe('parseTle names the field, line and column of each rejection', () => {
  const cases: [string, string, string, Partial<ElementSetError>][] = [
    ['inclination above 180', C5.line1, edit(C5.line2, 9, '190.0000'), { code: 'range', field: 'inclinationDeg', line: 2, column: 9 }],
    ['RAAN above 360', C5.line1, edit(C5.line2, 18, '361.0000'), { code: 'range', field: 'raanDeg', line: 2, column: 18 }],
    ['a letter in the eccentricity', C5.line1, edit(C5.line2, 27, '18596x7'), { code: 'format', field: 'eccentricity', line: 2, column: 27 }],
    ['mean motion above 20 rev/day', C5.line1, edit(C5.line2, 53, '25.00000000'), { code: 'range', field: 'meanMotionRevPerDay', line: 2, column: 53 }],
    ['mean motion zero', C5.line1, edit(C5.line2, 53, ' 0.00000000'), { code: 'range', field: 'meanMotionRevPerDay', line: 2, column: 53 }],
    ['catalog numbers that differ', C5.line1, edit(C5.line2, 3, '00006'), { code: 'mismatch', field: 'catalogNumber', line: 2, column: 3 }],
    ['a classification other than U, C, S', edit(C5.line1, 8, 'X'), C5.line2, { code: 'format', field: 'classification', line: 1, column: 8 }],
    ['a letter in B*', edit(C5.line1, 54, ' 2809x-4'), C5.line2, { code: 'format', field: 'bstar', line: 1, column: 54 }],
    ['a non-blank separator column', edit(C5.line1, 9, 'X'), C5.line2, { code: 'layout', field: 'layout', line: 1, column: 9 }],
    ['line 1 one column too long', `${C5.line1}0`, C5.line2, { code: 'layout', line: 1, column: 70 }],
    ['line 2 cut short', C5.line1, C5.line2.slice(0, 60), { code: 'layout', line: 2, column: 61 }],
    ['a wrong line number', edit(C5.line1, 1, '3'), C5.line2, { code: 'layout', field: 'lineNumber', line: 1, column: 1 }],
    ['a leading blank', ` ${C5.line1}`, C5.line2, { code: 'layout', field: 'lineNumber', line: 1, column: 1 }],
    ['a tab inside a line', C5.line1.replace('58002B ', '58002B\t'), C5.line2, { code: 'format', line: 1, column: 16 }],
  ];
  for (const [what, l1, l2, expected] of cases) {
    it(`rejects ${what}`, () => {
      const e = rejected(parseTle(`${l1}\n${l2}`));
      expect(e).toMatchObject(expected);
      expect(e.message.startsWith(`${e.field}: line ${e.line} column ${e.column}: `)).toBe(true);
    });
  }

  it('rejects a missing line 2 and a missing line 1', () => {
    expect(rejected(parseTle(`NAME\n${C5.line1}`))).toMatchObject({ code: 'structure', field: 'line2', line: 3 });
    expect(rejected(parseTle(`NAME\n${C5.line2}`))).toMatchObject({ code: 'structure', field: 'line1' });
    expect(rejected(parseTle(C5.line1))).toMatchObject({ code: 'structure', field: 'line2' });
  });

  it('rejects empty text and more than three lines', () => {
    expect(rejected(parseTle('  \n\n'))).toMatchObject({ code: 'empty' });
    expect(rejected(parseTle(`A\n${C5.line1}\n${C5.line2}\n${C5.line2}`))).toMatchObject({ code: 'structure', line: 4 });
  });
});

describe('toTle writes the columns of AIAA 2006-6753 Appendix B', () => {
  it('writes the four Appendix D sets back character for character', () => {
    for (const c of AIAA_2006_6753_CASES) {
      const out = toTle(accepted(parseTle(`${c.line1}\n${c.line2}`)));
      // 11801 leaves the ephemeris type blank; the writer always puts its digit (0).
      const line1 = c.catalog === '11801' ? edit(c.line1, 63, '0') : c.line1;
      expect(out.line1).toBe(line1);
      expect(out.line2).toBe(c.line2);
      expect(out.text).toBe(`${line1}\n${c.line2}\n`);
    }
  });

  it('writes the name line first when the set has a name', () => {
    const out = toTle({ ...accepted(parseTle(`${C5.line1}\n${C5.line2}`)), name: 'NADIR ONE' });
    expect(out.text.split('\n')[0]).toBe('NADIR ONE');
    expect(accepted(parseTle(out.text)).name).toBe('NADIR ONE');
  });

  it('writes Alpha-5 catalog numbers above 99999 and reads them back', () => {
    const es = accepted(parseTle(`${C5.line1}\n${C5.line2}`));
    for (const [n, s] of [['100000', 'A0000'], ['270000', 'T0000'], ['339999', 'Z9999']] as const) {
      const out = toTle({ ...es, catalogNumber: n });
      expect(out.line1.slice(2, 7)).toBe(s);
      expect(out.line2.slice(2, 7)).toBe(s);
      expect(accepted(parseTle(out.text)).catalogNumber).toBe(n);
    }
  });

  it('refuses catalog numbers above 339999 with canExportTle and a RangeError', () => {
    const es = { ...accepted(parseTle(`${C5.line1}\n${C5.line2}`)), catalogNumber: '340000' };
    expect(canExportTle(es)).toMatchObject({ ok: false, code: 'range', field: 'catalogNumber' });
    expect(() => toTle(es)).toThrow(RangeError);
  });

  it('writes exponent fields with five mantissa digits and a signed exponent', () => {
    const es = accepted(parseTle(`${C5.line1}\n${C5.line2}`));
    const out = toTle({ ...es, bstar: -0.00011606, meanMotionDdot: 1.2345e-7, meanMotionDot: -0.00012345 });
    expect(out.line1.slice(53, 61)).toBe('-11606-3');
    expect(out.line1.slice(44, 52)).toBe(' 12345-6');
    expect(out.line1.slice(33, 43)).toBe('-.00012345');
    const back = accepted(parseTle(out.text));
    expect(back.bstar).toBe(-0.00011606);
    expect(back.meanMotionDdot).toBe(1.2345e-7);
  });

  it('rounds a microsecond epoch to the nearest 1e-8 day (864 us) and keeps the checksums right', () => {
    const es = accepted(parseTle(`${C5.line1}\n${C5.line2}`));
    const shifted = { ...es, epochMs: es.epochMs + 0.4 };
    const back = accepted(parseTle(toTle(shifted).text));
    expect(Math.abs(back.epochMs - shifted.epochMs)).toBeLessThanOrEqual(0.432 + 1e-6);
    const out = toTle(shifted);
    expect(tleChecksum(out.line1)).toBe(Number(out.line1[68]));
    expect(tleChecksum(out.line2)).toBe(Number(out.line2[68]));
  });

  it('carries a day fraction that rounds up to a whole day into the next year', () => {
    const es = accepted(parseTle(`${C5.line1}\n${C5.line2}`));
    const lastMicro = { ...es, epochMs: Date.UTC(2001, 0, 1) - 0.0001 };
    expect(toTle(lastMicro).line1.slice(18, 32)).toBe('01001.00000000');
  });
});
