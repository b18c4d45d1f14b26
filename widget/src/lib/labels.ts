/**
 * Where the satellite names go on the map. A label must read as its own marker's: it sits beside
 * that marker, inside the map, over no other label and near no other marker, so the nearest
 * marker to any label is always its own. When no spot passes, the label is left out (the chips
 * and the live region still name the satellite) rather than drawn where it would name another.
 * Pure geometry, no DOM: tested in labels.spec.ts.
 */

export interface LabelMark {
  id: string;
  name: string;
  /** Marker centre in map pixels. */
  x: number;
  y: number;
}

export interface LabelBox {
  x0: number;
  y0: number;
  x1: number;
  y1: number;
}

export interface LabelSpot {
  /** Text position relative to the marker centre (SVG x and baseline y). */
  dx: number;
  dy: number;
  anchor: 'start' | 'end';
  /** The label's estimated box in map pixels. */
  box: LabelBox;
}

export interface LabelOptions {
  width: number;
  height: number;
  fontPx: number;
  /** Id placed first (the picked satellite), so its label wins a crowded spot. */
  first?: string | null;
  /** Other points no label may cover (the observer's mark), map pixels. */
  avoid?: readonly { x: number; y: number }[];
  /** Text width in pixels; an estimate for the widget's semibold face by default. */
  measure?: (text: string, fontPx: number) => number;
}

/** Gap between the marker centre and the near edge of its label, px (the marker halo is 11). */
export const LABEL_GAP = 9;
/** No other marker's centre may come this close to a label box, px: its halo plus a clear margin. */
export const MARKER_CLEARANCE = 16;

/** Clearance around points to avoid, px (the observer's diamond is 6 px from its centre). */
const AVOID_CLEARANCE = 8;

/** Work Sans semibold averages a little under 0.6 em a character for names like these. */
const estimate = (text: string, fontPx: number) => text.length * fontPx * 0.6 + 4;

function distance(b: LabelBox, x: number, y: number): number {
  const dx = Math.max(b.x0 - x, 0, x - b.x1);
  const dy = Math.max(b.y0 - y, 0, y - b.y1);
  return Math.hypot(dx, dy);
}

const overlaps = (a: LabelBox, b: LabelBox, pad = 2) => a.x0 - pad < b.x1 && b.x0 - pad < a.x1 && a.y0 - pad < b.y1 && b.y0 - pad < a.y1;

/** Candidate spots around a marker, most preferred first: above right, below right, then the same on the left. */
function candidates(m: LabelMark, wide: number, f: number): LabelSpot[] {
  // baselines that leave 4 px between the text box (cap height 0.8 em, descenders 0.25 em) and
  // the marker's centre line, above or below it
  const above = -(f * 0.25 + 4);
  const below = f * 0.8 + 4;
  const spots: [dx: number, dy: number, anchor: 'start' | 'end'][] = [
    [LABEL_GAP, above, 'start'],
    [LABEL_GAP, below, 'start'],
    [-LABEL_GAP, above, 'end'],
    [-LABEL_GAP, below, 'end'],
  ];
  return spots.map(([dx, dy, anchor]) => {
    const x0 = anchor === 'start' ? m.x + dx : m.x + dx - wide;
    // the box runs from the cap height (about 0.75 em above the baseline) to the descenders
    return { dx, dy, anchor, box: { x0, x1: x0 + wide, y0: m.y + dy - f * 0.8, y1: m.y + dy + f * 0.25 } };
  });
}

export function placeLabels(marks: readonly LabelMark[], opts: LabelOptions): Map<string, LabelSpot> {
  const measure = opts.measure ?? estimate;
  const out = new Map<string, LabelSpot>();
  const placed: LabelBox[] = [];
  const order = [...marks].sort((a, b) => Number(b.id === opts.first) - Number(a.id === opts.first));
  for (const m of order) {
    const wide = measure(m.name, opts.fontPx);
    const spot = candidates(m, wide, opts.fontPx).find(
      ({ box }) =>
        box.x0 >= 2 &&
        box.x1 <= opts.width - 2 &&
        box.y0 >= 2 &&
        box.y1 <= opts.height - 2 &&
        !placed.some((p) => overlaps(p, box)) &&
        marks.every((o) => o === m || distance(box, o.x, o.y) >= MARKER_CLEARANCE) &&
        (opts.avoid ?? []).every((o) => distance(box, o.x, o.y) >= AVOID_CLEARANCE),
    );
    if (!spot) continue;
    placed.push(spot.box);
    out.set(m.id, spot);
  }
  return out;
}
