/**
 * Fuzzing: thousands of mutated and random element-set texts, from a seeded generator so every
 * run sees the same inputs. Every parser must answer with a result (never throw or hang), every
 * rejection must carry a code, a message and a sane position, and every accepted set must hold
 * only finite numbers within range and survive export and re-import.
 */
import { describe, expect, it } from 'vitest';
import type { ElementSet, ElementSetSource, ParseResult, ParsedEntry } from '../types.ts';
import { parseElementSets } from './detect.ts';
import { epochUsFromMs, formatEpochIso } from './epoch.ts';
import { parseOmmJson, toOmmJson } from './omm-json.ts';
import { parseOmmKvn, toOmmKvn } from './omm-kvn.ts';
import { parseOmmXml, toNdmXml, toOmmXml } from './omm-xml.ts';
import { toSatrec } from './satrec.ts';
import { canExportTle, parseTle, toTle } from './tle.ts';
import { AIAA_2006_6753_CASES } from './verification-cases.ts';

/** mulberry32: a small seeded PRNG (public-domain algorithm, common practice for test data). */
function prng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const CREATED = { creationDate: '2026-01-01T00:00:00' };

function seedSets(): ElementSet[] {
  return AIAA_2006_6753_CASES.map((c) => {
    const r = parseTle(`CASE ${c.catalog}\n${c.line1}\n${c.line2}`);
    if (!r.ok) throw new Error(r.message);
    return r.elementSet;
  });
}

function corpus(): string[] {
  const sets = seedSets();
  const tles = sets.map((es) => toTle(es).text);
  return [
    ...tles,
    tles.join(''),
    AIAA_2006_6753_CASES.map((c) => `${c.line1}\r\n${c.line2}\r\n`).join(''),
    ...sets.map((es) => toOmmKvn(es, CREATED)),
    sets.map((es) => toOmmKvn(es, CREATED)).join('\n'),
    ...sets.slice(0, 2).map((es) => toOmmXml(es, CREATED)),
    toNdmXml(sets, CREATED),
    ...sets.slice(0, 2).map((es) => JSON.stringify(toOmmJson(es, CREATED), null, 1)),
    JSON.stringify(sets.map((es) => toOmmJson(es, CREATED))),
    JSON.stringify([{ epoch: '2026-01-01T00:00:00Z', periodMin: 95, eccentricity: 0.001, inclinationDeg: 53, raanDeg: 1, argPerigeeDeg: 2, meanAnomalyDeg: 3 }]),
  ];
}

const NASTY_NUMBERS = ['1e308', '1e999', '-1e999', 'NaN', 'Infinity', '-Infinity', '9'.repeat(400), '0', '-0', '1e-400', '0x1F', '1_0', '', '.', '-', '+.e5', '4.9e-324', '1.7976931348623157e308'];
const NASTY_CHARS = ['-', '.', ' ', '0', '9', 'e', 'E', '+', 'x', '\t', '\u0000', '\uFFFF', '\uD800', '<', '>', '"', '{', '}', '[', ']', ',', ':', '=', '\n', '\r', 'I', 'O', 'Z', '\u00A0', '\u2028'];

function mutate(text: string, rnd: () => number, pool: string[]): string {
  const int = (n: number): number => Math.floor(rnd() * n);
  const pick = <T,>(xs: readonly T[]): T => xs[int(xs.length)] as T;
  const lines = (): string[] => text.split('\n');
  switch (int(13)) {
    case 0: {
      // Flip a character.
      const i = int(text.length + 1);
      const c = rnd() < 0.5 ? pick(NASTY_CHARS) : String.fromCharCode(32 + int(95));
      return text.slice(0, i) + c + text.slice(i + 1);
    }
    case 1: {
      // Delete a column.
      const i = int(text.length);
      return text.slice(0, i) + text.slice(i + 1);
    }
    case 2: {
      // Insert a column.
      const i = int(text.length + 1);
      return text.slice(0, i) + pick(NASTY_CHARS) + text.slice(i);
    }
    case 3: {
      // Swap two lines.
      const ls = lines();
      const a = int(ls.length);
      const b = int(ls.length);
      [ls[a], ls[b]] = [ls[b] ?? '', ls[a] ?? ''];
      return ls.join('\n');
    }
    case 4: {
      // Delete or repeat a line.
      const ls = lines();
      const a = int(ls.length);
      if (rnd() < 0.5) ls.splice(a, 1);
      else ls.splice(a, 0, ls[a] ?? '');
      return ls.join('\n');
    }
    case 5:
      // Truncate.
      return text.slice(0, int(text.length + 1));
    case 6: {
      // Random bytes (any UTF-16 code unit, lone surrogates included).
      let s = '';
      const n = int(300);
      for (let i = 0; i < n; i++) s += String.fromCharCode(int(0x10000));
      return rnd() < 0.5 ? s : text.slice(0, int(text.length)) + s;
    }
    case 7: {
      // Replace a number by a huge, tiny or not-a-number one.
      const matches = [...text.matchAll(/-?\d+(?:\.\d+)?(?:[eE][+-]?\d+)?/g)];
      if (matches.length === 0) return text + pick(NASTY_NUMBERS);
      const m = pick(matches);
      return text.slice(0, m.index) + pick(NASTY_NUMBERS) + text.slice(m.index + m[0].length);
    }
    case 8:
      return pick(['', ' ', '\n\n\n', '\r', '\t\t', '0', '{}', '[]', '<omm/>', '<ndm></ndm>', 'null', '"text"', '[[[[[[', '{"a":', 'CCSDS_OMM_VERS = 3.0']);
    case 9: {
      // Splice two corpus texts.
      const other = pick(pool);
      return text.slice(0, int(text.length + 1)) + other.slice(int(other.length + 1));
    }
    case 10: {
      // Blank out a run of columns on one line (misaligned fields).
      const ls = lines();
      const a = int(ls.length);
      const l = ls[a] ?? '';
      const from = int(l.length + 1);
      ls[a] = l.slice(0, from) + ' '.repeat(int(6)) + l.slice(from + int(6));
      return ls.join('\n');
    }
    case 11: {
      // Change the case of a stretch.
      const i = int(text.length + 1);
      const j = i + int(20);
      const part = text.slice(i, j);
      return text.slice(0, i) + (rnd() < 0.5 ? part.toLowerCase() : part.toUpperCase()) + text.slice(j);
    }
    default: {
      // Repeat a stretch many times (long lines, long values).
      const i = int(text.length + 1);
      const part = text.slice(i, i + 1 + int(8));
      return text.slice(0, i) + part.repeat(1 + int(200)) + text.slice(i);
    }
  }
}

const ISO = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{6}Z$/;
const NUMERIC: (keyof ElementSet)[] = [
  'epochMs',
  'meanMotionRevPerDay',
  'eccentricity',
  'inclinationDeg',
  'raanDeg',
  'argPerigeeDeg',
  'meanAnomalyDeg',
  'bstar',
  'meanMotionDot',
  'meanMotionDdot',
  'ephemerisType',
  'elementSetNo',
  'revAtEpoch',
];

interface Tally {
  accepted: number;
  rejected: number;
  problems: string[];
  /** Accepted sets already exported and re-imported (many mutations leave a set unchanged). */
  seen: Set<string>;
}

function checkAccepted(es: ElementSet, label: string, t: Tally): void {
  const bad = (why: string): void => {
    if (t.problems.length < 20) t.problems.push(`${label}: ${why}`);
  };
  for (const k of NUMERIC) if (!Number.isFinite(es[k] as number)) bad(`${k} = ${String(es[k])}`);
  if (!ISO.test(es.epochIso)) bad(`epochIso ${es.epochIso}`);
  if (formatEpochIso(epochUsFromMs(es.epochMs)) !== es.epochIso) bad('epochMs and epochIso differ');
  if (!(es.eccentricity >= 0 && es.eccentricity < 1)) bad(`eccentricity ${es.eccentricity}`);
  if (!(es.meanMotionRevPerDay > 0 && es.meanMotionRevPerDay < 20)) bad(`mean motion ${es.meanMotionRevPerDay}`);
  if (!(es.inclinationDeg >= 0 && es.inclinationDeg <= 180)) bad(`inclination ${es.inclinationDeg}`);
  const key = JSON.stringify({ ...es, source: '' });
  if (t.seen.has(key)) return;
  t.seen.add(key);
  // Export and re-import.
  const kvn = parseOmmKvn(toOmmKvn(es, CREATED));
  if (!kvn.ok) bad(`KVN export does not read back: ${kvn.message}`);
  // A set without a name is written with OBJECT_NAME UNKNOWN (ommSections), which reads back as that name.
  else if (JSON.stringify({ ...kvn.elementSet, source: es.source }) !== JSON.stringify({ ...es, name: es.name || 'UNKNOWN' })) {
    bad(`KVN round trip changed the set: ${JSON.stringify(es)} -> ${JSON.stringify(kvn.elementSet)}`);
  }
  if (canExportTle(es).ok) {
    const tle = parseTle(toTle(es).text);
    if (!tle.ok) bad(`TLE export does not read back: ${tle.message}`);
  }
  const satrec = toSatrec(es);
  if (!Number.isFinite(satrec.jdsatepoch)) bad('satrec epoch is not finite');
}

function checkResult(r: ParseResult, text: string, label: string, t: Tally): void {
  const bad = (why: string): void => {
    if (t.problems.length < 20) t.problems.push(`${label}: ${why} (input ${JSON.stringify(text.slice(0, 80))})`);
  };
  if (typeof r !== 'object' || r === null || typeof r.ok !== 'boolean') return bad('no result object');
  if (r.ok) {
    t.accepted++;
    checkAccepted(r.elementSet, label, t);
    return;
  }
  t.rejected++;
  if (typeof r.code !== 'string' || r.code === '') bad('rejection without a code');
  if (typeof r.message !== 'string' || !r.message.startsWith(`${r.field}: `)) bad(`message "${r.message}" does not start with its field`);
  const lineCount = text.split(/\r\n|\r|\n/).length;
  if (r.line !== undefined && !(Number.isInteger(r.line) && r.line >= 1 && r.line <= lineCount + 1)) bad(`line ${r.line} of ${lineCount}`);
  if (r.column !== undefined && !(Number.isInteger(r.column) && r.column >= 1)) bad(`column ${r.column}`);
}

function checkEntries(entries: ParsedEntry[], text: string, label: string, t: Tally): void {
  if (!Array.isArray(entries)) {
    t.problems.push(`${label}: not a list`);
    return;
  }
  entries.forEach((e, i) => {
    if (e.index !== i + 1 && t.problems.length < 20) t.problems.push(`${label}: index ${e.index} at position ${i}`);
    if (!(Number.isInteger(e.line) && e.line >= 1) && t.problems.length < 20) t.problems.push(`${label}: entry line ${e.line}`);
    checkResult(e.result, text, `${label}[${i + 1}]`, t);
  });
}

const SINGLE: [string, (text: string) => ParseResult][] = [
  ['parseTle', parseTle],
  ['parseOmmKvn', parseOmmKvn],
  ['parseOmmXml', parseOmmXml],
  ['parseOmmJson', parseOmmJson],
];
const HINTS: (ElementSetSource | undefined)[] = [undefined, 'tle', 'omm-kvn', 'omm-xml', 'omm-json', 'kepler'];

/** CPU time of this test process in ms, not wall time: other work on a shared machine must not count. */
// eslint-disable-next-line no-restricted-globals
const cpuMs = () => ((u) => (u.user + u.system) / 1000)(process.cpuUsage());

describe('fuzzing the element-set parsers (seeded, deterministic)', () => {
  it('answers 6,000 mutated and random texts with results, never exceptions, slow calls or non-finite numbers', () => {
    const rnd = prng(0x4e41_4449);
    const pool = corpus();
    const tally: Tally = { accepted: 0, rejected: 0, problems: [], seen: new Set() };
    let slowest = 0;
    let slowestLabel = '';
    const started = cpuMs();
    const timed = <T,>(label: string, f: () => T): T => {
      const t0 = cpuMs();
      let out: T;
      try {
        out = f();
      } catch (e) {
        tally.problems.push(`${label}: threw ${e instanceof Error ? e.stack ?? e.message : String(e)}`);
        throw e;
      }
      const dt = cpuMs() - t0;
      if (dt > slowest) {
        slowest = dt;
        slowestLabel = label;
      }
      return out;
    };
    const N = 6000;
    for (let i = 0; i < N; i++) {
      let text = pool[Math.floor(rnd() * pool.length)] ?? '';
      const rounds = 1 + Math.floor(rnd() * 4);
      for (let k = 0; k < rounds; k++) text = mutate(text, rnd, pool);
      // Every text goes through detection, one single-set parser in turn, and now and then a
      // forced format (so TLE text meets the XML parser, JSON meets KVN, and so on).
      checkEntries(timed(`#${i} parseElementSets`, () => parseElementSets(text)), text, `#${i} sets`, tally);
      const [name, parse] = SINGLE[i % SINGLE.length] as (typeof SINGLE)[number];
      checkResult(timed(`#${i} ${name}`, () => parse(text)), text, `#${i} ${name}`, tally);
      const hint = HINTS[Math.floor(rnd() * HINTS.length)];
      if (hint && rnd() < 0.5) {
        checkEntries(timed(`#${i} parseElementSets ${hint}`, () => parseElementSets(text, hint)), text, `#${i} ${hint}`, tally);
      }
    }
    const elapsed = cpuMs() - started;
    expect(tally.problems).toEqual([]);
    // Both outcomes must be exercised, or the mutations are too weak or too strong.
    expect(tally.accepted).toBeGreaterThan(500);
    expect(tally.rejected).toBeGreaterThan(3000);
    expect(tally.seen.size).toBeGreaterThan(100);
    // About 1 s of CPU in all; the bounds catch a parser that turned superlinear (hostile.spec.ts
    // holds the 2 MiB shapes, tests/bench/parse.bench.ts the figures).
    expect(slowest, `slowest call ${slowestLabel}`).toBeLessThan(1000);
    expect(elapsed).toBeLessThan(15000);
  }, 120_000);

  it('answers pathological inputs quickly: deep nesting, huge lines, many entries', () => {
    const big = toNdmXml(seedSets(), CREATED);
    const inputs: [string, string][] = [
      ['deep JSON', '['.repeat(20000)],
      ['deep JSON objects', '{"a":'.repeat(20000)],
      ['deep XML', `<omm version="3.0">${'<header>'.repeat(5000)}`],
      ['a 200 KB line', 'x'.repeat(200_000)],
      ['a 200 KB number in KVN', `CCSDS_OMM_VERS = 3.0\nMEAN_MOTION = ${'9'.repeat(200_000)}`],
      ['a 200 KB bracket run', `CCSDS_OMM_VERS = 3.0\nMEAN_MOTION = ${'['.repeat(200_000)}`],
      ['a 200 KB epoch fraction', `CCSDS_OMM_VERS = 3.0\nEPOCH = 2026-01-01T00:00:00.${'9'.repeat(200_000)}`],
      ['2,000 TLEs', seedSets().map((es) => toTle(es).text).join('').repeat(500)],
      ['200 OMM in one NDM', big.replace(/<\/?ndm>/g, '').repeat(50).replace(/^/, '<ndm>').concat('</ndm>')],
      ['unclosed comment', `<!--${big}`],
      ['unclosed omm tags', '<omm version="3.0">'.repeat(2000)],
    ];
    for (const [what, text] of inputs) {
      const t0 = cpuMs();
      const entries = parseElementSets(text);
      for (const f of [parseTle, parseOmmKvn, parseOmmXml, parseOmmJson] as ((s: string) => ParseResult)[]) {
        const r = f(text);
        expect(typeof r.ok, what).toBe('boolean');
      }
      const dt = cpuMs() - t0;
      expect(Array.isArray(entries), what).toBe(true);
      expect(dt, `${what} took ${dt.toFixed(0)} ms`).toBeLessThan(1500);
    }
  });
});
