import { describe, expect, it } from 'vitest';
import type { ElementSet, ParseResult, ParsedEntry } from '../types.ts';
import { detectElementSetFormat, parseElementSet, parseElementSets } from './detect.ts';
import { parseOmmJson, toOmmJson } from './omm-json.ts';
import { parseOmmKvn, toOmmKvn } from './omm-kvn.ts';
import { parseOmmXml, parseOmmXmlMany, toNdmXml, toOmmXml } from './omm-xml.ts';
import { parseTle } from './tle.ts';
import { AIAA_2006_6753_CASES } from './verification-cases.ts';

function accepted(r: ParseResult): ElementSet {
  if (!r.ok) throw new Error(`expected an accepted set, got: ${r.message}`);
  return r.elementSet;
}

/** index, first line, and "ok" or the error code with its line, for compact comparison. */
function summary(entries: ParsedEntry[]): string[] {
  return entries.map((e) => `${e.index}@${e.line}:${e.result.ok ? 'ok' : `${e.result.code}@${e.result.line ?? '-'}`}`);
}

const CREATED = { creationDate: '2026-01-01T00:00:00' };
const [C5, C28129, C11801, C88888] = AIAA_2006_6753_CASES as [
  (typeof AIAA_2006_6753_CASES)[number],
  (typeof AIAA_2006_6753_CASES)[number],
  (typeof AIAA_2006_6753_CASES)[number],
  (typeof AIAA_2006_6753_CASES)[number],
];
const sets = AIAA_2006_6753_CASES.map((c) => ({ ...accepted(parseTle(`${c.line1}\n${c.line2}`)), name: `CASE ${c.catalog}` }));

describe('detectElementSetFormat', () => {
  it('tells TLE, OMM KVN, XML and JSON apart', () => {
    const es = sets[0] as ElementSet;
    expect(detectElementSetFormat(`${C5.line1}\n${C5.line2}`)).toBe('tle');
    expect(detectElementSetFormat(`NAME\n${C5.line1}\n${C5.line2}`)).toBe('tle');
    expect(detectElementSetFormat(toOmmKvn(es, CREATED))).toBe('omm-kvn');
    expect(detectElementSetFormat(`COMMENT first\n${toOmmKvn(es, CREATED)}`)).toBe('omm-kvn');
    expect(detectElementSetFormat('EPOCH = 2026-01-01T00:00:00\nMEAN_MOTION = 15')).toBe('omm-kvn');
    expect(detectElementSetFormat(`\uFEFF  ${toOmmXml(es, CREATED)}`)).toBe('omm-xml');
    expect(detectElementSetFormat(JSON.stringify(toOmmJson(es, CREATED)))).toBe('omm-json');
    expect(detectElementSetFormat(` [${JSON.stringify(toOmmJson(es, CREATED))}]`)).toBe('omm-json');
  });
});

describe('parseElementSets gives a result per entry, never all-or-nothing', () => {
  it('splits a TLE file of two- and three-line sets with garbage and a bad checksum in between', () => {
    const badChecksum = `${C28129.line2.slice(0, 68)}0`;
    const text = [
      'CASE 5', C5.line1, C5.line2, // 1-3
      '', // 4
      C88888.line1, C88888.line2, // 5-6
      'this line is not a TLE', // 7
      'CASE 28129', C28129.line1, badChecksum, // 8-10
      'CASE 11801', C11801.line1, // 11-12, line 2 missing
      'CASE 11801 AGAIN', C11801.line1, C11801.line2, // 13-15
    ].join('\r\n');
    const entries = parseElementSets(text);
    expect(summary(entries)).toEqual([
      '1@1:ok',
      '2@5:ok',
      '3@7:structure@7',
      '4@8:checksum@10',
      '5@11:structure@13',
      '6@13:ok',
    ]);
    const names = entries.map((e) => (e.result.ok ? e.result.elementSet.name : null));
    expect(names).toEqual(['CASE 5', '', null, null, null, 'CASE 11801 AGAIN']);
  });

  it('splits KVN messages at CCSDS_OMM_VERS and reports each on its own', () => {
    const a = toOmmKvn(sets[0] as ElementSet, CREATED);
    const b = toOmmKvn(sets[1] as ElementSet, CREATED).replace('TEME', 'ICRF');
    const c = toOmmKvn(sets[2] as ElementSet, CREATED);
    const text = `${a}\n${b}\n${c}`;
    const aLines = a.split('\n').length;
    const bLines = b.split('\n').length;
    const entries = parseElementSets(text);
    expect(entries.map((e) => e.line)).toEqual([1, aLines + 1, aLines + bLines + 1]);
    expect(entries.map((e) => (e.result.ok ? 'ok' : e.result.code))).toEqual(['ok', 'unsupported', 'ok']);
    const e = entries[1]?.result;
    expect(e && !e.ok && e.line).toBe(aLines + b.split('\n').findIndex((l) => l.startsWith('REF_FRAME')) + 1);
  });

  it('parses every <omm> of an <ndm> even when one of them is broken or stray text sits between', () => {
    const ndm = toNdmXml(sets, CREATED);
    const twice = '<INCLINATION units="deg">54.7298</INCLINATION>';
    const broken = ndm
      .replace('110.5714</MEAN_ANOMALY>', '110.5714</MEAN_ANOMALI>')
      .replace(twice, `${twice}\n${twice}`);
    const withStray = broken.replace('</omm>\n  <omm', '</omm>\n  stray words\n  <omm');
    const entries = parseElementSets(withStray);
    expect(entries.map((e) => (e.result.ok ? 'ok' : e.result.code))).toEqual(['ok', 'syntax', 'duplicate', 'ok', 'syntax']);
    expect(entries.map((e) => e.index)).toEqual([1, 2, 3, 4, 5]);
    const stray = entries[1]?.result;
    expect(stray && !stray.ok && stray.message).toContain('stray words');
  });

  it('keeps the objects of a JSON array read before a syntax error and reports the error at its place', () => {
    const good = JSON.stringify(toOmmJson(sets[0] as ElementSet, CREATED));
    const bad = JSON.stringify({ ...toOmmJson(sets[1] as ElementSet, CREATED), INCLINATION: 200 });
    const text = `[\n${good},\n${bad},\n${good},\n{"EPOCH": }\n]`;
    expect(summary(parseElementSets(text))).toEqual(['1@2:ok', '2@3:range@3', '3@4:ok', '4@5:syntax@5']);
  });

  it('reads Keplerian inputs as JSON when told so', () => {
    const text = JSON.stringify([
      { epoch: '2026-01-01T00:00:00Z', periodMin: 95, eccentricity: 0.001, inclinationDeg: 53, raanDeg: 0, argPerigeeDeg: 0, meanAnomalyDeg: 0 },
      { epoch: '2026-01-01T00:00:00Z', periodMin: 95, eccentricity: 1.5, inclinationDeg: 53, raanDeg: 0, argPerigeeDeg: 0, meanAnomalyDeg: 0 },
    ]);
    expect(parseElementSets(text, 'kepler').map((e) => (e.result.ok ? 'ok' : e.result.field))).toEqual(['ok', 'eccentricity']);
  });

  it('gives an empty list for empty text', () => {
    expect(parseElementSets('')).toEqual([]);
    expect(parseElementSets(' \n\r\n ')).toEqual([]);
  });
});

describe('input that is not text', () => {
  it('is answered with a rejection or an empty list, not an exception', () => {
    for (const bad of [undefined, null, 42, {}, []] as unknown as string[]) {
      expect(parseTle(bad).ok).toBe(false);
      expect(parseOmmKvn(bad).ok).toBe(false);
      expect(parseOmmXml(bad).ok).toBe(false);
      expect(parseOmmJson(bad).ok).toBe(false);
      expect(parseOmmXmlMany(bad)).toEqual([]);
      expect(parseElementSets(bad)).toEqual([]);
    }
  });
});

describe('parseElementSet wants exactly one', () => {
  it('accepts one set in any format', () => {
    const es = sets[3] as ElementSet;
    expect(accepted(parseElementSet(`${C88888.line1}\n${C88888.line2}`)).catalogNumber).toBe('88888');
    expect(accepted(parseElementSet(toOmmKvn(es, CREATED))).source).toBe('omm-kvn');
    expect(accepted(parseElementSet(toOmmXml(es, CREATED))).source).toBe('omm-xml');
    expect(accepted(parseElementSet(JSON.stringify(toOmmJson(es, CREATED)))).source).toBe('omm-json');
  });

  it('rejects none and several', () => {
    expect(parseElementSet('')).toMatchObject({ ok: false, code: 'empty' });
    expect(parseElementSet(`${C5.line1}\n${C5.line2}\n${C88888.line1}\n${C88888.line2}`)).toMatchObject({
      ok: false,
      code: 'structure',
      line: 3,
    });
  });
});
