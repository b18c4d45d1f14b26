import { describe, expect, it } from 'vitest';
import { LABEL_GAP, MARKER_CLEARANCE, placeLabels, type LabelBox, type LabelMark } from './labels.ts';

const dist = (b: LabelBox, x: number, y: number) => Math.hypot(Math.max(b.x0 - x, 0, x - b.x1), Math.max(b.y0 - y, 0, y - b.y1));

/** Every placed label is inside the map, clear of the other labels, and nearer its own marker than any other. */
function expectOwned(marks: LabelMark[], width: number, height: number, placed: ReturnType<typeof placeLabels>) {
  const boxes = [...placed.values()].map((s) => s.box);
  for (const [id, spot] of placed) {
    const own = marks.find((m) => m.id === id)!;
    const b = spot.box;
    expect(b.x0).toBeGreaterThanOrEqual(0);
    expect(b.x1).toBeLessThanOrEqual(width);
    expect(b.y0).toBeGreaterThanOrEqual(0);
    expect(b.y1).toBeLessThanOrEqual(height);
    const ownDist = dist(b, own.x, own.y);
    expect(ownDist).toBeLessThanOrEqual(Math.hypot(LABEL_GAP, 4) + 0.01);
    for (const o of marks) if (o !== own) expect(dist(b, o.x, o.y)).toBeGreaterThan(ownDist + 4);
    for (const other of boxes) if (other !== b) expect(b.x1 <= other.x0 || other.x1 <= b.x0 || b.y1 <= other.y0 || other.y1 <= b.y0).toBe(true);
    // the text really sits at the box: anchor start reads rightwards from its left edge
    expect(spot.anchor === 'start' ? own.x + spot.dx : own.x + spot.dx).toBeCloseTo(spot.anchor === 'start' ? b.x0 : b.x1);
  }
}

describe('placeLabels', () => {
  it('puts a lone label above and to the right of its marker', () => {
    const placed = placeLabels([{ id: 'a', name: 'Orrery-1', x: 200, y: 100 }], { width: 600, height: 300, fontPx: 13 });
    expect(placed.get('a')).toMatchObject({ dx: LABEL_GAP, anchor: 'start' });
    expect(placed.get('a')!.dy).toBeLessThan(0);
  });

  it('never draws a label beside another satellite’s marker (the map QA saw: Wren at the right edge, Halcyon just left of it)', () => {
    // marker positions read from the screenshot of the 620 px light map
    const marks: LabelMark[] = [
      { id: 'wren', name: 'Wren Pathfinder', x: 552, y: 193 },
      { id: 'orrery', name: 'Orrery-1', x: 239, y: 231 },
      { id: 'halcyon', name: 'Halcyon Relay', x: 458, y: 193 },
      { id: 'tessera', name: 'Tessera GEO', x: 339, y: 292 },
    ];
    const placed = placeLabels(marks, { width: 620, height: 310, fontPx: 13 });
    expectOwned(marks, 620, 310, placed);
    const wren = placed.get('wren');
    // Wren's name does not fit to the right; on the left it would run into Halcyon: it may go below or not at all
    if (wren) expect(dist(wren.box, 458, 193)).toBeGreaterThanOrEqual(MARKER_CLEARANCE);
    expect(placed.has('halcyon')).toBe(true);
  });

  it('keeps labels off the observer’s mark', () => {
    const mark = { id: 'a', name: 'Orrery-1', x: 200, y: 100 };
    expect(placeLabels([mark], { width: 600, height: 300, fontPx: 13 }).get('a')!.anchor).toBe('start');
    const spot = placeLabels([mark], { width: 600, height: 300, fontPx: 13, avoid: [{ x: 230, y: 92 }] }).get('a');
    if (spot) expect(dist(spot.box, 230, 92)).toBeGreaterThanOrEqual(8);
    expect(spot?.anchor === 'start' && spot.dy < 0).toBe(false);
  });

  it('turns a label to the left of its marker near the right edge when nothing is there', () => {
    const placed = placeLabels([{ id: 'w', name: 'Wren Pathfinder', x: 590, y: 150 }], { width: 620, height: 310, fontPx: 13 });
    expect(placed.get('w')?.anchor).toBe('end');
  });

  it('moves a label below its marker near the top edge', () => {
    const placed = placeLabels([{ id: 'w', name: 'Wren', x: 100, y: 6 }], { width: 620, height: 310, fontPx: 13 });
    expect(placed.get('w')!.dy).toBeGreaterThan(0);
  });

  it('leaves a label out rather than cramming it among close markers', () => {
    const marks: LabelMark[] = [
      { id: 'a', name: 'Alpha', x: 100, y: 100 },
      { id: 'b', name: 'Bravo', x: 100, y: 108 },
    ];
    const placed = placeLabels(marks, { width: 400, height: 200, fontPx: 13 });
    expect(placed.size).toBe(0);
    expectOwned(marks, 400, 200, placed);
  });

  it('keeps every label its own marker’s on many random maps, at 320 and 1280 px', () => {
    let seed = 7;
    const rand = () => ((seed = (seed * 16807) % 2147483647) / 2147483647);
    for (const [width, height, fontPx] of [[300, 146, 11], [1258, 610, 13]] as const) {
      for (let run = 0; run < 300; run++) {
        const n = 1 + Math.floor(rand() * 6);
        const marks = Array.from({ length: n }, (_, i) => ({ id: `s${i}`, name: ['Wren Pathfinder', 'Orrery-1', 'Halcyon Relay', 'Tessera GEO', 'Kite-2', 'Ember'][i]!, x: rand() * width, y: rand() * height }));
        expectOwned(marks, width, height, placeLabels(marks, { width, height, fontPx }));
      }
    }
  });
});
