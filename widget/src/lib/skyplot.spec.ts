import { describe, expect, it } from 'vitest';
import { kindOf, skyRuns, skyXY, type SkyPathPoint } from './skyplot.ts';

describe('sky plot geometry', () => {
  it('puts the zenith at the centre, the horizon on the circle, north up and east right', () => {
    expect(skyXY(0, 90, 100)).toEqual({ x: 100, y: 100 });
    const n = skyXY(0, 0, 100);
    expect(n.x).toBeCloseTo(100, 9);
    expect(n.y).toBeCloseTo(0, 9);
    const e = skyXY(90, 0, 100);
    expect(e.x).toBeCloseTo(200, 9);
    expect(e.y).toBeCloseTo(100, 9);
    const s30 = skyXY(180, 30, 100);
    expect(s30.y).toBeCloseTo(100 + (100 * 60) / 90, 9);
  });

  it('cuts the path into visible, sunlit and shadow runs that meet', () => {
    const p = (t: number, sunlit: boolean, dark: boolean): SkyPathPoint => ({ t: String(t), azimuth: t * 10, elevation: 10 + t, sunlit, dark });
    const path = [p(0, true, false), p(1, true, true), p(2, true, true), p(3, false, true), p(4, false, true)];
    const runs = skyRuns(path, 100);
    expect(runs.map((r) => r.kind)).toEqual(['sunlit', 'visible', 'shadow']);
    expect(runs.map((r) => [r.from, r.to])).toEqual([['0', '1'], ['1', '3'], ['3', '4']]);
    expect(runs[0]?.d.startsWith('M')).toBe(true);
    expect(kindOf({ sunlit: false, dark: false })).toBe('shadow');
  });
});
