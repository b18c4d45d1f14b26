/**
 * Two-line element sets. Column layout, checksum rule and epoch-year rule from AIAA 2006-6753
 * Appendix B (and Spacetrack Report #3); Alpha-5 catalog numbers as references.md describes.
 * satellite.js validates neither checksums nor layout: both are done here.
 */
import type { ElementSet, ElementSetError, ParseResult } from '../types.ts';
import { daysInYear, epochUsFromMs, tleEpochFields, tleEpochToUs } from './epoch.ts';
import { reject } from './errors.ts';
import type { FieldLocation } from './errors.ts';
import {
  MAX_TLE_CATALOG,
  TLE_DESIGNATOR,
  checkRanges,
  firstControlChar,
  toElementSet,
} from './validate.ts';
import type { Candidate, CandidateField } from './validate.ts';

/** One line of submitted text with its 1-based line number in the whole text. */
export interface SourceLine {
  text: string;
  line: number;
}

/**
 * The lines of a text (LF, CRLF or CR), trailing blanks and tabs removed, numbered from
 * `firstLine`, one at a time: a reader that stops early (at an entry cap) reads no further.
 * One pass over the text: trailing blanks are found by walking back from each line end, never
 * by a regular expression (`/[ \t]+$/` retries from every blank of a long run: quadratic).
 */
export function* iterateLines(text: string, firstLine = 1): Generator<SourceLine, void, undefined> {
  let from = text.charCodeAt(0) === 0xfeff ? 1 : 0;
  let line = firstLine;
  const n = text.length;
  for (;;) {
    let end = from;
    while (end < n) {
      const c = text.charCodeAt(end);
      if (c === 10 || c === 13) break;
      end++;
    }
    let last = end;
    while (last > from) {
      const c = text.charCodeAt(last - 1);
      if (c !== 32 && c !== 9) break;
      last--;
    }
    yield { text: text.slice(from, last), line };
    if (end >= n) return;
    from = end + (text.charCodeAt(end) === 13 && text.charCodeAt(end + 1) === 10 ? 2 : 1);
    line++;
  }
}

/** Split text into lines (LF, CRLF or CR), trailing blanks removed, numbered from `firstLine`. */
export function splitLines(text: string, firstLine = 1): SourceLine[] {
  return [...iterateLines(text, firstLine)];
}

// ---------------------------------------------------------------------------------------------
// Checksum and Alpha-5

/**
 * TLE checksum of a line: the digits of columns 1-68 summed, each '-' counting 1, everything
 * else 0, modulo 10 (AIAA 2006-6753 Appendix B).
 */
export function tleChecksum(line: string): number {
  let sum = 0;
  const end = Math.min(line.length, 68);
  for (let i = 0; i < end; i++) {
    const c = line.charCodeAt(i);
    if (c >= 48 && c <= 57) sum += c - 48;
    else if (c === 45) sum += 1;
  }
  return sum % 10;
}

/** Alpha-5 letters: A-Z without I and O stand for 10-33 (references.md). */
const ALPHA5_LETTERS = 'ABCDEFGHJKLMNPQRSTUVWXYZ';

/**
 * Catalog number of a five-character TLE catalog field: "00005" -> 5, "A0000" -> 100000,
 * "Z9999" -> 339999. Null when the text is not five digits or an Alpha-5 letter and four digits.
 */
export function decodeAlpha5(s: string): number | null {
  if (/^\d{5}$/.test(s)) return Number(s);
  const m = /^([A-Z])(\d{4})$/.exec(s);
  if (!m) return null;
  const idx = ALPHA5_LETTERS.indexOf(m[1] ?? '');
  if (idx < 0) return null;
  return (idx + 10) * 10_000 + Number(m[2]);
}

/**
 * Five-character TLE catalog field of a catalog number: 5 -> "00005", 100000 -> "A0000".
 * Throws RangeError outside 0-339999 (a programmer error: check the number first).
 */
export function encodeAlpha5(n: number): string {
  if (!Number.isInteger(n) || n < 0 || n > MAX_TLE_CATALOG) {
    throw new RangeError(`catalog number ${n} cannot be written in a TLE (0-${MAX_TLE_CATALOG})`);
  }
  if (n < 100_000) return String(n).padStart(5, '0');
  const letter = ALPHA5_LETTERS[Math.floor(n / 10_000) - 10] ?? '';
  return `${letter}${String(n % 10_000).padStart(4, '0')}`;
}

// ---------------------------------------------------------------------------------------------
// Parsing

/** Fields of the two lines: 1-based first and last column (AIAA 2006-6753 Appendix B). */
const L1 = {
  catalogNumber: [3, 7],
  classification: [8, 8],
  intlDesignator: [10, 17],
  epochYear: [19, 20],
  epochDay: [21, 32],
  meanMotionDot: [34, 43],
  meanMotionDdot: [45, 52],
  bstar: [54, 61],
  ephemerisType: [63, 63],
  elementSetNo: [65, 68],
} as const;
const L2 = {
  catalogNumber: [3, 7],
  inclinationDeg: [9, 16],
  raanDeg: [18, 25],
  eccentricity: [27, 33],
  argPerigeeDeg: [35, 42],
  meanAnomalyDeg: [44, 51],
  meanMotionRevPerDay: [53, 63],
  revAtEpoch: [64, 68],
} as const;
/** Columns that must be blank, with what they separate. */
const L1_BLANKS: [number, string][] = [
  [2, 'the line number and the catalog number'],
  [9, 'the classification and the international designator'],
  [18, 'the international designator and the epoch'],
  [33, 'the epoch and the first derivative of mean motion'],
  [44, 'the first and second derivatives of mean motion'],
  [53, 'the second derivative of mean motion and B*'],
  [62, 'B* and the ephemeris type'],
  [64, 'the ephemeris type and the element set number'],
];
const L2_BLANKS: [number, string][] = [
  [2, 'the line number and the catalog number'],
  [8, 'the catalog number and the inclination'],
  [17, 'the inclination and the right ascension of the ascending node'],
  [26, 'the right ascension of the ascending node and the eccentricity'],
  [34, 'the eccentricity and the argument of perigee'],
  [43, 'the argument of perigee and the mean anomaly'],
  [52, 'the mean anomaly and the mean motion'],
];

const PLAIN_DECIMAL = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)$/;
const UNSIGNED_DECIMAL = /^(?:\d+(?:\.\d*)?|\.\d+)$/;

type Failure = ElementSetError;

function col(s: string, range: readonly [number, number]): string {
  return s.slice(range[0] - 1, range[1]);
}

/** Does this line look like TLE line `n` (used to group lines of many-entry files)? */
export function looksLikeTleLine(text: string, n: 1 | 2): boolean {
  return (n === 1 ? LINE1_START : LINE2_START).test(text.trimStart());
}
/** The line number, a blank and a catalog number (digits, or an Alpha-5 letter and digits). */
const LINE1_START = /^1 [0-9A-Z ]{4}[0-9]/;
const LINE2_START = /^2 [0-9A-Z ]{4}[0-9]/;

interface LineCtx {
  src: SourceLine;
  /** 1 or 2 (the TLE line), used in messages. */
  n: 1 | 2;
}

function at(ctx: LineCtx, field: string, column: number): FieldLocation {
  return { field, line: ctx.src.line, column };
}

/** Layout checks of one line: characters, line number, length, blank columns. */
function checkLineLayout(ctx: LineCtx): Failure | null {
  const s = ctx.src.text;
  for (let i = 0; i < s.length; i++) {
    const c = s.charCodeAt(i);
    if (c < 0x20 || c > 0x7e) {
      return reject('format', at(ctx, 'layout', i + 1), `character U+${c.toString(16).toUpperCase().padStart(4, '0')} is not allowed in a TLE line (printable ASCII only)`);
    }
  }
  const lead = s.length - s.trimStart().length;
  if (lead > 0) {
    return reject('layout', at(ctx, 'lineNumber', 1), `line ${ctx.n} must start in column 1 (found ${lead} leading blank${lead > 1 ? 's' : ''})`);
  }
  if (s[0] !== String(ctx.n)) {
    return reject('layout', at(ctx, 'lineNumber', 1), `expected line number ${ctx.n}, found "${s[0] ?? ''}"`);
  }
  if (s.length === 68) {
    return reject('checksum', at(ctx, 'checksum', 69), `missing (line ${ctx.n} ends at column 68)`);
  }
  if (s.length < 69) {
    return reject('layout', at(ctx, 'layout', s.length + 1), `line ${ctx.n} ends after column ${s.length}; a TLE line has 69 columns`);
  }
  if (s.length > 69) {
    return reject('layout', at(ctx, 'layout', 70), `line ${ctx.n} runs to column ${s.length}; a TLE line has 69 columns`);
  }
  for (const [c, between] of ctx.n === 1 ? L1_BLANKS : L2_BLANKS) {
    if (s[c - 1] !== ' ') {
      return reject('layout', at(ctx, 'layout', c), `column ${c} must be blank (it separates ${between}); found "${s[c - 1] ?? ''}"`);
    }
  }
  return null;
}

function checkChecksum(ctx: LineCtx): Failure | null {
  const s = ctx.src.text;
  const found = s[68] ?? '';
  if (!/^\d$/.test(found)) {
    return reject('checksum', at(ctx, 'checksum', 69), `"${found}" is not a digit`);
  }
  const expected = tleChecksum(s);
  if (Number(found) !== expected) {
    return reject('checksum', at(ctx, 'checksum', 69), `expected ${expected}, found ${found}`);
  }
  return null;
}

type Parsed<T> = { ok: true; value: T } | Failure;

function catalogField(ctx: LineCtx): Parsed<number> {
  const raw = col(ctx.src.text, L1.catalogNumber);
  const where = at(ctx, 'catalogNumber', 3);
  const digits = raw.replace(/^ +/, '');
  if (/^\d+$/.test(digits)) return { ok: true, value: Number(digits) };
  const v = decodeAlpha5(raw);
  if (v !== null) return { ok: true, value: v };
  if (/^[IO]\d{4}$/.test(raw)) {
    return reject('format', where, `"${raw}": Alpha-5 does not use the letters I and O`);
  }
  return reject('format', where, `"${raw}" is not a catalog number (five digits, or Alpha-5: a letter A-Z without I and O and four digits)`);
}

function decimalField(ctx: LineCtx, field: CandidateField, range: readonly [number, number], signed: boolean): Parsed<number> {
  const raw = col(ctx.src.text, range);
  const t = raw.trim();
  if (!(signed ? PLAIN_DECIMAL : UNSIGNED_DECIMAL).test(t)) {
    return reject('format', at(ctx, field, range[0]), `"${raw}" is not a decimal number`);
  }
  return { ok: true, value: Number(t) };
}

/** "ddddd-e" with an assumed leading decimal point: " 28098-4" = 0.28098e-4. */
function exponentField(ctx: LineCtx, field: CandidateField, range: readonly [number, number]): Parsed<number> {
  const raw = col(ctx.src.text, range);
  const m = /^([ +-])([ \d]{4}\d)([ +-])(\d)$/.exec(raw);
  if (!m || /\d +\d/.test(m[2] ?? '')) {
    return reject('format', at(ctx, field, range[0]), `"${raw}" is not written as [sign]ddddd[sign]d (assumed decimal point, e.g. " 28098-4")`);
  }
  const sign = m[1] === '-' ? '-' : '';
  const mantissa = (m[2] ?? '').replace(/ /g, '0');
  const expSign = m[3] === '-' ? '-' : '+';
  return { ok: true, value: Number(`${sign}0.${mantissa}e${expSign}${m[4]}`) };
}

function integerField(ctx: LineCtx, field: CandidateField, range: readonly [number, number]): Parsed<number> {
  const raw = col(ctx.src.text, range);
  if (!/^ *\d*$/.test(raw)) {
    return reject('format', at(ctx, field, range[0]), `"${raw}" is not a whole number`);
  }
  const t = raw.trim();
  return { ok: true, value: t === '' ? 0 : Number(t) };
}

/**
 * Parse one TLE from its lines (name line optional). Lines carry their line numbers in the
 * submitted text, so a set inside a larger file reports positions in that file.
 */
export function parseTleLines(lines: SourceLine[]): ParseResult {
  const body = lines.filter((l) => l.text.trim() !== '');
  if (body.length === 0) return reject('empty', { field: 'text' }, 'no element set found (the text is empty)');
  if (body.length > 3) {
    return reject('structure', { field: 'text', line: body[3]?.line ?? 1 }, `a TLE has 2 lines, or 3 with a name line; found ${body.length} lines (use parseElementSets for files holding many sets)`);
  }
  let nameLine: SourceLine | undefined;
  let l1: SourceLine | undefined;
  let l2: SourceLine | undefined;
  if (body.length === 3) [nameLine, l1, l2] = body;
  else if (body.length === 2) {
    const [a, b] = body as [SourceLine, SourceLine];
    if (looksLikeTleLine(b.text, 1)) [nameLine, l1] = [a, b];
    else if (!looksLikeTleLine(a.text, 1) && !looksLikeTleLine(a.text, 2) && looksLikeTleLine(b.text, 2) && a.text.trim().length < 60) {
      // A short line before line 2 is a name line; a line of TLE length is a damaged line 1.
      [nameLine, l2] = [a, b];
    } else [l1, l2] = [a, b];
  } else {
    const only = body[0] as SourceLine;
    if (looksLikeTleLine(only.text, 2)) l2 = only;
    else l1 = only;
  }
  if (!l1) {
    return reject('structure', { field: 'line1', line: l2?.line ?? 1, column: 1 }, 'TLE line 1 is missing (expected before line 2)');
  }
  if (!l2) {
    return reject('structure', { field: 'line2', line: l1.line + 1, column: 1 }, 'TLE line 2 is missing (expected after line 1)');
  }

  let name = '';
  if (nameLine) {
    name = nameLine.text.trim().replace(/^0 +/, '');
    const bad = firstControlChar(nameLine.text);
    if (bad >= 0) {
      return reject('format', { field: 'name', line: nameLine.line, column: bad + 1 }, 'the name line holds a control character');
    }
    if (looksLikeTleLine(nameLine.text, 1) || looksLikeTleLine(nameLine.text, 2)) {
      return reject('structure', { field: 'name', line: nameLine.line, column: 1 }, 'expected a name line before TLE line 1, found what looks like a TLE line');
    }
  }

  const c1: LineCtx = { src: l1, n: 1 };
  const c2: LineCtx = { src: l2, n: 2 };
  for (const ctx of [c1, c2]) {
    const bad = checkLineLayout(ctx);
    if (bad) return bad;
  }

  // Field syntax, line 1.
  const cat1 = catalogField(c1);
  if (!cat1.ok) return cat1;
  const s1 = l1.text;
  const classification = col(s1, L1.classification);
  if (!/^[UCS]$/.test(classification)) {
    return reject('format', at(c1, 'classification', 8), `"${classification}" must be U, C or S`);
  }
  const designator = col(s1, L1.intlDesignator).trim();
  if (designator !== '' && !TLE_DESIGNATOR.test(designator)) {
    return reject('format', at(c1, 'intlDesignator', 10), `"${designator}" is not an international designator (YYNNNPPP, e.g. 98067A)`);
  }
  const yy = col(s1, L1.epochYear);
  if (!/^\d\d$/.test(yy)) return reject('format', at(c1, 'epoch', 19), `epoch year "${yy}" must be two digits`);
  const year = Number(yy) >= 57 ? 1900 + Number(yy) : 2000 + Number(yy);
  const dayRaw = col(s1, L1.epochDay);
  const dm = /^ *(\d{1,3})(?:\.(\d*))?$/.exec(dayRaw);
  if (!dm) {
    return reject('format', at(c1, 'epoch', 21), `epoch day "${dayRaw}" must be a day of year with its fraction (DDD.dddddddd)`);
  }
  const dayOfYear = Number(dm[1]);
  if (dayOfYear < 1 || dayOfYear > daysInYear(year)) {
    return reject('range', at(c1, 'epoch', 21), `day of year ${dm[1]} does not exist in ${year} (1-${daysInYear(year)} plus a fraction)`);
  }
  const ndot = decimalField(c1, 'meanMotionDot', L1.meanMotionDot, true);
  if (!ndot.ok) return ndot;
  const nddot = exponentField(c1, 'meanMotionDdot', L1.meanMotionDdot);
  if (!nddot.ok) return nddot;
  const bstar = exponentField(c1, 'bstar', L1.bstar);
  if (!bstar.ok) return bstar;
  const ephRaw = col(s1, L1.ephemerisType);
  if (!/^[\d ]$/.test(ephRaw)) return reject('format', at(c1, 'ephemerisType', 63), `"${ephRaw}" must be a digit`);
  const elset = integerField(c1, 'elementSetNo', L1.elementSetNo);
  if (!elset.ok) return elset;

  // Field syntax, line 2.
  const cat2 = catalogField(c2);
  if (!cat2.ok) return cat2;
  const incl = decimalField(c2, 'inclinationDeg', L2.inclinationDeg, true);
  if (!incl.ok) return incl;
  const raan = decimalField(c2, 'raanDeg', L2.raanDeg, true);
  if (!raan.ok) return raan;
  const eccRaw = col(l2.text, L2.eccentricity);
  if (!/^ *\d+$/.test(eccRaw)) {
    return reject('format', at(c2, 'eccentricity', 27), `"${eccRaw}" must be seven digits (assumed leading decimal point)`);
  }
  const argp = decimalField(c2, 'argPerigeeDeg', L2.argPerigeeDeg, true);
  if (!argp.ok) return argp;
  const ma = decimalField(c2, 'meanAnomalyDeg', L2.meanAnomalyDeg, true);
  if (!ma.ok) return ma;
  const mm = decimalField(c2, 'meanMotionRevPerDay', L2.meanMotionRevPerDay, false);
  if (!mm.ok) return mm;
  const rev = integerField(c2, 'revAtEpoch', L2.revAtEpoch);
  if (!rev.ok) return rev;

  for (const ctx of [c1, c2]) {
    const bad = checkChecksum(ctx);
    if (bad) return bad;
  }
  if (cat1.value !== cat2.value) {
    return reject('mismatch', at(c2, 'catalogNumber', 3), `catalog number ${col(l2.text, L2.catalogNumber)} differs from line 1's ${col(s1, L1.catalogNumber)}`);
  }

  const candidate: Candidate = {
    name,
    catalogNumber: String(cat1.value),
    classification,
    intlDesignator: designator,
    epochUs: tleEpochToUs(year, dayOfYear, dm[2] ?? ''),
    meanMotionRevPerDay: mm.value,
    eccentricity: Number(`0.${eccRaw.replace(/ /g, '0')}`),
    inclinationDeg: incl.value,
    raanDeg: raan.value,
    argPerigeeDeg: argp.value,
    meanAnomalyDeg: ma.value,
    bstar: bstar.value,
    meanMotionDot: ndot.value,
    meanMotionDdot: nddot.value,
    ephemerisType: ephRaw === ' ' ? 0 : Number(ephRaw),
    elementSetNo: elset.value,
    revAtEpoch: rev.value,
  };
  const locate = (f: CandidateField): FieldLocation => {
    if (f === 'epochUs') return at(c1, 'epoch', 19);
    if (f in L1) return at(c1, f, (L1 as Record<string, readonly [number, number]>)[f]?.[0] ?? 1);
    if (f in L2) return at(c2, f, (L2 as Record<string, readonly [number, number]>)[f]?.[0] ?? 1);
    return { field: f, line: nameLine?.line ?? l1.line };
  };
  const bad = checkRanges(candidate, locate, { maxCatalog: MAX_TLE_CATALOG, maxRevAtEpoch: 99_999 });
  if (bad) return bad;
  return { ok: true, elementSet: toElementSet(candidate, 'tle') };
}

/**
 * Parse one two-line element set: two lines, or three with a name line (a leading "0 " on the
 * name line is dropped). CRLF, blank lines around the set and trailing blanks are tolerated.
 */
export function parseTle(text: string): ParseResult {
  if (typeof text !== 'string') return reject('format', { field: 'text' }, `expected text, got ${typeof text}`);
  return parseTleLines(splitLines(text));
}

// ---------------------------------------------------------------------------------------------
// Export

/** Can this set be written as a TLE? (Catalog numbers above 339999 cannot.) */
export function canExportTle(es: ElementSet): { ok: true } | ElementSetError {
  const cat = es.catalogNumber === '' ? 0 : Number(es.catalogNumber);
  if (!(Number.isInteger(cat) && cat >= 0 && cat <= MAX_TLE_CATALOG)) {
    return reject('range', { field: 'catalogNumber' }, `catalog number ${es.catalogNumber} cannot be written in a TLE (0-${MAX_TLE_CATALOG}, Alpha-5 above 99999)`);
  }
  return { ok: true };
}

/** " .00000023" / "-.00000104": sign, point, eight decimals. */
function formatNdot(x: number): string {
  let digits = Math.abs(x).toFixed(8);
  if (digits.startsWith('1')) digits = '0.99999999';
  const frac = digits.slice(2);
  const sign = x < 0 && /[1-9]/.test(frac) ? '-' : ' ';
  return `${sign}.${frac}`;
}

/** " 28098-4": sign, five mantissa digits with assumed leading point, exponent sign and digit. */
function formatExponent(x: number): string {
  if (x === 0 || !Number.isFinite(x)) return ' 00000-0';
  const [m = '0', e = '0'] = Math.abs(x).toExponential(4).split('e');
  let exp = Number(e) + 1;
  const mantissa = m.replace('.', '');
  if (exp < -9) return ' 00000-0';
  if (exp > 9) exp = 9;
  const sign = x < 0 ? '-' : ' ';
  return `${sign}${mantissa}${exp < 0 ? '-' : '+'}${Math.abs(exp)}`;
}

function formatAngle(x: number): string {
  return x.toFixed(4).padStart(8, ' ');
}

function withChecksum(line68: string): string {
  return `${line68}${tleChecksum(line68)}`;
}

/**
 * Write an element set as a TLE: fields rounded into their columns (AIAA 2006-6753 Appendix B),
 * Alpha-5 above catalog number 99999, checksums computed. The revolution number is written
 * modulo 100000, as the TLE counter wraps (common practice). Throws RangeError for catalog
 * numbers a TLE cannot hold (check with canExportTle first).
 */
export function toTle(es: ElementSet): { name: string; line1: string; line2: string; text: string } {
  const check = canExportTle(es);
  if (!check.ok) throw new RangeError(check.message);
  const cat = encodeAlpha5(es.catalogNumber === '' ? 0 : Number(es.catalogNumber));
  const { year, dayOfYear, fraction8 } = tleEpochFields(epochUsFromMs(es.epochMs));
  const epoch = `${String(year % 100).padStart(2, '0')}${String(dayOfYear).padStart(3, '0')}.${String(fraction8).padStart(8, '0')}`;
  const designator = es.intlDesignator.slice(0, 8).padEnd(8, ' ');
  const classification = es.classification.slice(0, 1) || 'U';
  const eph = String(Math.trunc(es.ephemerisType) % 10);
  const elset = String(Math.trunc(es.elementSetNo) % 10_000).padStart(4, ' ');
  const line1 = withChecksum(
    `1 ${cat}${classification} ${designator} ${epoch} ${formatNdot(es.meanMotionDot)} ` +
      `${formatExponent(es.meanMotionDdot)} ${formatExponent(es.bstar)} ${eph} ${elset}`,
  );
  let ecc = es.eccentricity.toFixed(7);
  ecc = ecc.startsWith('1') ? '9999999' : ecc.slice(2);
  const rev = String(Math.trunc(es.revAtEpoch) % 100_000).padStart(5, ' ');
  const line2 = withChecksum(
    `2 ${cat} ${formatAngle(es.inclinationDeg)} ${formatAngle(es.raanDeg)} ${ecc} ` +
      `${formatAngle(es.argPerigeeDeg)} ${formatAngle(es.meanAnomalyDeg)} ${es.meanMotionRevPerDay.toFixed(8).padStart(11, ' ')}${rev}`,
  );
  const name = es.name;
  const text = name === '' ? `${line1}\n${line2}\n` : `${name}\n${line1}\n${line2}\n`;
  return { name, line1, line2, text };
}
