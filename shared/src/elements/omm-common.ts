/**
 * CCSDS Orbit Mean-Elements Message (OMM), shared by the KVN, XML and JSON bindings.
 * Keywords, mandatory items and the SGP4 rules from CCSDS 502.0-B-3 section 4.2 (tables 4-1 to
 * 4-3, 4.2.4.6); the flat JSON object of the same keywords is common practice.
 */
import type { ElementSet, ElementSetSource, ParseResult } from '../types.ts';
import { epochUsFromMs, formatEpochCalendar, parseEpochText } from './epoch.ts';
import { reject } from './errors.ts';
import type { FieldLocation } from './errors.ts';
import {
  DECIMAL,
  MAX_OMM_CATALOG,
  checkRanges,
  designatorFromObjectId,
  firstControlChar,
  objectIdFromDesignator,
  toElementSet,
} from './validate.ts';
import type { Candidate, CandidateField } from './validate.ts';

/** One keyword's value as found in a message, with where it was found. */
export interface OmmItem {
  value: string | number;
  /** Unit in brackets (KVN) or the units attribute (XML). */
  unit?: string;
  /** Position of the value. */
  line?: number;
  column?: number;
}

export type OmmSource = Extract<ElementSetSource, 'omm-kvn' | 'omm-xml' | 'omm-json'>;

export interface OmmContext {
  source: OmmSource;
  /** KVN and XML carry the whole header and metadata; the common flat JSON form may omit them. */
  requireHeader: boolean;
  /** Where the message starts (for keywords that are missing). */
  line?: number;
  column?: number;
}

export const HEADER_KEYWORDS = ['CCSDS_OMM_VERS', 'COMMENT', 'CLASSIFICATION', 'CREATION_DATE', 'ORIGINATOR', 'MESSAGE_ID'];
export const METADATA_KEYWORDS = [
  'OBJECT_NAME',
  'OBJECT_ID',
  'CENTER_NAME',
  'REF_FRAME',
  'REF_FRAME_EPOCH',
  'TIME_SYSTEM',
  'MEAN_ELEMENT_THEORY',
];
export const MEAN_ELEMENT_KEYWORDS = [
  'EPOCH',
  'SEMI_MAJOR_AXIS',
  'MEAN_MOTION',
  'ECCENTRICITY',
  'INCLINATION',
  'RA_OF_ASC_NODE',
  'ARG_OF_PERICENTER',
  'MEAN_ANOMALY',
  'GM',
];
export const SPACECRAFT_KEYWORDS = ['MASS', 'SOLAR_RAD_AREA', 'SOLAR_RAD_COEFF', 'DRAG_AREA', 'DRAG_COEFF'];
export const TLE_KEYWORDS = [
  'EPHEMERIS_TYPE',
  'CLASSIFICATION_TYPE',
  'NORAD_CAT_ID',
  'ELEMENT_SET_NO',
  'REV_AT_EPOCH',
  'BSTAR',
  'BTERM',
  'MEAN_MOTION_DOT',
  'MEAN_MOTION_DDOT',
  'AGOM',
];
const AXES = ['X', 'Y', 'Z', 'X_DOT', 'Y_DOT', 'Z_DOT'];
/** Lower triangle of the 6x6 covariance: CX_X, CY_X, CY_Y, ... CZ_DOT_Z_DOT. */
export const COVARIANCE_KEYWORDS = [
  'COV_REF_FRAME',
  ...AXES.flatMap((row, i) => AXES.slice(0, i + 1).map((c) => `C${row}_${c}`)),
];

const KNOWN = new Set([
  ...HEADER_KEYWORDS,
  ...METADATA_KEYWORDS,
  ...MEAN_ELEMENT_KEYWORDS,
  ...SPACECRAFT_KEYWORDS,
  ...TLE_KEYWORDS,
  ...COVARIANCE_KEYWORDS,
]);

export function isOmmKeyword(keyword: string): boolean {
  return KNOWN.has(keyword) || /^USER_DEFINED_[A-Z0-9_]+$/.test(keyword);
}

/** Units the standard fixes for the keywords SGP4 uses (CCSDS 502.0-B-3 tables 4-3 and 7-x). */
const UNITS: Record<string, string[]> = {
  MEAN_MOTION: ['rev/day'],
  INCLINATION: ['deg'],
  RA_OF_ASC_NODE: ['deg'],
  ARG_OF_PERICENTER: ['deg'],
  MEAN_ANOMALY: ['deg'],
  BSTAR: ['1/er'],
  MEAN_MOTION_DOT: ['rev/day**2', 'rev/day^2'],
  MEAN_MOTION_DDOT: ['rev/day**3', 'rev/day^3'],
};
export const UNIT_OF: Record<string, string> = {
  MEAN_MOTION: 'rev/day',
  INCLINATION: 'deg',
  RA_OF_ASC_NODE: 'deg',
  ARG_OF_PERICENTER: 'deg',
  MEAN_ANOMALY: 'deg',
  BSTAR: '1/ER',
  MEAN_MOTION_DOT: 'rev/day**2',
  MEAN_MOTION_DDOT: 'rev/day**3',
};

const FIELD_KEYWORD: Record<CandidateField, string> = {
  name: 'OBJECT_NAME',
  intlDesignator: 'OBJECT_ID',
  catalogNumber: 'NORAD_CAT_ID',
  classification: 'CLASSIFICATION_TYPE',
  epochUs: 'EPOCH',
  meanMotionRevPerDay: 'MEAN_MOTION',
  eccentricity: 'ECCENTRICITY',
  inclinationDeg: 'INCLINATION',
  raanDeg: 'RA_OF_ASC_NODE',
  argPerigeeDeg: 'ARG_OF_PERICENTER',
  meanAnomalyDeg: 'MEAN_ANOMALY',
  bstar: 'BSTAR',
  meanMotionDot: 'MEAN_MOTION_DOT',
  meanMotionDdot: 'MEAN_MOTION_DDOT',
  ephemerisType: 'EPHEMERIS_TYPE',
  elementSetNo: 'ELEMENT_SET_NO',
  revAtEpoch: 'REV_AT_EPOCH',
};

const STANDARD = 'CCSDS 502.0-B-3';

/** Turn the keyword values of one message into an element set, or the first reason it is not one. */
export function buildFromOmm(items: Map<string, OmmItem>, ctx: OmmContext): ParseResult {
  const startAt: FieldLocation = { field: '' };
  if (ctx.line !== undefined) startAt.line = ctx.line;
  if (ctx.column !== undefined) startAt.column = ctx.column;
  const where = (kw: string): FieldLocation => {
    const it = items.get(kw);
    if (!it) return { ...startAt, field: kw };
    const loc: FieldLocation = { field: kw };
    if (it.line !== undefined) loc.line = it.line;
    if (it.column !== undefined) loc.column = it.column;
    return loc;
  };
  const text = (kw: string): string | undefined => {
    const it = items.get(kw);
    return it === undefined ? undefined : String(it.value).trim();
  };

  const mandatory: [string, string][] = [];
  if (ctx.requireHeader) {
    for (const kw of ['CCSDS_OMM_VERS', 'CREATION_DATE', 'ORIGINATOR']) mandatory.push([kw, 'table 4-1 (header)']);
    for (const kw of ['OBJECT_NAME', 'OBJECT_ID', 'CENTER_NAME', 'REF_FRAME', 'TIME_SYSTEM', 'MEAN_ELEMENT_THEORY']) {
      mandatory.push([kw, 'table 4-2 (metadata)']);
    }
  }
  mandatory.push(['EPOCH', 'table 4-3 (mean elements)']);
  for (const [kw, where_] of mandatory) {
    const v = text(kw);
    if (v === undefined) return reject('missing', { ...startAt, field: kw }, `mandatory keyword is missing (${STANDARD} ${where_})`);
    if (v === '' && kw !== 'OBJECT_NAME') return reject('format', where(kw), 'has no value');
  }

  // Header and metadata checks, wherever they are given.
  const version = text('CCSDS_OMM_VERS');
  if (version !== undefined && !/^[123]\.0$/.test(version)) {
    return reject('unsupported', where('CCSDS_OMM_VERS'), `version "${version}" is not one Nadirline reads (1.0, 2.0 or 3.0)`);
  }
  const created = text('CREATION_DATE');
  if (created !== undefined) {
    const p = parseEpochText(created);
    if (!p.ok) return reject('format', where('CREATION_DATE'), p.reason);
  }
  const sgp4Rules: [string, string[], string][] = [
    ['CENTER_NAME', ['EARTH'], 'SGP4 elements are centred on the Earth'],
    ['REF_FRAME', ['TEME'], 'SGP4 elements are given in TEME'],
    ['TIME_SYSTEM', ['UTC'], 'SGP4 element-set epochs are UTC'],
    // "SGP/SGP4" is a spelling some producers use for the same theory (common practice).
    ['MEAN_ELEMENT_THEORY', ['SGP4', 'SGP/SGP4'], 'Nadirline propagates SGP4 mean elements'],
  ];
  for (const [kw, allowed, why] of sgp4Rules) {
    const v = text(kw);
    if (v !== undefined && !allowed.includes(v.toUpperCase())) {
      const extra = kw === 'MEAN_ELEMENT_THEORY' && v.toUpperCase() === 'SGP4-XP' ? ' (SGP4-XP needs its own propagator)' : '';
      return reject('unsupported', where(kw), `"${v}" is not accepted: ${why}, so it must be ${allowed[0]}${extra} (${STANDARD} 4.2.4.6)`);
    }
  }

  // Mean elements.
  if (!items.has('MEAN_MOTION')) {
    if (items.has('SEMI_MAJOR_AXIS')) {
      return reject('unsupported', where('SEMI_MAJOR_AXIS'), `SGP4 elements give MEAN_MOTION, not SEMI_MAJOR_AXIS (${STANDARD} 4.2.4.6)`);
    }
    return reject('missing', { ...startAt, field: 'MEAN_MOTION' }, `mandatory keyword is missing (${STANDARD} table 4-3; SGP4 needs MEAN_MOTION)`);
  }
  for (const kw of ['ECCENTRICITY', 'INCLINATION', 'RA_OF_ASC_NODE', 'ARG_OF_PERICENTER', 'MEAN_ANOMALY']) {
    if (!items.has(kw)) return reject('missing', { ...startAt, field: kw }, `mandatory keyword is missing (${STANDARD} table 4-3)`);
  }
  if (!items.has('BSTAR')) {
    if (items.has('BTERM')) {
      return reject('unsupported', where('BTERM'), 'BTERM belongs to SGP4-XP; SGP4 needs BSTAR');
    }
    return reject('missing', { ...startAt, field: 'BSTAR' }, `SGP4 needs the drag term BSTAR (${STANDARD} table 4-3, TLE parameters)`);
  }
  if (!items.has('MEAN_MOTION_DDOT') && items.has('AGOM')) {
    return reject('unsupported', where('AGOM'), 'AGOM belongs to SGP4-XP; SGP4 uses MEAN_MOTION_DDOT');
  }

  type Num = { ok: true; value: number } | ReturnType<typeof reject>;
  const num = (kw: string, fallback?: number): Num => {
    const it = items.get(kw);
    if (it === undefined) return { ok: true, value: fallback ?? 0 };
    let value: number;
    if (typeof it.value === 'number') value = it.value;
    else {
      const t = it.value.trim();
      if (!DECIMAL.test(t)) return reject('format', where(kw), `"${clipValue(t)}" is not a number`);
      value = Number(t);
    }
    if (!Number.isFinite(value)) return reject('range', where(kw), `${String(it.value)} is not a finite number`);
    const allowed = UNITS[kw];
    if (it.unit !== undefined && allowed && !allowed.includes(it.unit.replace(/\s+/g, '').toLowerCase())) {
      return reject('units', where(kw), `unit [${it.unit}] differs from the standard's [${allowed[0]}]`);
    }
    return { ok: true, value };
  };
  const int = (kw: string, maxDigits: number, fallback: number): Num => {
    const it = items.get(kw);
    if (it === undefined) return { ok: true, value: fallback };
    const t = typeof it.value === 'number' ? (Number.isInteger(it.value) ? String(it.value) : '') : it.value.trim();
    if (!new RegExp(`^\\d{1,${maxDigits}}$`).test(t)) {
      return reject('format', where(kw), `"${clipValue(String(it.value))}" must be a whole number of at most ${maxDigits} digits`);
    }
    return { ok: true, value: Number(t) };
  };

  const epochText = text('EPOCH') ?? '';
  const epoch = parseEpochText(epochText);
  if (!epoch.ok) return reject('format', where('EPOCH'), epoch.reason);

  const values: Record<string, number> = {};
  for (const kw of [
    'MEAN_MOTION',
    'ECCENTRICITY',
    'INCLINATION',
    'RA_OF_ASC_NODE',
    'ARG_OF_PERICENTER',
    'MEAN_ANOMALY',
    'BSTAR',
    'MEAN_MOTION_DOT',
    'MEAN_MOTION_DDOT',
  ]) {
    const r = num(kw);
    if (!r.ok) return r;
    values[kw] = r.value;
  }
  const ints: Record<string, number> = {};
  for (const [kw, digits] of [
    ['EPHEMERIS_TYPE', 1],
    ['NORAD_CAT_ID', 9],
    ['ELEMENT_SET_NO', 4],
    ['REV_AT_EPOCH', 9],
  ] as const) {
    const r = int(kw, digits, 0);
    if (!r.ok) return r;
    ints[kw] = r.value;
  }

  const name = text('OBJECT_NAME') ?? '';
  const badChar = firstControlChar(name);
  if (badChar >= 0) return reject('format', where('OBJECT_NAME'), 'holds a control character');
  const classification = (text('CLASSIFICATION_TYPE') ?? 'U').toUpperCase();

  const candidate: Candidate = {
    name,
    catalogNumber: items.has('NORAD_CAT_ID') ? String(ints.NORAD_CAT_ID) : '',
    classification,
    intlDesignator: designatorFromObjectId(text('OBJECT_ID') ?? ''),
    epochUs: epoch.epochUs,
    meanMotionRevPerDay: values.MEAN_MOTION ?? NaN,
    eccentricity: values.ECCENTRICITY ?? NaN,
    inclinationDeg: values.INCLINATION ?? NaN,
    raanDeg: values.RA_OF_ASC_NODE ?? NaN,
    argPerigeeDeg: values.ARG_OF_PERICENTER ?? NaN,
    meanAnomalyDeg: values.MEAN_ANOMALY ?? NaN,
    bstar: values.BSTAR ?? NaN,
    meanMotionDot: values.MEAN_MOTION_DOT ?? 0,
    meanMotionDdot: values.MEAN_MOTION_DDOT ?? 0,
    ephemerisType: ints.EPHEMERIS_TYPE ?? 0,
    elementSetNo: ints.ELEMENT_SET_NO ?? 0,
    revAtEpoch: ints.REV_AT_EPOCH ?? 0,
  };
  const bad = checkRanges(candidate, (f) => where(FIELD_KEYWORD[f]), {
    maxCatalog: MAX_OMM_CATALOG,
    maxRevAtEpoch: 999_999_999,
  });
  if (bad) return bad;
  return { ok: true, elementSet: toElementSet(candidate, ctx.source) };
}

function clipValue(s: string): string {
  return s.length > 40 ? `${s.slice(0, 40)}...` : s;
}

// ---------------------------------------------------------------------------------------------
// Export

export interface OmmExportOptions {
  /** CREATION_DATE: ISO text or Unix ms. Defaults to the time of the call. */
  creationDate?: string | number;
  /** ORIGINATOR. Defaults to "NADIRLINE". */
  originator?: string;
}

/** A real number in the shortest text that reads back to the same double ("1.0E-7" style exponents). */
export function formatReal(x: number): string {
  const s = String(x);
  const e = s.indexOf('e');
  if (e < 0) return s;
  const mantissa = s.slice(0, e);
  return `${mantissa.includes('.') ? mantissa : `${mantissa}.0`}E${s.slice(e + 1)}`;
}

function creationDateText(opt: OmmExportOptions): string {
  const c = opt.creationDate;
  if (typeof c === 'string') {
    const p = parseEpochText(c);
    if (p.ok) return formatEpochCalendar(p.epochUs);
    throw new RangeError(`creationDate "${c}" is not an ISO 8601 / CCSDS time`);
  }
  const ms = typeof c === 'number' ? c : Date.now();
  return formatEpochCalendar(epochUsFromMs(ms));
}

export type OmmField = { keyword: string; value: string | number; unit?: string };

/** The keywords of one message in the standard's order, grouped by section. */
export function ommSections(
  es: ElementSet,
  opt: OmmExportOptions = {},
): { header: OmmField[]; metadata: OmmField[]; meanElements: OmmField[]; tleParameters: OmmField[] } {
  const header: OmmField[] = [
    { keyword: 'CCSDS_OMM_VERS', value: '3.0' },
    { keyword: 'CREATION_DATE', value: creationDateText(opt) },
    { keyword: 'ORIGINATOR', value: opt.originator ?? 'NADIRLINE' },
  ];
  const metadata: OmmField[] = [
    // The standard requires a name and an identifier; "UNKNOWN" stands in for none (common practice).
    { keyword: 'OBJECT_NAME', value: es.name === '' ? 'UNKNOWN' : es.name },
    { keyword: 'OBJECT_ID', value: objectIdFromDesignator(es.intlDesignator) },
    { keyword: 'CENTER_NAME', value: 'EARTH' },
    { keyword: 'REF_FRAME', value: 'TEME' },
    { keyword: 'TIME_SYSTEM', value: 'UTC' },
    { keyword: 'MEAN_ELEMENT_THEORY', value: 'SGP4' },
  ];
  const meanElements: OmmField[] = [
    { keyword: 'EPOCH', value: formatEpochCalendar(epochUsFromMs(es.epochMs)) },
    { keyword: 'MEAN_MOTION', value: es.meanMotionRevPerDay, unit: UNIT_OF.MEAN_MOTION },
    { keyword: 'ECCENTRICITY', value: es.eccentricity },
    { keyword: 'INCLINATION', value: es.inclinationDeg, unit: 'deg' },
    { keyword: 'RA_OF_ASC_NODE', value: es.raanDeg, unit: 'deg' },
    { keyword: 'ARG_OF_PERICENTER', value: es.argPerigeeDeg, unit: 'deg' },
    { keyword: 'MEAN_ANOMALY', value: es.meanAnomalyDeg, unit: 'deg' },
  ];
  const tleParameters: OmmField[] = [
    { keyword: 'EPHEMERIS_TYPE', value: es.ephemerisType },
    { keyword: 'CLASSIFICATION_TYPE', value: es.classification || 'U' },
  ];
  if (es.catalogNumber !== '') tleParameters.push({ keyword: 'NORAD_CAT_ID', value: Number(es.catalogNumber) });
  tleParameters.push(
    { keyword: 'ELEMENT_SET_NO', value: es.elementSetNo },
    { keyword: 'REV_AT_EPOCH', value: es.revAtEpoch },
    { keyword: 'BSTAR', value: es.bstar, unit: UNIT_OF.BSTAR },
    { keyword: 'MEAN_MOTION_DOT', value: es.meanMotionDot, unit: UNIT_OF.MEAN_MOTION_DOT },
    { keyword: 'MEAN_MOTION_DDOT', value: es.meanMotionDdot, unit: UNIT_OF.MEAN_MOTION_DDOT },
  );
  return { header, metadata, meanElements, tleParameters };
}

export function fieldText(f: OmmField): string {
  return typeof f.value === 'number' ? formatReal(f.value) : f.value;
}
