/**
 * The continuity check the server stores and answers is exactly the contract's `continuitySchema`:
 * both branches of the union, no field more or less (the schema strips unknown keys, so a field
 * the contract does not declare makes the parsed copy differ).
 */
import { describe, expect, it } from 'vitest';
import { fromKeplerian, type ElementSet } from '@nadirline/shared';
import { continuitySchema } from '@nadirline/shared/contract';
import { continuityOf } from './satellites.ts';

function leo(epoch: string, semiMajorAxisKm = 6378.137 + 520): ElementSet {
  const r = fromKeplerian({ epoch, name: 'CONTINUITY TEST', catalogNumber: '99811', semiMajorAxisKm, eccentricity: 0.001, inclinationDeg: 97.5, raanDeg: 30, argPerigeeDeg: 90, meanAnomalyDeg: 10, bstar: 0 });
  if (!r.ok) throw new Error(r.message);
  return r.elementSet;
}

describe('continuityOf', () => {
  it('writes a checked continuity with every figure the contract declares', () => {
    const previous = { id: 'es_prev', elementSet: leo('2031-01-01T00:00:00Z') };
    const c = continuityOf(previous, leo('2031-01-01T12:00:00Z', 6378.137 + 540));
    expect(c.classification).toBe('manoeuvre');
    expect(continuitySchema.parse(c)).toEqual(c);
    if (c.classification === 'not-checked') throw new Error('expected figures');
    expect(c.previousElementSetId).toBe('es_prev');
    expect(c.spanDays).toBe(0.5);
    expect(Math.abs(c.semiMajorAxisChangeKm - 20)).toBeLessThan(0.01);
  });

  it('writes not-checked with the reason only when the previous set cannot reach the epoch', () => {
    const previous = { id: 'es_old', elementSet: leo('2029-01-01T00:00:00Z') };
    const c = continuityOf(previous, leo('2031-01-01T00:00:00Z'));
    expect(c.classification).toBe('not-checked');
    expect(continuitySchema.parse(c)).toEqual(c);
    expect(Object.keys(c).sort()).toEqual(['classification', 'previousElementSetId', 'previousEpoch', 'reason', 'spanDays', 'summary']);
    expect(c.reason).toMatch(/could not be carried/);
  });
});
