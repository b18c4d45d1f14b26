/**
 * Test support: write invented mean elements as a two-line element set (columns and checksum
 * as AIAA 2006-6753 Appendix B, references.md) so tests can build satrecs with satellite.js
 * twoline2satrec. Only for tests and benchmarks.
 */
import { twoline2satrec } from 'satellite.js';
import type { SatRec } from 'satellite.js';

export interface SynthElements {
  /** Epoch, Unix ms. */
  epochMs: number;
  inclinationDeg: number;
  raanDeg: number;
  eccentricity: number;
  argPerigeeDeg: number;
  meanAnomalyDeg: number;
  meanMotionRevPerDay: number;
  bstar?: number;
  catalogNumber?: number;
}

/** TLE checksum: digits count their value, '-' counts 1, modulo 10 (references.md). */
export function tleChecksum(line68: string): number {
  let sum = 0;
  for (const ch of line68.slice(0, 68)) {
    if (ch >= '0' && ch <= '9') sum += ch.charCodeAt(0) - 48;
    else if (ch === '-') sum += 1;
  }
  return sum % 10;
}

function expField(x: number): string {
  // Assumed-decimal mantissa with exponent, 8 columns: " 12345-4" = 0.12345e-4.
  if (x === 0) return ' 00000-0';
  const sign = x < 0 ? '-' : ' ';
  let exp = Math.floor(Math.log10(Math.abs(x))) + 1;
  let mant = Math.round((Math.abs(x) / 10 ** exp) * 1e5);
  if (mant >= 100000) {
    mant = 10000;
    exp += 1;
  }
  return `${sign}${String(mant).padStart(5, '0')}${exp < 0 ? '-' : '+'}${Math.abs(exp)}`;
}

const fix = (x: number, w: number, d: number): string => x.toFixed(d).padStart(w, ' ');

/** The two lines of a TLE for invented elements. */
export function synthTle(el: SynthElements): [string, string] {
  const d = new Date(el.epochMs);
  const year = d.getUTCFullYear();
  const dayOfYear = (el.epochMs - Date.UTC(year, 0, 1)) / 86_400_000 + 1;
  const cat = String(el.catalogNumber ?? 90001).padStart(5, '0');
  const epoch = `${String(year % 100).padStart(2, '0')}${dayOfYear.toFixed(8).padStart(12, '0')}`;
  const l1 = `1 ${cat}U 26001A   ${epoch}  .00000000  00000-0 ${expField(el.bstar ?? 0)} 0  999`;
  const ecc = Math.round(el.eccentricity * 1e7).toString().padStart(7, '0');
  const l2 =
    `2 ${cat} ${fix(el.inclinationDeg, 8, 4)} ${fix(el.raanDeg, 8, 4)} ${ecc} ` +
    `${fix(el.argPerigeeDeg, 8, 4)} ${fix(el.meanAnomalyDeg, 8, 4)} ${fix(el.meanMotionRevPerDay, 11, 8)}    1`;
  return [`${l1}${tleChecksum(l1)}`, `${l2}${tleChecksum(l2)}`];
}

/** satellite.js satrec of invented elements. */
export function synthSatrec(el: SynthElements): SatRec {
  const [l1, l2] = synthTle(el);
  return twoline2satrec(l1, l2);
}
