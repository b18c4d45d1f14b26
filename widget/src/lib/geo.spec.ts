import { describe, expect, it } from 'vitest';
import { footprintAngleDeg, speedKmS } from './geo.ts';

describe('footprintAngleDeg', () => {
  // values computed from Wertz, SMAD section 5.2 with Re = 6378.137 km (references.md)
  it.each([
    [400, 0, 19.7821],
    [400, 10, 12.0753],
    [35786, 0, 81.2995],
    [35786, 5, 76.3329],
  ])('gives %f km at %f degrees minimum elevation a central angle of %f degrees', (h, eps, lambda) => {
    expect(footprintAngleDeg(h, eps)).toBeCloseTo(lambda, 3);
  });
});

describe('speedKmS', () => {
  it('gives the circular speed of a 400 km orbit, about 7.67 km/s (vis-viva, common practice)', () => {
    expect(speedKmS(400, 6378.137 + 400)).toBeCloseTo(7.669, 2);
  });
});
