/**
 * Range checks every format shares, so a set is held to the same limits whether it arrived as
 * a TLE, an OMM or Keplerian input. The limits are those of SGP4 and of the TLE layout
 * (AIAA 2006-6753 Appendix B), so any accepted set can be written back as a TLE.
 */
import type { ElementSet, ElementSetError, ElementSetSource } from '../types.ts';
import { END_EPOCH_US, FIRST_TLE_YEAR, LAST_TLE_YEAR, MIN_EPOCH_US, epochMsFromUs, formatEpochIso } from './epoch.ts';
import { reject } from './errors.ts';
import type { FieldLocation } from './errors.ts';

/** An element set before checks, with the epoch as exact Unix microseconds. */
export interface Candidate {
  name: string;
  catalogNumber: string;
  classification: string;
  intlDesignator: string;
  epochUs: number;
  meanMotionRevPerDay: number;
  eccentricity: number;
  inclinationDeg: number;
  raanDeg: number;
  argPerigeeDeg: number;
  meanAnomalyDeg: number;
  bstar: number;
  meanMotionDot: number;
  meanMotionDdot: number;
  ephemerisType: number;
  elementSetNo: number;
  revAtEpoch: number;
}

export type CandidateField = keyof Candidate;

/**
 * Sane mean-motion limits, rev/day. Above 20 rev/day the semi-major axis (about 5730 km) lies
 * inside the Earth. Below 0.01 rev/day (a 100-day period) the orbit reaches about a million km,
 * near the edge of the Earth's sphere of influence: not an Earth satellite for SGP4 (derived from
 * a = (mu / n^2)^(1/3), common practice for the limit).
 */
export const MIN_MEAN_MOTION = 0.01;
export const MAX_MEAN_MOTION = 20;
/** Largest catalog number a TLE can hold: Alpha-5 Z9999 (references.md). */
export const MAX_TLE_CATALOG = 339_999;
/** OMM NORAD_CAT_ID holds up to nine digits (CCSDS 502.0-B-3 table 4-3). */
export const MAX_OMM_CATALOG = 999_999_999;
/** TLE exponent fields hold 0.99999e9 at most; |ndot/2| must fit " .dddddddd". */
export const MAX_EXP_FIELD = 0.99999e9;
export const MAX_NDOT = 1;

export const CLASSIFICATIONS = ['U', 'C', 'S'] as const;

export type Locate = (field: CandidateField) => FieldLocation;

export interface RangeOptions {
  maxCatalog: number;
  maxRevAtEpoch: number;
}

function notFinite(where: FieldLocation, value: number): ElementSetError | null {
  return Number.isFinite(value) ? null : reject('range', where, `${String(value)} is not a finite number`);
}

/** First range problem of a candidate, or null when every field is within its limits. */
export function checkRanges(c: Candidate, locate: Locate, options: RangeOptions): ElementSetError | null {
  const numeric: CandidateField[] = [
    'epochUs',
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
  for (const f of numeric) {
    const bad = notFinite(locate(f), c[f] as number);
    if (bad) return bad;
  }
  if (c.epochUs < MIN_EPOCH_US || c.epochUs >= END_EPOCH_US) {
    return reject(
      'range',
      locate('epochUs'),
      `${formatEpochIso(c.epochUs)} is outside ${FIRST_TLE_YEAR}-${LAST_TLE_YEAR}, the years an element set can carry (TLE two-digit years)`,
    );
  }
  const n = c.meanMotionRevPerDay;
  if (!(n >= MIN_MEAN_MOTION && n < MAX_MEAN_MOTION)) {
    const why =
      n <= 0
        ? 'must be greater than 0'
        : n >= MAX_MEAN_MOTION
          ? `must be below ${MAX_MEAN_MOTION} rev/day (faster orbits lie inside the Earth)`
          : `must be at least ${MIN_MEAN_MOTION} rev/day (slower orbits leave the Earth's sphere of influence)`;
    return reject('range', locate('meanMotionRevPerDay'), `mean motion ${n} rev/day ${why}`);
  }
  if (!(c.eccentricity >= 0 && c.eccentricity < 1)) {
    return reject('range', locate('eccentricity'), `eccentricity ${c.eccentricity} must be at least 0 and below 1`);
  }
  if (!(c.inclinationDeg >= 0 && c.inclinationDeg <= 180)) {
    return reject('range', locate('inclinationDeg'), `inclination ${c.inclinationDeg} deg must be within 0-180`);
  }
  const angles: [CandidateField, string][] = [
    ['raanDeg', 'right ascension of the ascending node'],
    ['argPerigeeDeg', 'argument of perigee'],
    ['meanAnomalyDeg', 'mean anomaly'],
  ];
  for (const [f, label] of angles) {
    const v = c[f] as number;
    if (!(v >= 0 && v <= 360)) return reject('range', locate(f), `${label} ${v} deg must be within 0-360`);
  }
  if (!(Math.abs(c.bstar) <= MAX_EXP_FIELD)) {
    return reject('range', locate('bstar'), `B* ${c.bstar} is larger than a TLE can hold (0.99999e9)`);
  }
  if (!(Math.abs(c.meanMotionDdot) <= MAX_EXP_FIELD)) {
    return reject('range', locate('meanMotionDdot'), `${c.meanMotionDdot} is larger than a TLE can hold (0.99999e9)`);
  }
  if (!(Math.abs(c.meanMotionDot) < MAX_NDOT)) {
    return reject('range', locate('meanMotionDot'), `${c.meanMotionDot} rev/day^2 must be below 1 in size`);
  }
  const ints: [CandidateField, number][] = [
    ['ephemerisType', 9],
    ['elementSetNo', 9999],
    ['revAtEpoch', options.maxRevAtEpoch],
  ];
  for (const [f, max] of ints) {
    const v = c[f] as number;
    if (!(Number.isInteger(v) && v >= 0 && v <= max)) {
      return reject('range', locate(f), `${v} must be a whole number within 0-${max}`);
    }
  }
  if (c.catalogNumber !== '') {
    const cat = Number(c.catalogNumber);
    if (!/^\d+$/.test(c.catalogNumber) || !(cat <= options.maxCatalog)) {
      return reject('range', locate('catalogNumber'), `catalog number ${c.catalogNumber} must be within 0-${options.maxCatalog}`);
    }
  }
  if (!(CLASSIFICATIONS as readonly string[]).includes(c.classification)) {
    return reject('range', locate('classification'), `classification "${c.classification}" must be U, C or S`);
  }
  return null;
}

/** The accepted element set (call after checkRanges returned null). */
export function toElementSet(c: Candidate, source: ElementSetSource): ElementSet {
  return {
    source,
    name: c.name,
    // "00005" and "5" name the same object; the set keeps the plain decimal form.
    catalogNumber: c.catalogNumber === '' ? '' : String(Number(c.catalogNumber)),
    classification: c.classification,
    intlDesignator: c.intlDesignator,
    epochMs: epochMsFromUs(c.epochUs),
    epochIso: formatEpochIso(c.epochUs),
    meanMotionRevPerDay: c.meanMotionRevPerDay,
    eccentricity: c.eccentricity,
    inclinationDeg: c.inclinationDeg,
    raanDeg: c.raanDeg,
    argPerigeeDeg: c.argPerigeeDeg,
    meanAnomalyDeg: c.meanAnomalyDeg,
    bstar: c.bstar,
    meanMotionDot: c.meanMotionDot,
    meanMotionDdot: c.meanMotionDdot,
    ephemerisType: c.ephemerisType,
    elementSetNo: c.elementSetNo,
    revAtEpoch: c.revAtEpoch,
  };
}

/** Printable text without control characters (names, designators). */
export function firstControlChar(s: string): number {
  for (let i = 0; i < s.length; i++) {
    const code = s.charCodeAt(i);
    if (code < 0x20 || code === 0x7f || (code >= 0x80 && code < 0xa0)) return i;
  }
  return -1;
}

/** Strict decimal number text: optional sign, digits with an optional point, optional exponent. */
export const DECIMAL = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d{1,4})?$/;

/** International designator: TLE form "98067A" <-> CCSDS OBJECT_ID "1998-067A". */
export const TLE_DESIGNATOR = /^(\d{2})(\d{3})([A-Z]{1,3})$/;
export const OBJECT_ID = /^(\d{4})-(\d{3})([A-Z]{1,3})$/;

export function designatorFromObjectId(objectId: string): string {
  const m = OBJECT_ID.exec(objectId.trim());
  return m ? `${(m[1] ?? '').slice(2)}${m[2]}${m[3]}` : '';
}

export function objectIdFromDesignator(designator: string): string {
  const m = TLE_DESIGNATOR.exec(designator.trim());
  if (!m) return 'UNKNOWN';
  const yy = Number(m[1]);
  // Two-digit launch years follow the TLE epoch rule: 57-99 => 19xx (AIAA 2006-6753 Appendix B).
  return `${yy >= 57 ? 1900 + yy : 2000 + yy}-${m[2]}${m[3]}`;
}
