/**
 * OMM in keyword = value notation (KVN, CCSDS 502.0-B-3 sections 4.2 and 7). Blank lines and
 * COMMENT lines are skipped; a unit in brackets after a value ("15.5 [rev/day]") is read and
 * checked. A file may hold several messages, each starting at its CCSDS_OMM_VERS line.
 */
import type { ElementSet, ParseResult, ParsedEntry } from '../types.ts';
import { reject } from './errors.ts';
import { buildFromOmm, fieldText, isOmmKeyword, ommSections } from './omm-common.ts';
import type { OmmExportOptions, OmmItem } from './omm-common.ts';
import { iterateLines, splitLines } from './tle.ts';
import type { SourceLine } from './tle.ts';

const KVN_LINE = /^(\s*)([A-Za-z][A-Za-z0-9_]*)(\s*)=(\s*)(.*)$/;
const COMMENT_LINE = /^\s*COMMENT(?:\s|$)/i;
const TEXT_KEYWORDS = new Set(['OBJECT_NAME', 'OBJECT_ID', 'ORIGINATOR', 'MESSAGE_ID', 'CLASSIFICATION', 'COMMENT']);
const VERSION_LINE = /^\s*CCSDS_OMM_VERS\s*=/i;

function isSkippable(l: SourceLine): boolean {
  return l.text.trim() === '' || COMMENT_LINE.test(l.text);
}

/**
 * Split KVN lines into messages at each CCSDS_OMM_VERS line. Lines before the first one form a
 * chunk of their own. Lines are read as needed: splitting stops once `limit` messages are made.
 */
export function splitKvnMessages(lines: Iterable<SourceLine>, limit = Infinity): SourceLine[][] {
  const chunks: SourceLine[][] = [];
  let current: SourceLine[] = [];
  let content = false;
  for (const l of lines) {
    if (content && VERSION_LINE.test(l.text)) {
      chunks.push(current);
      if (chunks.length >= limit) return chunks;
      current = [];
      content = false;
    }
    current.push(l);
    if (!content && !isSkippable(l)) content = true;
  }
  if (content) chunks.push(current);
  return chunks;
}

/** Parse one KVN message (its lines carry their numbers in the whole text). */
export function parseKvnMessage(lines: SourceLine[]): ParseResult {
  const items = new Map<string, OmmItem>();
  const first = lines.find((l) => !isSkippable(l));
  if (!first) return reject('empty', { field: 'text' }, 'no OMM message found (the text is empty)');
  for (const l of lines) {
    if (isSkippable(l)) continue;
    const m = KVN_LINE.exec(l.text);
    const indent = l.text.length - l.text.trimStart().length;
    if (!m) {
      return reject('syntax', { field: 'text', line: l.line, column: indent + 1 }, 'expected "KEYWORD = value" or a COMMENT line');
    }
    const [, lead = '', kwRaw = '', gap1 = '', gap2 = '', rest = ''] = m;
    const keyword = kwRaw.toUpperCase();
    const kwColumn = lead.length + 1;
    if (!isOmmKeyword(keyword)) {
      return reject('unknown-keyword', { field: keyword, line: l.line, column: kwColumn }, `"${kwRaw}" is not an OMM keyword (CCSDS 502.0-B-3 tables 4-1 to 4-3)`);
    }
    if (keyword !== 'COMMENT' && !keyword.startsWith('USER_DEFINED_') && items.has(keyword)) {
      return reject('duplicate', { field: keyword, line: l.line, column: kwColumn }, `appears again (first on line ${items.get(keyword)?.line ?? '?'})`);
    }
    const valueColumn = lead.length + kwRaw.length + gap1.length + 1 + gap2.length + 1;
    const item: OmmItem = { value: rest, line: l.line, column: valueColumn };
    // Text values (names, identifiers) may hold brackets of their own; only numbers carry units.
    const open = rest.lastIndexOf('[');
    if (rest.endsWith(']') && open >= 0 && !TEXT_KEYWORDS.has(keyword) && !keyword.startsWith('USER_DEFINED_')) {
      item.value = rest.slice(0, open).trimEnd();
      item.unit = rest.slice(open + 1, -1).trim();
    }
    items.set(keyword, item);
  }
  return buildFromOmm(items, { source: 'omm-kvn', requireHeader: true, line: first.line, column: 1 });
}

/** Every message of a KVN text (at most `limit` of them), each with its own result. */
export function parseOmmKvnEntries(text: string, limit = Infinity): ParsedEntry[] {
  return splitKvnMessages(iterateLines(text), limit).map((chunk, i) => {
    const first = chunk.find((l) => !isSkippable(l));
    return { index: i + 1, line: first?.line ?? 1, result: parseKvnMessage(chunk) };
  });
}

/** Parse exactly one OMM in KVN. Several messages are an error (use parseElementSets for those). */
export function parseOmmKvn(text: string): ParseResult {
  if (typeof text !== 'string') return reject('format', { field: 'text' }, `expected text, got ${typeof text}`);
  const chunks = splitKvnMessages(splitLines(text));
  if (chunks.length === 0) return reject('empty', { field: 'text' }, 'no OMM message found (the text is empty)');
  if (chunks.length > 1) {
    const second = chunks[1]?.find((l) => !isSkippable(l));
    const where = second ? { field: 'CCSDS_OMM_VERS', line: second.line, column: 1 } : { field: 'CCSDS_OMM_VERS' };
    return reject('structure', where, `the text holds ${chunks.length} OMM messages; expected one (use parseElementSets for files holding many)`);
  }
  return parseKvnMessage(chunks[0] ?? []);
}

/** Write an element set as an OMM in KVN (CCSDS 502.0-B-3 section 4.2, SGP4 theory). */
export function toOmmKvn(es: ElementSet, options: OmmExportOptions = {}): string {
  const s = ommSections(es, options);
  const block = (fields: typeof s.header): string =>
    fields.map((f) => `${f.keyword.padEnd(20)} = ${fieldText(f)}${f.unit ? ` [${f.unit}]` : ''}`).join('\n');
  return `${[block(s.header), block(s.metadata), block(s.meanElements), block(s.tleParameters)].join('\n\n')}\n`;
}
