/**
 * Element sets: TLE, CCSDS OMM (KVN, XML, JSON) and Keplerian input in, one ElementSet type
 * through, TLE and OMM out, and a precise satellite.js SatRec for SGP4.
 */
export { parseTle, toTle, canExportTle, tleChecksum, decodeAlpha5, encodeAlpha5 } from './tle.ts';
export { parseOmmKvn, toOmmKvn } from './omm-kvn.ts';
export { parseOmmXml, parseOmmXmlMany, toOmmXml, toNdmXml } from './omm-xml.ts';
export { parseOmmJson, toOmmJson } from './omm-json.ts';
export type { OmmExportOptions } from './omm-common.ts';
export {
  fromKeplerian,
  meanMotionFromSemiMajorAxis,
  semiMajorAxisFromMeanMotion,
  meanMotionFromPeriod,
} from './kepler.ts';
export type { KeplerianInput } from './kepler.ts';
export { parseElementSets, parseElementSet, readElementSets, detectElementSetFormat } from './detect.ts';
export type { ElementSetsRead, ReadElementSetsOptions } from './detect.ts';
export { toSatrec } from './satrec.ts';
export type { ElementSetErrorCode } from './errors.ts';
export { MIN_MEAN_MOTION, MAX_MEAN_MOTION, MAX_TLE_CATALOG, MAX_OMM_CATALOG } from './validate.ts';
/** AIAA 2006-6753 verification sets and their published states (for tests across packages). */
export { AIAA_2006_6753_CASES } from './verification-cases.ts';
export type { VerificationCase, VerificationState } from './verification-cases.ts';
