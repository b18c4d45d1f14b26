/**
 * Files holding element sets: detect the format, split into entries, and give a result per
 * entry (accepted, or rejected with its reason and place), never all-or-nothing.
 */
import type { ElementSetSource, ParseResult, ParsedEntry } from '../types.ts';
import { reject } from './errors.ts';
import { readJsonArrayItems, plainJson } from './json-text.ts';
import { fromKeplerian } from './kepler.ts';
import { parseOmmJsonEntries } from './omm-json.ts';
import { parseOmmKvnEntries } from './omm-kvn.ts';
import { parseOmmXmlMany } from './omm-xml.ts';
import { TextPositions } from './text-position.ts';
import { iterateLines, looksLikeTleLine, parseTleLines } from './tle.ts';
import type { SourceLine } from './tle.ts';

const KVN_LIKE = /^\s*[A-Za-z][A-Za-z0-9_]*\s*=/;
const KVN_VERSION = /^\s*CCSDS_OMM_VERS\s*=/i;

/**
 * Which format a text is in: XML starts with "<", JSON with "{" or "[", KVN has KEYWORD = value
 * lines, else TLE. Every line is tested on its own with an anchored pattern (a multi-line
 * `^\s*` pattern over the whole text retries from every blank of a long run: quadratic).
 */
export function detectElementSetFormat(text: string): ElementSetSource {
  let i = 0;
  while (i < text.length && (text.charCodeAt(i) === 0xfeff || /\s/.test(text.charAt(i)))) i++;
  const c = text.charAt(i);
  if (c === '<') return 'omm-xml';
  if (c === '{' || c === '[') return 'omm-json';
  let tleLike = false;
  let kvnLike = false;
  for (const l of iterateLines(text)) {
    if (KVN_VERSION.test(l.text)) return 'omm-kvn';
    if (!tleLike && (looksLikeTleLine(l.text, 1) || looksLikeTleLine(l.text, 2))) tleLike = true;
    if (!kvnLike && KVN_LIKE.test(l.text)) kvnLike = true;
  }
  return !tleLike && kvnLike ? 'omm-kvn' : 'tle';
}

/**
 * Group TLE lines into sets: [name] line 1, line 2. Lines that fit no set become entries of
 * their own. Lines are read as needed: reading stops once `limit` entries are made.
 */
export function parseTleEntries(text: string, limit = Infinity): ParsedEntry[] {
  const source = iterateLines(text);
  const ahead: SourceLine[] = [];
  /** The k-th non-blank line from here (0-based), read on demand. */
  const peek = (k: number): SourceLine | undefined => {
    while (ahead.length <= k) {
      const next = source.next();
      if (next.done) return undefined;
      if (next.value.text.trim() !== '') ahead.push(next.value);
    }
    return ahead[k];
  };
  const is1 = (l: SourceLine | undefined): boolean => l !== undefined && looksLikeTleLine(l.text, 1);
  const is2 = (l: SourceLine | undefined): boolean => l !== undefined && looksLikeTleLine(l.text, 2);
  const entries: ParsedEntry[] = [];
  while (entries.length < limit) {
    const a = peek(0);
    if (a === undefined) break;
    const b = peek(1);
    const c = peek(2);
    let size: number;
    let result: ParseResult | undefined;
    if (is1(a)) size = is2(b) ? 2 : 1;
    else if (is2(a)) size = 1;
    else if (is1(b)) size = is2(c) ? 3 : 2;
    else if (is2(b)) size = 2;
    else {
      size = 1;
      result = reject('structure', { field: 'text', line: a.line, column: 1 }, 'this line belongs to no element set (expected a name line, TLE line 1 or TLE line 2)');
    }
    const group = ahead.splice(0, size);
    entries.push({ index: entries.length + 1, line: a.line, result: result ?? parseTleLines(group) });
  }
  return entries;
}

/** Keplerian inputs as JSON (one object or an array of them); at most `limit` entries are read. */
function parseKeplerEntries(text: string, limit = Infinity): ParsedEntry[] {
  const pos = new TextPositions(text);
  const { items, error } = readJsonArrayItems(text, limit);
  const entries: ParsedEntry[] = items.map((node, i) => ({
    index: i + 1,
    line: pos.at(node.start).line,
    result: fromKeplerian(plainJson(node) as Record<string, unknown>),
  }));
  if (error) {
    const p = pos.at(error.offset);
    entries.push({ index: entries.length + 1, line: p.line, result: reject('syntax', { field: 'json', ...p }, `not valid JSON: ${error.reason}`) });
  }
  return entries;
}

/** The entries of a text, or why reading stopped: more entries than the caller allows. */
export type ElementSetsRead =
  | { ok: true; entries: ParsedEntry[] }
  | {
      ok: false;
      code: 'too-many-entries';
      /** The cap the text went over. */
      maxEntries: number;
      /** 1-based first line of the first entry over the cap. */
      line: number;
      message: string;
    };

export interface ReadElementSetsOptions {
  /** The format; detected from the text when absent ('kepler' reads JSON Keplerian inputs). */
  hint?: ElementSetSource | undefined;
  /**
   * At most this many entries (element sets, or lines and messages that fit none). Reading stops
   * at the first entry over the cap, so the work done is bounded by the cap, not by the text.
   */
  maxEntries?: number | undefined;
}

function entriesOf(text: string, hint: ElementSetSource | undefined, limit: number): ParsedEntry[] {
  switch (hint ?? detectElementSetFormat(text)) {
    case 'tle':
      return parseTleEntries(text, limit);
    case 'omm-kvn':
      return parseOmmKvnEntries(text, limit);
    case 'omm-xml':
      return parseOmmXmlMany(text, limit);
    case 'omm-json':
      return parseOmmJsonEntries(text, limit);
    case 'kepler':
      return parseKeplerEntries(text, limit);
  }
}

/**
 * Every element set in a text, each with its own result, unless the text holds more than
 * `maxEntries` entries: then reading stops at the first one over the cap and says where it is.
 * Time is linear in the length of the text for every input.
 */
export function readElementSets(text: string, options: ReadElementSetsOptions = {}): ElementSetsRead {
  if (typeof text !== 'string' || text.trim() === '') return { ok: true, entries: [] };
  const max = options.maxEntries ?? Infinity;
  if (!(max >= 0)) throw new RangeError(`maxEntries must be 0 or more, got ${max}`);
  const entries = entriesOf(text, options.hint, max + 1);
  if (entries.length > max) {
    const line = entries[max]?.line ?? 1;
    return {
      ok: false,
      code: 'too-many-entries',
      maxEntries: max,
      line,
      message: `the text holds more than ${max} entr${max === 1 ? 'y' : 'ies'}; entry ${max + 1} starts on line ${line}`,
    };
  }
  return { ok: true, entries };
}

/**
 * Every element set in a text, each with its own result and its 1-based index and first line.
 * The format is detected unless `hint` names it ('kepler' reads JSON Keplerian inputs).
 * A text with nothing in it gives an empty list. Uploads from outside should use
 * readElementSets with a cap.
 */
export function parseElementSets(text: string, hint?: ElementSetSource): ParsedEntry[] {
  if (typeof text !== 'string' || text.trim() === '') return [];
  return entriesOf(text, hint, Infinity);
}

/** Exactly one element set from a text in any format (an error if there are none or several). */
export function parseElementSet(text: string, hint?: ElementSetSource): ParseResult {
  const entries = parseElementSets(text, hint);
  const [first, second] = entries;
  if (!first) return reject('empty', { field: 'text' }, 'no element set found (the text is empty)');
  if (second) {
    return reject('structure', { field: 'text', line: second.line }, `the text holds ${entries.length} entries; expected one element set`);
  }
  return first.result;
}
