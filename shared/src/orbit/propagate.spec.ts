import { twoline2satrec } from 'satellite.js';
import { describe, expect, it } from 'vitest';
import { MAX_PROPAGATION_SPAN_DAYS, MS_PER_DAY } from './constants.ts';
import { propagateAt, satrecEpochMs } from './propagate.ts';
import type { PropagationErrorCode } from './propagate.ts';
import { verificationSatrec } from './testing/orbits.ts';
import type { VERIFICATION_TLES } from './testing/orbits.ts';
import { synthSatrec } from './testing/synth-tle.ts';

type Row = [keyof typeof VERIFICATION_TLES, number, [number, number, number], [number, number, number]];
// AIAA 2006-6753 (Rev 3) Appendix E, TEME km and km/s (references.md).
const rows: Row[] = [
  ['00005', 0, [7022.46529266, -1400.08296755, 0.03995155], [1.893841015, 6.405893759, 4.53480725]],
  ['00005', 360, [-7154.03120202, -3783.17682504, -3536.19412294], [4.741887409, -4.151817765, -2.093935425]],
  ['28129', 0, [21707.46412351, -15318.6175239, 0.13551152], [1.304029214, 1.816904974, 3.161919976]],
  ['11801', 0, [7473.37102491, 428.94748312, 5828.74846783], [5.107155391, 6.444680305, -0.186133297]],
  ['88888', 0, [2328.96975262, -5995.22051338, 1719.97297192], [2.912073281, -0.983417956, -7.09081621]],
];

describe('propagateAt', () => {
  it.each(rows)(
    'reproduces the SGP4 verification set %s at %i min (AIAA 2006-6753 Appendix E) within 1 mm and 1e-8 km/s',
    (id, minutes, r, v) => {
      const satrec = verificationSatrec(id);
      const res = propagateAt(satrec, satrecEpochMs(satrec) + minutes * 60_000);
      expect(res.ok).toBe(true);
      if (!res.ok) return;
      const p = res.positionEciKm;
      const w = res.velocityEciKmS;
      expect(Math.hypot(p.x - r[0], p.y - r[1], p.z - r[2])).toBeLessThan(1e-6);
      expect(Math.hypot(w.x - v[0], w.y - v[1], w.z - v[2])).toBeLessThan(1e-8);
      expect(res.speedKmS).toBeCloseTo(Math.hypot(...v), 7);
    },
  );

  it('gives the geodetic point, height and time of the state', () => {
    const satrec = verificationSatrec('00005');
    const t = satrecEpochMs(satrec) + 3_600_000;
    const res = propagateAt(satrec, t);
    if (!res.ok) throw new Error(res.message);
    expect(res.t).toBe(t);
    expect(Math.abs(res.latDeg)).toBeLessThanOrEqual(34.3 + 0.2); // never above the inclination (common practice)
    expect(res.lonDeg).toBeGreaterThanOrEqual(-180);
    expect(res.lonDeg).toBeLessThan(180);
    expect(res.altKm).toBeGreaterThan(400);
  });

  // Element sets invented for these tests; each drives satellite.js's SGP4 into one error.
  const failing: [PropagationErrorCode, string, string, number][] = [
    [
      'mean-eccentricity',
      '1 90001U 26001A   26079.00000000  .00000000  00000-0  98216-2 0  9991',
      '2 90001 149.0071  45.1315 2885056 247.8439 312.5690 10.88746640    15',
      300,
    ],
    [
      'mean-motion',
      '1 90001U 26001A   26079.00000000  .00000000  00000-0  89500-1 0  9996',
      '2 90001  22.5330 345.3490 9999728 171.5327  70.7296  1.98425591    10',
      -100,
    ],
    [
      'perturbed-eccentricity',
      '1 90001U 26001A   26079.00000000  .00000000  00000-0 -62615-1 0  9995',
      '2 90001   0.4206  99.2586 9999626 325.3007   8.9973  1.27857220    14',
      100,
    ],
    [
      'semi-latus-rectum',
      '1 90001U 26001A   26079.00000000  .00000000  00000-0  28982-3 0  9995',
      '2 90001 124.0166 252.7944 9961262 343.5894 306.4571  5.27371735    13',
      0.1,
    ],
    [
      'decayed',
      '1 90001U 26001A   26079.00000000  .00000000  00000-0  10000-1 0  9995',
      '2 90001  51.6000  10.0000 0010000   0.0000   0.0000 15.50000000    18',
      60,
    ],
    [
      'decayed',
      '1 90001U 26001A   26079.00000000  .00000000  00000-0  10000-1 0  9995',
      '2 90001  51.6000  10.0000 0010000   0.0000   0.0000 15.50000000    18',
      200,
    ],
  ];
  it.each(failing)('answers %s for an element set that SGP4 cannot carry (day %s)', (code, l1, l2, days) => {
    const satrec = twoline2satrec(l1, l2);
    const res = propagateAt(satrec, satrecEpochMs(satrec) + days * MS_PER_DAY);
    expect(res.ok).toBe(false);
    if (res.ok) return;
    expect(res.code).toBe(code);
    expect(res.message.length).toBeGreaterThan(10);
  });

  it('refuses times more than the documented span from epoch, on either side', () => {
    const satrec = verificationSatrec('00005');
    const epoch = satrecEpochMs(satrec);
    const limit = MAX_PROPAGATION_SPAN_DAYS * MS_PER_DAY;
    expect(propagateAt(satrec, epoch + limit).ok).toBe(true);
    for (const t of [epoch + limit + 1, epoch - limit - 1, epoch + 1e6 * MS_PER_DAY]) {
      const res = propagateAt(satrec, t);
      expect(res.ok ? 'ok' : res.code).toBe('too-far-from-epoch');
    }
  });

  it('refuses a time that is not a finite number', () => {
    const satrec = verificationSatrec('00005');
    for (const t of [Number.NaN, Number.POSITIVE_INFINITY]) {
      const res = propagateAt(satrec, t);
      expect(res.ok ? 'ok' : res.code).toBe('invalid-time');
    }
  });

  it('never puts a NaN in an ok result, over a thousand random element sets and times', () => {
    let seed = 7;
    const rnd = (): number => {
      seed = (seed * 16807) % 2147483647;
      return seed / 2147483647;
    };
    const epochMs = Date.UTC(2026, 2, 20);
    const codes = new Set<string>();
    let ok = 0;
    for (let i = 0; i < 1000; i++) {
      const satrec = synthSatrec({
        epochMs,
        inclinationDeg: rnd() * 180,
        raanDeg: rnd() * 360,
        eccentricity: Math.min(0.9999999, rnd() ** 0.5),
        argPerigeeDeg: rnd() * 360,
        meanAnomalyDeg: rnd() * 360,
        meanMotionRevPerDay: 0.5 + rnd() * 16.5,
        bstar: (rnd() - 0.3) * 10 ** (-6 + rnd() * 6),
      });
      for (const days of [0, 0.3, 7, 90, -30]) {
        const res = propagateAt(satrec, epochMs + days * MS_PER_DAY);
        if (!res.ok) {
          codes.add(res.code);
          continue;
        }
        ok++;
        const values = [
          res.latDeg, res.lonDeg, res.altKm, res.speedKmS,
          res.positionEciKm.x, res.positionEciKm.y, res.positionEciKm.z,
          res.velocityEciKmS.x, res.velocityEciKmS.y, res.velocityEciKmS.z,
        ];
        expect(values.every(Number.isFinite)).toBe(true);
      }
    }
    expect(ok).toBeGreaterThan(1000);
    expect(codes.size).toBeGreaterThan(1);
  });
});
