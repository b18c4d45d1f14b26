import { describe, expect, it } from 'vitest';
import { engineProblem } from './errors.ts';

describe('engine failures as problems', () => {
  it('a decayed object is its own problem, with a hint to upload a fresh set', () => {
    const p = engineProblem('decayed', 'the orbit has decayed', 'Lumen-2');
    expect(p.code).toBe('decayed');
    expect(p.detail).toBe('Lumen-2: the orbit has decayed. Upload a fresh element set if the object is still in orbit.');
    expect(p.extras).toEqual({ reason: 'decayed' });
  });

  it('a time far from the epoch says to ask nearer it', () => {
    const p = engineProblem('too-far-from-epoch', 'the time is 40 days from the epoch', 'Lumen-2');
    expect(p.code).toBe('propagation-failed');
    expect(p.detail).toContain('Ask for a time nearer the element set\u2019s epoch');
    expect(p.extras['reason']).toBe('too-far-from-epoch');
  });

  it('any other engine failure is a propagation failure without a hint', () => {
    const p = engineProblem('eccentricity-out-of-range', 'the eccentricity left [0, 1)', 'Lumen-2');
    expect(p.code).toBe('propagation-failed');
    expect(p.detail).toBe('Lumen-2: the eccentricity left [0, 1).');
  });
});
