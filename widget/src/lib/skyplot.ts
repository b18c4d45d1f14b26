/**
 * The sky plot of one pass: a polar plot of the observer's sky, horizon as the outer circle and
 * the zenith at the centre (radius proportional to 90 deg minus elevation), north up and east
 * to the right as on a map. The path is cut into runs by what the reader can see: sunlit while
 * the sky is dark (visible to the eye), sunlit in a light sky, and in the Earth's shadow.
 */

export interface SkyPathPoint {
  t: string;
  azimuth: number;
  elevation: number;
  sunlit: boolean;
  dark: boolean;
}

/** What a stretch of the pass looks like to the reader. */
export type SkyRunKind = 'visible' | 'sunlit' | 'shadow';

export interface SkyRun {
  kind: SkyRunKind;
  /** SVG path data in a box of side 2R centred on (R, R). */
  d: string;
  from: string;
  to: string;
}

/** Position in the plot box (side 2R, centre (R, R)) of a direction in the sky. */
export function skyXY(azimuthDeg: number, elevationDeg: number, r: number): { x: number; y: number } {
  const rho = (r * (90 - Math.max(0, Math.min(90, elevationDeg)))) / 90;
  const a = (azimuthDeg * Math.PI) / 180;
  return { x: r + rho * Math.sin(a), y: r - rho * Math.cos(a) };
}

export function kindOf(p: Pick<SkyPathPoint, 'sunlit' | 'dark'>): SkyRunKind {
  if (!p.sunlit) return 'shadow';
  return p.dark ? 'visible' : 'sunlit';
}

const f1 = (v: number) => (Math.round(v * 10) / 10).toString();

/** The path cut into runs of one kind; neighbouring runs share their end point so the line has no gaps. */
export function skyRuns(path: readonly SkyPathPoint[], r: number): SkyRun[] {
  const runs: SkyRun[] = [];
  let start = 0;
  for (let i = 1; i <= path.length; i++) {
    const prev = path[i - 1] as SkyPathPoint;
    const cur = path[i];
    if (cur && kindOf(cur) === kindOf(prev)) continue;
    const pts = path.slice(start, cur ? i + 1 : i);
    const d = pts
      .map((p, j) => {
        const { x, y } = skyXY(p.azimuth, p.elevation, r);
        return `${j === 0 ? 'M' : 'L'}${f1(x)} ${f1(y)}`;
      })
      .join(' ');
    runs.push({ kind: kindOf(path[start] as SkyPathPoint), d, from: (path[start] as SkyPathPoint).t, to: (pts[pts.length - 1] as SkyPathPoint).t });
    start = i;
  }
  return runs;
}

/** Elevation rings drawn inside the horizon, deg. */
export const SKY_RINGS = [30, 60] as const;
