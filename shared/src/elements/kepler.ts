/**
 * Plain Keplerian input: an epoch, one of semi-major axis, period or mean motion, and the
 * angles. The result is an SGP4 mean element set like any other; the semi-major axis is taken
 * as the two-body value for the given mean motion (SGP4's own Kozai/Brouwer distinction is
 * below what hand-entered elements carry).
 */
import type { ParseResult } from '../types.ts';
import { epochUsFromMs, parseEpochText } from './epoch.ts';
import { reject } from './errors.ts';
import type { FieldLocation } from './errors.ts';
import {
  DECIMAL,
  MAX_OMM_CATALOG,
  TLE_DESIGNATOR,
  checkRanges,
  firstControlChar,
  toElementSet,
} from './validate.ts';
import type { Candidate, CandidateField } from './validate.ts';
// WGS-72 mu 398600.8 km^3/s^2, the constant SGP4 uses (AIAA 2006-6753 table 2), kept in one place.
import { MU_WGS72_KM3_S2 } from '../orbit/constants.ts';

const SECONDS_PER_DAY = 86400;
const MINUTES_PER_DAY = 1440;

/** Mean motion (rev/day) of a semi-major axis (km): n = sqrt(mu / a^3), Kepler's third law (references.md, "Orbit relations"). */
export function meanMotionFromSemiMajorAxis(semiMajorAxisKm: number): number {
  const radPerSecond = Math.sqrt(MU_WGS72_KM3_S2 / semiMajorAxisKm ** 3);
  return (radPerSecond * SECONDS_PER_DAY) / (2 * Math.PI);
}

/** Semi-major axis (km) of a mean motion (rev/day): a = (mu / n^2)^(1/3) (references.md, "Orbit relations"). */
export function semiMajorAxisFromMeanMotion(meanMotionRevPerDay: number): number {
  const radPerSecond = (meanMotionRevPerDay * 2 * Math.PI) / SECONDS_PER_DAY;
  return Math.cbrt(MU_WGS72_KM3_S2 / (radPerSecond * radPerSecond));
}

/** Mean motion (rev/day) of a period (min): n = 1440 / T (references.md, "Orbit relations"). */
export function meanMotionFromPeriod(periodMin: number): number {
  return MINUTES_PER_DAY / periodMin;
}

export interface KeplerianInput {
  /** ISO 8601 / CCSDS time (UTC unless it carries an offset), or Unix milliseconds. */
  epoch: string | number;
  /** Exactly one of the next three. */
  semiMajorAxisKm?: number;
  periodMin?: number;
  meanMotionRevPerDay?: number;
  eccentricity: number;
  inclinationDeg: number;
  raanDeg: number;
  argPerigeeDeg: number;
  meanAnomalyDeg: number;
  /** B* drag term, 1/earth radii; 0 when left out. */
  bstar?: number;
  name?: string;
  catalogNumber?: string | number;
  classification?: string;
  intlDesignator?: string;
  /** First derivative of mean motion / 2, rev/day^2 (TLE convention). */
  meanMotionDot?: number;
  /** Second derivative of mean motion / 6, rev/day^3 (TLE convention). */
  meanMotionDdot?: number;
  elementSetNo?: number;
  revAtEpoch?: number;
}

type Num = { ok: true; value: number | undefined } | ReturnType<typeof reject>;

/** A number field: a finite number, or a string holding a decimal number (form input). */
function numberField(obj: Record<string, unknown>, key: string): Num {
  const v = obj[key];
  if (v === undefined || v === null || v === '') return { ok: true, value: undefined };
  if (typeof v === 'number') {
    if (!Number.isFinite(v)) return reject('range', { field: key }, `${String(v)} is not a finite number`);
    return { ok: true, value: v };
  }
  if (typeof v === 'string' && DECIMAL.test(v.trim())) {
    const n = Number(v.trim());
    if (!Number.isFinite(n)) return reject('range', { field: key }, `${v.trim()} is not a finite number`);
    return { ok: true, value: n };
  }
  return reject('format', { field: key }, `must be a number, got ${typeof v === 'string' ? `"${v.slice(0, 40)}"` : typeof v}`);
}

/** Element set from plain Keplerian elements. Every rejection names the input field. */
export function fromKeplerian(input: KeplerianInput | Record<string, unknown>): ParseResult {
  if (typeof input !== 'object' || input === null || Array.isArray(input)) {
    return reject('structure', { field: 'input' }, 'expected an object of Keplerian elements');
  }
  const obj = input as Record<string, unknown>;

  // Epoch.
  let epochUs: number;
  const epoch = obj.epoch;
  if (typeof epoch === 'number') {
    if (!Number.isFinite(epoch)) return reject('range', { field: 'epoch' }, `${String(epoch)} is not a finite time`);
    epochUs = epochUsFromMs(epoch);
  } else if (typeof epoch === 'string') {
    const p = parseEpochText(epoch);
    if (!p.ok) return reject('format', { field: 'epoch' }, p.reason);
    epochUs = p.epochUs;
  } else if (epoch === undefined || epoch === null) {
    return reject('missing', { field: 'epoch' }, 'the epoch is required (ISO 8601 UTC text or Unix milliseconds)');
  } else {
    return reject('format', { field: 'epoch' }, 'must be ISO 8601 text or Unix milliseconds');
  }

  // Size of the orbit: exactly one of three.
  const sizeKeys = ['semiMajorAxisKm', 'periodMin', 'meanMotionRevPerDay'] as const;
  const given: { key: (typeof sizeKeys)[number]; value: number }[] = [];
  for (const key of sizeKeys) {
    const r = numberField(obj, key);
    if (!r.ok) return r;
    if (r.value !== undefined) given.push({ key, value: r.value });
  }
  if (given.length === 0) {
    return reject('missing', { field: 'meanMotionRevPerDay' }, 'give one of semiMajorAxisKm, periodMin or meanMotionRevPerDay');
  }
  if (given.length > 1) {
    return reject('conflict', { field: given[1]?.key ?? 'periodMin' }, `give only one of semiMajorAxisKm, periodMin or meanMotionRevPerDay (got ${given.map((g) => g.key).join(' and ')})`);
  }
  const size = given[0] as { key: (typeof sizeKeys)[number]; value: number };
  if (!(size.value > 0)) return reject('range', { field: size.key }, `${size.value} must be greater than 0`);
  const meanMotion =
    size.key === 'semiMajorAxisKm'
      ? meanMotionFromSemiMajorAxis(size.value)
      : size.key === 'periodMin'
        ? meanMotionFromPeriod(size.value)
        : size.value;

  const required = ['eccentricity', 'inclinationDeg', 'raanDeg', 'argPerigeeDeg', 'meanAnomalyDeg'] as const;
  const optional = ['bstar', 'meanMotionDot', 'meanMotionDdot', 'elementSetNo', 'revAtEpoch'] as const;
  const v: Record<string, number> = {};
  for (const key of required) {
    const r = numberField(obj, key);
    if (!r.ok) return r;
    if (r.value === undefined) return reject('missing', { field: key }, 'is required');
    v[key] = r.value;
  }
  for (const key of optional) {
    const r = numberField(obj, key);
    if (!r.ok) return r;
    v[key] = r.value ?? 0;
  }

  const name = obj.name === undefined || obj.name === null ? '' : obj.name;
  if (typeof name !== 'string') return reject('format', { field: 'name' }, 'must be text');
  if (firstControlChar(name) >= 0) return reject('format', { field: 'name' }, 'holds a control character');
  const cat = obj.catalogNumber;
  let catalogNumber = '';
  if (cat !== undefined && cat !== null && cat !== '') {
    const t = typeof cat === 'number' ? (Number.isInteger(cat) ? String(cat) : '') : typeof cat === 'string' ? cat.trim() : '';
    if (!/^\d{1,9}$/.test(t)) return reject('format', { field: 'catalogNumber' }, 'must be a whole number (up to nine digits)');
    catalogNumber = t;
  }
  const classification = obj.classification === undefined ? 'U' : obj.classification;
  if (typeof classification !== 'string') return reject('format', { field: 'classification' }, 'must be U, C or S');
  const designator = obj.intlDesignator === undefined || obj.intlDesignator === null ? '' : obj.intlDesignator;
  if (typeof designator !== 'string' || (designator.trim() !== '' && !TLE_DESIGNATOR.test(designator.trim()))) {
    return reject('format', { field: 'intlDesignator' }, 'must be an international designator in TLE form (e.g. 98067A)');
  }

  const candidate: Candidate = {
    name: name.trim(),
    catalogNumber,
    classification: classification.toUpperCase(),
    intlDesignator: designator.trim(),
    epochUs,
    meanMotionRevPerDay: meanMotion,
    eccentricity: v.eccentricity ?? NaN,
    inclinationDeg: v.inclinationDeg ?? NaN,
    raanDeg: v.raanDeg ?? NaN,
    argPerigeeDeg: v.argPerigeeDeg ?? NaN,
    meanAnomalyDeg: v.meanAnomalyDeg ?? NaN,
    bstar: v.bstar ?? 0,
    meanMotionDot: v.meanMotionDot ?? 0,
    meanMotionDdot: v.meanMotionDdot ?? 0,
    ephemerisType: 0,
    elementSetNo: v.elementSetNo ?? 0,
    revAtEpoch: v.revAtEpoch ?? 0,
  };
  const locate = (f: CandidateField): FieldLocation => ({
    field: f === 'epochUs' ? 'epoch' : f === 'meanMotionRevPerDay' ? size.key : f,
  });
  const bad = checkRanges(candidate, locate, { maxCatalog: MAX_OMM_CATALOG, maxRevAtEpoch: 999_999_999 });
  if (bad) {
    if (bad.field === size.key && size.key !== 'meanMotionRevPerDay') {
      return { ...bad, message: `${bad.message} (from ${size.key} ${size.value})` };
    }
    return bad;
  }
  return { ok: true, elementSet: toElementSet(candidate, 'kepler') };
}

