/**
 * Test support: the element sets the orbit tests use. The four verification sets are quoted
 * from AIAA 2006-6753 Appendix D (references.md); the rest are invented for Nadirline's tests.
 */
import { twoline2satrec } from 'satellite.js';
import type { SatRec } from 'satellite.js';
import { synthSatrec } from './synth-tle.ts';
import type { SynthElements } from './synth-tle.ts';

/** AIAA 2006-6753 Appendix D test element sets (references.md). */
export const VERIFICATION_TLES = {
  '00005': [
    '1 00005U 58002B   00179.78495062  .00000023  00000-0  28098-4 0  4753',
    '2 00005  34.2682 348.7242 1859667 331.7664  19.3264 10.82419157413667',
  ],
  '28129': [
    '1 28129U 03058A   06175.57071136 -.00000104  00000-0  10000-3 0   459',
    '2 28129  54.7298 324.8098 0048506 266.2640  93.1663  2.00562768 18443',
  ],
  '11801': [
    '1 11801U          80230.29629788  .01431103  00000-0  14311-1      13',
    '2 11801  46.7916 230.4354 7318036  47.4722  10.4117  2.28537848    13',
  ],
  '88888': [
    '1 88888U          80275.98708465  .00073094  13844-3  66816-4 0    87',
    '2 88888  72.8435 115.9689 0086731  52.6988 110.5714 16.05824518  1058',
  ],
} as const satisfies Record<string, readonly [string, string]>;

export function verificationSatrec(id: keyof typeof VERIFICATION_TLES): SatRec {
  const [l1, l2] = VERIFICATION_TLES[id];
  return twoline2satrec(l1, l2);
}

/** Epoch of the invented sets: 2026-03-20T00:00:00Z. */
export const TEST_EPOCH_MS = Date.UTC(2026, 2, 20);

/** Invented orbits of the kinds the pass finder must handle. */
export const TEST_ORBITS = {
  /** Low, inclined, about 420 km (ISS-like). */
  lowInclined: {
    epochMs: TEST_EPOCH_MS,
    inclinationDeg: 51.64,
    raanDeg: 120.5,
    eccentricity: 0.0005,
    argPerigeeDeg: 80,
    meanAnomalyDeg: 280,
    meanMotionRevPerDay: 15.5,
    bstar: 0.0002,
  },
  /** Sun-synchronous polar, about 700 km. */
  polar: {
    epochMs: TEST_EPOCH_MS,
    inclinationDeg: 98.2,
    raanDeg: 10,
    eccentricity: 0.0012,
    argPerigeeDeg: 90,
    meanAnomalyDeg: 270,
    meanMotionRevPerDay: 14.57,
    bstar: 0.00005,
  },
  /** Twelve-hour, highly eccentric (Molniya-like). */
  eccentric: {
    epochMs: TEST_EPOCH_MS,
    inclinationDeg: 63.4,
    raanDeg: 200,
    eccentricity: 0.72,
    argPerigeeDeg: 270,
    meanAnomalyDeg: 30,
    meanMotionRevPerDay: 2.00613,
    bstar: 0,
  },
  /** Geostationary; where it stands depends on RAAN + argument of perigee + mean anomaly. */
  geostationary: {
    epochMs: TEST_EPOCH_MS,
    inclinationDeg: 0.02,
    raanDeg: 90,
    eccentricity: 0.0002,
    argPerigeeDeg: 0,
    meanAnomalyDeg: 0,
    meanMotionRevPerDay: 1.00273791,
    bstar: 0,
  },
} as const satisfies Record<string, SynthElements>;

export type TestOrbitName = keyof typeof TEST_ORBITS;

export function testSatrec(name: TestOrbitName): SatRec {
  return synthSatrec(TEST_ORBITS[name]);
}
