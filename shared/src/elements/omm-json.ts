/**
 * OMM as JSON: a flat object of the CCSDS 502.0-B-3 keywords (common practice; the standard
 * itself has KVN and XML bindings only). Header and metadata keywords may be left out, as the
 * common form does; when present they are checked like KVN's. Keys outside the standard (catalog
 * extras such as OBJECT_TYPE) are ignored. Errors name the key in `field` and, when the input
 * was text, its line and column.
 */
import type { ElementSet, ParseResult, ParsedEntry } from '../types.ts';
import { reject } from './errors.ts';
import { readJson, readJsonArrayItems } from './json-text.ts';
import type { JsonNode } from './json-text.ts';
import { buildFromOmm, isOmmKeyword, ommSections } from './omm-common.ts';
import type { OmmExportOptions, OmmItem } from './omm-common.ts';
import { TextPositions } from './text-position.ts';

/** Build from a JSON object node read from text (positions known). */
function fromNode(node: JsonNode, pos: TextPositions): ParseResult {
  const at = pos.at(node.start);
  if (node.kind !== 'object') {
    return reject('structure', { field: 'json', ...at }, 'expected an object of OMM keywords');
  }
  const items = new Map<string, OmmItem>();
  for (const e of node.entries) {
    if (!isOmmKeyword(e.key) || e.key === 'COMMENT' || e.key.startsWith('USER_DEFINED_')) continue;
    const p = pos.at(e.value.start);
    if (items.has(e.key)) return reject('duplicate', { field: e.key, ...pos.at(e.keyStart) }, 'key appears twice in one object');
    const v = e.value;
    if (v.kind === 'literal' && v.value === null) continue;
    if (v.kind === 'string') items.set(e.key, { value: v.value, ...p });
    else if (v.kind === 'number') items.set(e.key, { value: v.raw, ...p });
    else return reject('format', { field: e.key, ...p }, `must be a string or a number, not ${v.kind === 'literal' ? String(v.value) : `an ${v.kind}`}`);
  }
  return buildFromOmm(items, { source: 'omm-json', requireHeader: false, ...at });
}

/** Build from a plain JavaScript object (no positions). */
function fromObject(obj: unknown): ParseResult {
  if (typeof obj !== 'object' || obj === null || Array.isArray(obj)) {
    return reject('structure', { field: 'json' }, 'expected an object of OMM keywords');
  }
  const items = new Map<string, OmmItem>();
  for (const [key, value] of Object.entries(obj as Record<string, unknown>)) {
    if (!isOmmKeyword(key) || key === 'COMMENT' || key.startsWith('USER_DEFINED_')) continue;
    if (value === null || value === undefined) continue;
    if (typeof value === 'string' || typeof value === 'number') items.set(key, { value });
    else return reject('format', { field: key }, `must be a string or a number, not ${typeof value}`);
  }
  return buildFromOmm(items, { source: 'omm-json', requireHeader: false });
}

/** Every object of a JSON text (one object or an array of them; at most `limit`), each with its own result. */
export function parseOmmJsonEntries(text: string, limit = Infinity): ParsedEntry[] {
  const pos = new TextPositions(text);
  const { items, error } = readJsonArrayItems(text, limit);
  const entries: ParsedEntry[] = items.map((node, i) => ({
    index: i + 1,
    line: pos.at(node.start).line,
    result: fromNode(node, pos),
  }));
  if (error) {
    const p = pos.at(error.offset);
    entries.push({
      index: entries.length + 1,
      line: p.line,
      result: reject('syntax', { field: 'json', ...p }, `not valid JSON: ${error.reason}${items.length > 0 ? ' (reading stopped here)' : ''}`),
    });
  }
  return entries;
}

/**
 * Parse exactly one OMM given as JSON text or as an already-parsed object. An array holding one
 * object is accepted; several objects are an error (use parseElementSets for those).
 */
export function parseOmmJson(textOrObject: unknown): ParseResult {
  if (typeof textOrObject !== 'string') {
    if (Array.isArray(textOrObject)) {
      if (textOrObject.length !== 1) {
        return reject('structure', { field: 'json' }, `the array holds ${textOrObject.length} objects; expected one`);
      }
      return fromObject(textOrObject[0]);
    }
    return fromObject(textOrObject);
  }
  if (textOrObject.trim() === '') return reject('empty', { field: 'text' }, 'no OMM message found (the text is empty)');
  const pos = new TextPositions(textOrObject);
  const doc = readJson(textOrObject);
  if (!doc.ok) return reject('syntax', { field: 'json', ...pos.at(doc.offset) }, `not valid JSON: ${doc.reason}`);
  const node = doc.value;
  if (node.kind === 'array') {
    if (node.items.length !== 1) {
      return reject('structure', { field: 'json', ...pos.at(node.start) }, `the array holds ${node.items.length} objects; expected one (use parseElementSets for files holding many)`);
    }
    return fromNode(node.items[0] as JsonNode, pos);
  }
  return fromNode(node, pos);
}

/**
 * The element set as a flat OMM JSON object: header, metadata, mean elements and TLE parameters
 * (numbers as numbers, times and names as strings).
 */
export function toOmmJson(es: ElementSet, options: OmmExportOptions = {}): Record<string, string | number> {
  const s = ommSections(es, options);
  const out: Record<string, string | number> = {};
  for (const f of [...s.header, ...s.metadata, ...s.meanElements, ...s.tleParameters]) out[f.keyword] = f.value;
  return out;
}
