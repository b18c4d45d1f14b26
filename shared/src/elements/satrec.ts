/**
 * SatRec for satellite.js from any element set, without the two json2satrec traps of
 * references.md: an ordinal-day EPOCH ("2007-064T10:34:41.4264") gives NaN positions, and the
 * epoch is cut to whole milliseconds.
 *
 * satellite.js 7.1.0 does not export sgp4init, so the set goes through json2satrec with every
 * element at full precision and the epoch as a calendar string rounded to the millisecond; the
 * satrec's epoch fields are then set to the exact epoch. Initialisation used the rounded epoch
 * only for Greenwich sidereal time and the Sun and Moon terms of deep-space orbits: half a
 * millisecond moves those by about 4e-8 rad, which measured under 0.05 mm over three days on
 * the AIAA 2006-6753 deep-space cases and nothing on the near-earth ones (satrec.spec.ts holds
 * it below 1e-6 km). Propagate with tsince = (t - es.epochMs) / 60000 minutes to keep the
 * microseconds: satrec.jdsatepoch, one double near 2.45e6, resolves only about 40 us.
 */
import { json2satrec } from 'satellite.js';
import type { OMMJsonObject, SatRec } from 'satellite.js';
import type { ElementSet } from '../types.ts';
import { US_PER_DAY, epochParts, epochUsFromMs, formatEpochCalendar, julianDateFromMs, unixDay } from './epoch.ts';
import { objectIdFromDesignator } from './validate.ts';

export function toSatrec(es: ElementSet): SatRec {
  const epochUs = epochUsFromMs(es.epochMs);
  const wholeMsUs = Math.round(epochUs / 1000) * 1000;
  // Calendar form with three decimals: what json2satrec's Date can hold exactly.
  const epochText = formatEpochCalendar(wholeMsUs).slice(0, 23);
  const omm: OMMJsonObject = {
    OBJECT_NAME: es.name,
    OBJECT_ID: objectIdFromDesignator(es.intlDesignator),
    EPOCH: epochText,
    MEAN_MOTION: es.meanMotionRevPerDay,
    ECCENTRICITY: es.eccentricity,
    INCLINATION: es.inclinationDeg,
    RA_OF_ASC_NODE: es.raanDeg,
    ARG_OF_PERICENTER: es.argPerigeeDeg,
    MEAN_ANOMALY: es.meanAnomalyDeg,
    NORAD_CAT_ID: es.catalogNumber === '' ? 0 : es.catalogNumber,
    ELEMENT_SET_NO: es.elementSetNo,
    REV_AT_EPOCH: es.revAtEpoch,
    BSTAR: es.bstar,
    MEAN_MOTION_DOT: es.meanMotionDot,
    MEAN_MOTION_DDOT: es.meanMotionDdot,
  };
  const satrec = json2satrec(omm, 'i');
  // The exact epoch, as twoline2satrec would hold it: two-digit year, day of year with fraction, JD.
  const p = epochParts(epochUs);
  satrec.epochyr = p.year % 100;
  satrec.epochdays = (epochUs - unixDay(p.year, 1, 1) * US_PER_DAY) / US_PER_DAY + 1;
  satrec.jdsatepoch = julianDateFromMs(es.epochMs);
  return satrec;
}
