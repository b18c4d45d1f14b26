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
import { looksLikeTleLine, parseTleLines, splitLines } from './tle.ts';
import type { SourceLine } from './tle.ts';

const KVN_LIKE = /^\s*[A-Za-z][A-Za-z0-9_]*\s*=/;

/** Which format a text is in: XML starts with "<", JSON with "{" or "[", KVN has KEYWORD = value lines, else TLE. */
export function detectElementSetFormat(text: string): ElementSetSource {
  const t = text.replace(/^[\uFEFF\s]+/, '');
  if (t.startsWith('<')) return 'omm-xml';
  if (t.startsWith('{') || t.startsWith('[')) return 'omm-json';
  if (/^\s*CCSDS_OMM_VERS\s*=/im.test(text)) return 'omm-kvn';
  const lines = splitLines(text);
  const tleLike = lines.some((l) => looksLikeTleLine(l.text, 1) || looksLikeTleLine(l.text, 2));
  if (!tleLike && lines.some((l) => KVN_LIKE.test(l.text))) return 'omm-kvn';
  return 'tle';
}

/** Group TLE lines into sets: [name] line 1, line 2. Lines that fit no set become entries of their own. */
export function parseTleEntries(text: string): ParsedEntry[] {
  const lines = splitLines(text).filter((l) => l.text.trim() !== '');
  const is1 = (l: SourceLine | undefined): boolean => l !== undefined && looksLikeTleLine(l.text, 1);
  const is2 = (l: SourceLine | undefined): boolean => l !== undefined && looksLikeTleLine(l.text, 2);
  const entries: ParsedEntry[] = [];
  let i = 0;
  while (i < lines.length) {
    const a = lines[i] as SourceLine;
    const b = lines[i + 1];
    const c = lines[i + 2];
    let group: SourceLine[];
    let result: ParseResult | undefined;
    if (is1(a)) group = is2(b) ? [a, b as SourceLine] : [a];
    else if (is2(a)) group = [a];
    else if (is1(b)) group = is2(c) ? [a, b as SourceLine, c as SourceLine] : [a, b as SourceLine];
    else if (is2(b)) group = [a, b as SourceLine];
    else {
      group = [a];
      result = reject('structure', { field: 'text', line: a.line, column: 1 }, 'this line belongs to no element set (expected a name line, TLE line 1 or TLE line 2)');
    }
    entries.push({ index: entries.length + 1, line: a.line, result: result ?? parseTleLines(group) });
    i += group.length;
  }
  return entries;
}

/** Keplerian inputs as JSON (one object or an array of them). */
function parseKeplerEntries(text: string): ParsedEntry[] {
  const pos = new TextPositions(text);
  const { items, error } = readJsonArrayItems(text);
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

/**
 * Every element set in a text, each with its own result and its 1-based index and first line.
 * The format is detected unless `hint` names it ('kepler' reads JSON Keplerian inputs).
 * A text with nothing in it gives an empty list.
 */
export function parseElementSets(text: string, hint?: ElementSetSource): ParsedEntry[] {
  if (typeof text !== 'string' || text.trim() === '') return [];
  switch (hint ?? detectElementSetFormat(text)) {
    case 'tle':
      return parseTleEntries(text);
    case 'omm-kvn':
      return parseOmmKvnEntries(text);
    case 'omm-xml':
      return parseOmmXmlMany(text);
    case 'omm-json':
      return parseOmmJsonEntries(text);
    case 'kepler':
      return parseKeplerEntries(text);
  }
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
