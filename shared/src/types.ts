/**
 * Core types of the Nadirline orbit engine. Units are in the names: Deg, Km, KmS, Min, Ms.
 * Times are Unix milliseconds (number, may carry a fraction for microseconds) or ISO 8601 UTC.
 */

/** A failure that the type system shows. `code` is stable and machine-readable. */
export interface Failure<C extends string = string> {
  ok: false;
  code: C;
  message: string;
}
export type Result<T, C extends string = string> = ({ ok: true } & T) | Failure<C>;

/** Where an element set came from. */
export type ElementSetSource = 'tle' | 'omm-kvn' | 'omm-xml' | 'omm-json' | 'kepler';

/**
 * One mean element set (SGP4 theory), whatever format it arrived in.
 * Angles in degrees, mean motion in revolutions per day (Kozai mean motion as in TLE / OMM).
 */
export interface ElementSet {
  source: ElementSetSource;
  /** Object name (TLE line 0 or OMM OBJECT_NAME); may be empty. */
  name: string;
  /** Catalog number as a decimal string without Alpha-5 letters, e.g. "5", "25544", "100000". */
  catalogNumber: string;
  /** U, C or S. */
  classification: string;
  /** International designator in TLE form (e.g. "98067A") or empty. */
  intlDesignator: string;
  /** Epoch, Unix milliseconds UTC; the fraction holds microseconds. */
  epochMs: number;
  /** Epoch as ISO 8601 UTC with six decimals, e.g. "2000-06-27T18:50:19.733568Z". */
  epochIso: string;
  meanMotionRevPerDay: number;
  eccentricity: number;
  inclinationDeg: number;
  raanDeg: number;
  argPerigeeDeg: number;
  meanAnomalyDeg: number;
  /** B* drag term, 1/earth radii. */
  bstar: number;
  /** First derivative of mean motion divided by 2, rev/day^2 (TLE convention). */
  meanMotionDot: number;
  /** Second derivative of mean motion divided by 6, rev/day^3 (TLE convention). */
  meanMotionDdot: number;
  ephemerisType: number;
  elementSetNo: number;
  revAtEpoch: number;
}

/** Where a problem sits in the submitted text (1-based). */
export interface TextLocation {
  line: number;
  column: number;
}

/** Why an element set (or one field of it) was rejected. */
export interface ElementSetError {
  ok: false;
  code: string;
  /** Field name in our vocabulary or the format's keyword (e.g. "eccentricity", "MEAN_MOTION", "checksum"). */
  field: string;
  /** 1-based line and column in the submitted text, where the format has them. */
  line?: number;
  column?: number;
  message: string;
}

export type ParseResult = { ok: true; elementSet: ElementSet } | ElementSetError;

/** One entry of a file holding many element sets. */
export interface ParsedEntry {
  /** 1-based index of the entry in the file. */
  index: number;
  /** 1-based first line of the entry in the file. */
  line: number;
  result: ParseResult;
}

/** Geodetic point. */
export interface GeoPoint {
  latDeg: number;
  lonDeg: number;
}

/** One ground-track sample. */
export interface TrackSample {
  /** Unix ms. */
  t: number;
  lat: number;
  lon: number;
  altKm: number;
  sunlit: boolean;
}
