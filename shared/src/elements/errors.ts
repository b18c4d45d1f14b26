import type { ElementSetError } from '../types.ts';

/**
 * Stable, machine-readable reasons for rejecting an element set.
 * - empty: nothing to parse
 * - structure: wrong number of lines, messages or entries
 * - layout: a TLE column that must be blank is not, a line has the wrong length or number
 * - format: a field or value is not written the way the format requires
 * - range: a value is well written but outside what SGP4 or the format accepts
 * - checksum: a TLE line's column-69 checksum is missing or wrong
 * - mismatch: two fields that must agree do not (catalog number on TLE lines 1 and 2)
 * - missing: a mandatory field or keyword is absent
 * - duplicate: a keyword appears twice in one message
 * - unknown-keyword: a keyword the format does not define
 * - units: a unit in brackets or a units attribute that differs from the one the standard fixes
 * - unsupported: legal in the format but not SGP4 input (frame, centre, time system, theory)
 * - syntax: the text is not well-formed XML, JSON or KVN
 * - conflict: mutually exclusive inputs were given together
 */
export type ElementSetErrorCode =
  | 'empty'
  | 'structure'
  | 'layout'
  | 'format'
  | 'range'
  | 'checksum'
  | 'mismatch'
  | 'missing'
  | 'duplicate'
  | 'unknown-keyword'
  | 'units'
  | 'unsupported'
  | 'syntax'
  | 'conflict';

/** Where a field sits: its name in the format's vocabulary and, where known, its position. */
export interface FieldLocation {
  field: string;
  line?: number;
  column?: number;
}

/** Build a rejection whose message reads "field: line L column C: reason". */
export function reject(code: ElementSetErrorCode, where: FieldLocation, reason: string): ElementSetError {
  let place = '';
  if (where.line !== undefined) {
    place = where.column !== undefined ? `line ${where.line} column ${where.column}: ` : `line ${where.line}: `;
  }
  const error: ElementSetError = { ok: false, code, field: where.field, message: `${where.field}: ${place}${reason}` };
  if (where.line !== undefined) error.line = where.line;
  if (where.column !== undefined) error.column = where.column;
  return error;
}
