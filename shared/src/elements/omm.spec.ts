import { describe, expect, it } from 'vitest';
import type { ElementSet, ElementSetError, ParseResult } from '../types.ts';
import { fromKeplerian } from './kepler.ts';
import { parseOmmJson, toOmmJson } from './omm-json.ts';
import { parseOmmKvn, toOmmKvn } from './omm-kvn.ts';
import { parseOmmXml, parseOmmXmlMany, toNdmXml, toOmmXml } from './omm-xml.ts';
import { parseTle } from './tle.ts';
import { AIAA_2006_6753_CASES } from './verification-cases.ts';

function accepted(r: ParseResult): ElementSet {
  if (!r.ok) throw new Error(`expected an accepted set, got: ${r.message}`);
  return r.elementSet;
}

function rejected(r: ParseResult): ElementSetError {
  if (r.ok) throw new Error('expected a rejection, got an accepted set');
  return r;
}

const CREATED = { creationDate: '2026-01-01T00:00:00' };

/** An invented OMM in KVN (CCSDS 502.0-B-3 section 4.2 layout) with comments, blank lines and units. */
const KVN = `CCSDS_OMM_VERS = 3.0
COMMENT Invented element set for the Nadirline tests
CREATION_DATE = 2026-02-01T00:00:00
ORIGINATOR = NADIRLINE TEST

OBJECT_NAME = NADIR DEMO 1
OBJECT_ID = 2025-999A
CENTER_NAME = EARTH
REF_FRAME = TEME
TIME_SYSTEM = UTC
MEAN_ELEMENT_THEORY = SGP4

COMMENT mean elements
EPOCH = 2026-01-31T12:00:00.123456
MEAN_MOTION = 15.21934719 [rev/day]
ECCENTRICITY = 0.0007143
INCLINATION = 51.6321 [deg]
RA_OF_ASC_NODE = 211.0484 [deg]
ARG_OF_PERICENTER = 74.3119 [deg]
MEAN_ANOMALY = 285.8720 [deg]

EPHEMERIS_TYPE = 0
CLASSIFICATION_TYPE = U
NORAD_CAT_ID = 99901
ELEMENT_SET_NO = 999
REV_AT_EPOCH = 1234
BSTAR = 0.00021532 [1/ER]
MEAN_MOTION_DOT = 0.00011412 [rev/day**2]
MEAN_MOTION_DDOT = 0.0 [rev/day**3]
`;

/** Replace the value of one KVN keyword line (or drop the line when `value` is null). */
function kvnWith(keyword: string, value: string | null, text = KVN): string {
  const re = new RegExp(`^${keyword} = .*$`, 'm');
  if (!re.test(text)) throw new Error(`no ${keyword} line`);
  return value === null ? text.replace(new RegExp(`^${keyword} = .*\\n`, 'm'), '') : text.replace(re, `${keyword} = ${value}`);
}

function lineOf(text: string, keyword: string): number {
  return text.split('\n').findIndex((l) => l.startsWith(`${keyword} `)) + 1;
}

describe('OMM KVN (CCSDS 502.0-B-3 section 4.2)', () => {
  it('reads a message with comments, blank lines and units in brackets', () => {
    const es = accepted(parseOmmKvn(KVN));
    expect(es).toMatchObject({
      source: 'omm-kvn',
      name: 'NADIR DEMO 1',
      catalogNumber: '99901',
      intlDesignator: '25999A',
      epochIso: '2026-01-31T12:00:00.123456Z',
      meanMotionRevPerDay: 15.21934719,
      eccentricity: 0.0007143,
      inclinationDeg: 51.6321,
      raanDeg: 211.0484,
      argPerigeeDeg: 74.3119,
      meanAnomalyDeg: 285.872,
      bstar: 0.00021532,
      meanMotionDot: 0.00011412,
      meanMotionDdot: 0,
      elementSetNo: 999,
      revAtEpoch: 1234,
    });
  });

  it('reads an ordinal-day epoch (2007-064T10:34:41.4264, the example of references.md)', () => {
    const es = accepted(parseOmmKvn(kvnWith('EPOCH', '2007-064T10:34:41.4264')));
    expect(es.epochIso).toBe('2007-03-05T10:34:41.426400Z');
    expect(Math.round(es.epochMs * 1000)).toBe(Date.UTC(2007, 2, 5, 10, 34, 41, 426) * 1000 + 400);
  });

  it('keeps calendar epochs to the microsecond and rounds a seventh decimal', () => {
    expect(accepted(parseOmmKvn(kvnWith('EPOCH', '2000-06-27T18:50:19.733568'))).epochIso).toBe('2000-06-27T18:50:19.733568Z');
    expect(accepted(parseOmmKvn(kvnWith('EPOCH', '2000-06-27T18:50:19.7335685'))).epochIso).toBe('2000-06-27T18:50:19.733569Z');
    expect(accepted(parseOmmKvn(kvnWith('EPOCH', '2000-12-31T23:59:59.9999996Z'))).epochIso).toBe('2001-01-01T00:00:00.000000Z');
    expect(accepted(parseOmmKvn(kvnWith('EPOCH', '2024-02-29T00:00:00'))).epochIso).toBe('2024-02-29T00:00:00.000000Z');
  });

  it('accepts a NORAD_CAT_ID of nine digits and rejects ten', () => {
    expect(accepted(parseOmmKvn(kvnWith('NORAD_CAT_ID', '123456789'))).catalogNumber).toBe('123456789');
    expect(rejected(parseOmmKvn(kvnWith('NORAD_CAT_ID', '1234567890')))).toMatchObject({ code: 'format', field: 'NORAD_CAT_ID' });
  });

  const errors: [string, string, Partial<ElementSetError> & { atKeyword?: string; column?: number }][] = [
    ['REF_FRAME GCRF', kvnWith('REF_FRAME', 'GCRF'), { code: 'unsupported', field: 'REF_FRAME', atKeyword: 'REF_FRAME', column: 13 }],
    ['CENTER_NAME MOON', kvnWith('CENTER_NAME', 'MOON'), { code: 'unsupported', field: 'CENTER_NAME', atKeyword: 'CENTER_NAME' }],
    ['TIME_SYSTEM TAI', kvnWith('TIME_SYSTEM', 'TAI'), { code: 'unsupported', field: 'TIME_SYSTEM', atKeyword: 'TIME_SYSTEM' }],
    ['MEAN_ELEMENT_THEORY SGP4-XP', kvnWith('MEAN_ELEMENT_THEORY', 'SGP4-XP'), { code: 'unsupported', field: 'MEAN_ELEMENT_THEORY' }],
    ['SEMI_MAJOR_AXIS in place of MEAN_MOTION', kvnWith('MEAN_MOTION', null, KVN.replace('EPOCH =', 'SEMI_MAJOR_AXIS = 6790 [km]\nEPOCH =')), { code: 'unsupported', field: 'SEMI_MAJOR_AXIS', atKeyword: 'SEMI_MAJOR_AXIS' }],
    ['a missing ORIGINATOR', kvnWith('ORIGINATOR', null), { code: 'missing', field: 'ORIGINATOR', line: 1, column: 1 }],
    ['a missing MEAN_ANOMALY', kvnWith('MEAN_ANOMALY', null), { code: 'missing', field: 'MEAN_ANOMALY', line: 1 }],
    ['a missing BSTAR', kvnWith('BSTAR', null), { code: 'missing', field: 'BSTAR' }],
    ['a unit other than the standard one', kvnWith('MEAN_MOTION', '15.2 [rad/s]'), { code: 'units', field: 'MEAN_MOTION', atKeyword: 'MEAN_MOTION', column: 15 }],
    ['an eccentricity of 1.5', kvnWith('ECCENTRICITY', '1.5'), { code: 'range', field: 'ECCENTRICITY', atKeyword: 'ECCENTRICITY', column: 16 }],
    ['an inclination that is not a number', kvnWith('INCLINATION', 'fifty [deg]'), { code: 'format', field: 'INCLINATION', atKeyword: 'INCLINATION' }],
    ['NaN as a value', kvnWith('RA_OF_ASC_NODE', 'NaN'), { code: 'format', field: 'RA_OF_ASC_NODE' }],
    ['a number too large for a double', kvnWith('MEAN_ANOMALY', '1e999'), { code: 'range', field: 'MEAN_ANOMALY' }],
    ['an epoch on 30 February', kvnWith('EPOCH', '2026-02-30T00:00:00'), { code: 'format', field: 'EPOCH', atKeyword: 'EPOCH' }],
    ['an epoch after 2056', kvnWith('EPOCH', '2060-01-01T00:00:00'), { code: 'range', field: 'EPOCH' }],
    ['version 4.0', kvnWith('CCSDS_OMM_VERS', '4.0'), { code: 'unsupported', field: 'CCSDS_OMM_VERS', line: 1 }],
    ['a misspelt keyword', KVN.replace('ECCENTRICITY', 'ECCENTRICTY'), { code: 'unknown-keyword', field: 'ECCENTRICTY', atKeyword: 'ECCENTRICTY', column: 1 }],
    ['a keyword given twice', KVN.replace('ECCENTRICITY = 0.0007143', 'ECCENTRICITY = 0.0007143\nECCENTRICITY = 0.1'), { code: 'duplicate', field: 'ECCENTRICITY' }],
    ['a line without "="', KVN.replace('COMMENT mean elements', 'mean elements follow'), { code: 'syntax', line: 13, column: 1 }],
  ];
  for (const [what, text, expected] of errors) {
    it(`rejects ${what}, naming keyword, line and column`, () => {
      const e = rejected(parseOmmKvn(text));
      const { atKeyword, ...rest } = expected;
      expect(e).toMatchObject(rest);
      if (atKeyword) {
        // The duplicate case reports the second occurrence; the others the only one.
        expect(e.line).toBe(lineOf(text, atKeyword));
        expect(e.column).toBeGreaterThan(0);
      }
      expect(e.message.length).toBeGreaterThan(e.field.length + 2);
    });
  }

  it('reports the line of the second message when a text holds two', () => {
    const e = rejected(parseOmmKvn(`${KVN}\n${KVN}`));
    expect(e).toMatchObject({ code: 'structure', line: KVN.split('\n').length + 1 });
  });
});

describe('OMM XML (CCSDS 502.0-B-3 section 8.5)', () => {
  const es = accepted(parseOmmKvn(KVN));
  const xml = toOmmXml(es, CREATED);

  it('reads what toOmmXml writes', () => {
    expect(accepted(parseOmmXml(xml))).toEqual({ ...es, source: 'omm-xml' });
  });

  it('reads prefixed tags and an <ndm> holding several messages', () => {
    const prefixed = xml.replace(/<(\/?)omm/g, '<$1o:omm').replace('<o:omm ', '<o:omm xmlns:o="urn:nadirline:test" ');
    expect(accepted(parseOmmXml(prefixed)).name).toBe('NADIR DEMO 1');
    const many = parseOmmXmlMany(toNdmXml([es, { ...es, name: 'NADIR DEMO 2' }], CREATED));
    expect(many.map((m) => m.result.ok && m.result.elementSet.name)).toEqual(['NADIR DEMO 1', 'NADIR DEMO 2']);
    expect(many.map((m) => m.index)).toEqual([1, 2]);
  });

  it('names the line and column of a bad value', () => {
    const bad = xml.replace('>51.6321<', '>251.6321<');
    const e = rejected(parseOmmXml(bad));
    const line = bad.split('\n').findIndex((l) => l.includes('<INCLINATION')) + 1;
    expect(e).toMatchObject({ code: 'range', field: 'INCLINATION', line });
    expect(e.column).toBe((bad.split('\n')[line - 1] ?? '').indexOf('>251') + 2);
  });

  it('names the line of an XML syntax error', () => {
    const bad = xml.replace('</ECCENTRICITY>', '</ECCENTRICTY>');
    const e = rejected(parseOmmXml(bad));
    expect(e.code).toBe('syntax');
    expect(e.line).toBe(bad.split('\n').findIndex((l) => l.includes('</ECCENTRICTY>')) + 1);
  });

  it('rejects an omm without its version, an unknown element and a wrong units attribute', () => {
    expect(rejected(parseOmmXml(xml.replace(' version="3.0"', '')))).toMatchObject({ code: 'missing', field: 'CCSDS_OMM_VERS' });
    expect(rejected(parseOmmXml(xml.replace('<ECCENTRICITY>', '<ECCENTRICITY_X>0</ECCENTRICITY_X><ECCENTRICITY>')))).toMatchObject({
      code: 'unknown-keyword',
      field: 'ECCENTRICITY_X',
    });
    expect(rejected(parseOmmXml(xml.replace('units="deg">51', 'units="rad">51')))).toMatchObject({ code: 'units', field: 'INCLINATION' });
  });

  it('refuses DOCTYPE declarations', () => {
    const e = rejected(parseOmmXml(`<?xml version="1.0"?>\n<!DOCTYPE omm [<!ENTITY x "y">]>\n${xml.replace(/^<\?xml[^>]*>\n/, '')}`));
    expect(e).toMatchObject({ code: 'syntax', line: 2 });
  });

  it('escapes names that hold XML characters', () => {
    const named = { ...es, name: 'A&B <test> "q"' };
    expect(accepted(parseOmmXml(toOmmXml(named, CREATED))).name).toBe('A&B <test> "q"');
  });
});

describe('OMM JSON (flat object of the CCSDS keywords, common practice)', () => {
  /** Invented set in the common flat form, without header or metadata. */
  const FLAT = {
    OBJECT_NAME: 'NADIR DEMO 2',
    OBJECT_ID: '2025-998B',
    EPOCH: '2026-01-30T06:00:00.000001',
    MEAN_MOTION: 14.9,
    ECCENTRICITY: 0.0011,
    INCLINATION: 97.7,
    RA_OF_ASC_NODE: 10.5,
    ARG_OF_PERICENTER: 90,
    MEAN_ANOMALY: 270,
    EPHEMERIS_TYPE: 0,
    CLASSIFICATION_TYPE: 'U',
    NORAD_CAT_ID: 99902,
    ELEMENT_SET_NO: 999,
    REV_AT_EPOCH: 10,
    BSTAR: 0.0001,
    MEAN_MOTION_DOT: 0.00001,
    MEAN_MOTION_DDOT: 0,
    OBJECT_TYPE: 'PAYLOAD',
  };

  it('reads the common flat form without header or metadata, ignoring extra keys', () => {
    const es = accepted(parseOmmJson(FLAT));
    expect(es).toMatchObject({ source: 'omm-json', name: 'NADIR DEMO 2', catalogNumber: '99902', intlDesignator: '25998B' });
    expect(es.epochIso).toBe('2026-01-30T06:00:00.000001Z');
  });

  it('reads numbers written as strings exactly as written', () => {
    const es = accepted(parseOmmJson({ ...FLAT, MEAN_MOTION: '14.90000001', NORAD_CAT_ID: '99902' }));
    expect(es.meanMotionRevPerDay).toBe(14.90000001);
  });

  it('names the key, line and column of a bad value in JSON text', () => {
    const text = JSON.stringify({ ...FLAT, ECCENTRICITY: 1.2 }, null, 2);
    const e = rejected(parseOmmJson(text));
    const line = text.split('\n').findIndex((l) => l.includes('"ECCENTRICITY"')) + 1;
    expect(e).toMatchObject({ code: 'range', field: 'ECCENTRICITY', line, column: 19 });
  });

  it('names the key of a bad value in an object', () => {
    expect(rejected(parseOmmJson({ ...FLAT, INCLINATION: 'Infinity' }))).toMatchObject({ code: 'format', field: 'INCLINATION' });
    expect(rejected(parseOmmJson({ ...FLAT, INCLINATION: Number.NaN }))).toMatchObject({ code: 'range', field: 'INCLINATION' });
    expect(rejected(parseOmmJson({ ...FLAT, EPOCH: 1700000000000 }))).toMatchObject({ code: 'format', field: 'EPOCH' });
    expect(rejected(parseOmmJson({ ...FLAT, BSTAR: true }))).toMatchObject({ code: 'format', field: 'BSTAR' });
    expect(rejected(parseOmmJson({ ...FLAT, REF_FRAME: 'ITRF' }))).toMatchObject({ code: 'unsupported', field: 'REF_FRAME' });
  });

  it('names the line and column of a JSON syntax error', () => {
    const e = rejected(parseOmmJson('{\n  "EPOCH": "2026-01-30T06:00:00",\n  "MEAN_MOTION": 14.9,,\n}'));
    expect(e).toMatchObject({ code: 'syntax', field: 'json', line: 3, column: 23 });
  });

  it('accepts an array holding one object and rejects one holding two', () => {
    expect(accepted(parseOmmJson(JSON.stringify([FLAT]))).name).toBe('NADIR DEMO 2');
    expect(rejected(parseOmmJson(JSON.stringify([FLAT, FLAT])))).toMatchObject({ code: 'structure' });
  });

  it('writes numbers as numbers and times and names as strings', () => {
    const out = toOmmJson(accepted(parseOmmJson(FLAT)), CREATED);
    expect(out).toMatchObject({ EPOCH: '2026-01-30T06:00:00.000001', MEAN_MOTION: 14.9, NORAD_CAT_ID: 99902, CENTER_NAME: 'EARTH' });
    expect(out.CREATION_DATE).toBe('2026-01-01T00:00:00.000000');
  });
});

describe('OMM round trips: parse(export(x)) gives x back', () => {
  const sets: [string, ElementSet][] = AIAA_2006_6753_CASES.map((c) => [
    `AIAA 2006-6753 case ${c.catalog}`,
    { ...accepted(parseTle(`${c.line1}\n${c.line2}`)), name: `CASE ${c.catalog}` },
  ]);
  const kepler = fromKeplerian({
    epoch: '2026-03-01T01:02:03.456789Z',
    meanMotionRevPerDay: 15.123456789012345,
    eccentricity: 0.000123456789,
    inclinationDeg: 97.123456789,
    raanDeg: 359.999999999,
    argPerigeeDeg: 0.000000001,
    meanAnomalyDeg: 123.456789012,
    bstar: -1.23456789e-5,
    meanMotionDot: 1e-9,
    meanMotionDdot: -1e-13,
    name: 'NADIR KEPLER',
    catalogNumber: 123456789,
  });
  sets.push(['full-precision Keplerian input with a nine-digit catalog number', accepted(kepler)]);

  for (const [what, es] of sets) {
    it(`holds for ${what} through KVN, XML and JSON`, () => {
      expect(accepted(parseOmmKvn(toOmmKvn(es, CREATED)))).toEqual({ ...es, source: 'omm-kvn' });
      expect(accepted(parseOmmXml(toOmmXml(es, CREATED)))).toEqual({ ...es, source: 'omm-xml' });
      expect(accepted(parseOmmJson(JSON.stringify(toOmmJson(es, CREATED))))).toEqual({ ...es, source: 'omm-json' });
      expect(accepted(parseOmmJson(toOmmJson(es, CREATED)))).toEqual({ ...es, source: 'omm-json' });
    });
  }

  it('writes the standard keywords in order with units in brackets', () => {
    const kvn = toOmmKvn(sets[0]?.[1] as ElementSet, CREATED);
    const keywords = kvn.split('\n').filter((l) => l.includes('=')).map((l) => l.split('=')[0]?.trim());
    expect(keywords).toEqual([
      'CCSDS_OMM_VERS', 'CREATION_DATE', 'ORIGINATOR',
      'OBJECT_NAME', 'OBJECT_ID', 'CENTER_NAME', 'REF_FRAME', 'TIME_SYSTEM', 'MEAN_ELEMENT_THEORY',
      'EPOCH', 'MEAN_MOTION', 'ECCENTRICITY', 'INCLINATION', 'RA_OF_ASC_NODE', 'ARG_OF_PERICENTER', 'MEAN_ANOMALY',
      'EPHEMERIS_TYPE', 'CLASSIFICATION_TYPE', 'NORAD_CAT_ID', 'ELEMENT_SET_NO', 'REV_AT_EPOCH', 'BSTAR', 'MEAN_MOTION_DOT', 'MEAN_MOTION_DDOT',
    ]);
    expect(kvn).toContain('MEAN_MOTION          = 10.82419157 [rev/day]');
    expect(kvn).toContain('OBJECT_ID            = 1958-002B');
    expect(kvn).toContain('EPOCH                = 2000-06-27T18:50:19.733568');
  });
});
