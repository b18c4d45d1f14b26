/** Continuity checks of element sets in plain words, the same in the report, the history table and the chart. */
import type { Continuity } from '../api/types.ts';

export type ContinuityClass = Continuity['classification'];

export const CONTINUITY_LABELS: Record<ContinuityClass, string> = {
  continues: 'Continues the orbit',
  manoeuvre: 'Orbit raised or lowered (manoeuvre likely)',
  'does-not-continue': 'Does not continue (check the catalog number and the source)',
  'not-checked': 'Not checked',
};

/** Short badge text; the full label goes in the title and for screen readers. */
export const CONTINUITY_SHORT: Record<ContinuityClass, string> = {
  continues: 'Continues',
  manoeuvre: 'Manoeuvre likely',
  'does-not-continue': 'Does not continue',
  'not-checked': 'Not checked',
};

/** Badge tone per class (classes of the console's badge styles). */
export const CONTINUITY_TONE: Record<ContinuityClass, string> = {
  continues: 'ok',
  manoeuvre: 'warn',
  'does-not-continue': 'bad',
  'not-checked': '',
};

const km = (v: number | undefined) => (v === undefined ? '—' : `${Math.abs(v) < 10 ? v.toFixed(2) : v.toFixed(1)} km`);

/** One sentence of figures: "4.2 km apart (radial 0.1, along-track -4.2, cross-track 0.0 km; 0.6 s along the track); a +0.02 km". */
export function continuityFigures(c: Continuity): string {
  if (c.classification === 'not-checked') return c.reason;
  const s = c.alongTrackTimingS ?? 0;
  return (
    `${km(c.positionDifferenceKm)} from the previous set's prediction ` +
    `(radial ${km(c.radialKm)}, along-track ${km(c.alongTrackKm)}, cross-track ${km(c.crossTrackKm)}; ${Math.abs(s).toFixed(1)} s ${s >= 0 ? 'behind' : 'ahead of'} it along the track). ` +
    `Semi-major axis ${signed(c.semiMajorAxisChangeKm, 2)} km, eccentricity ${signed(c.eccentricityChange, 5)}, inclination ${signed(c.inclinationChangeDeg, 3)}°, RAAN ${signed(c.raanChangeDeg, 3)}°.`
  );
}

function signed(v: number | undefined, digits: number): string {
  if (v === undefined) return '—';
  return `${v >= 0 ? '+' : '−'}${Math.abs(v).toFixed(digits)}`;
}
