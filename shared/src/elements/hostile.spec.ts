/**
 * Hostile texts: every parser runs in time linear in the text, and reading with an entry cap
 * stops at the cap. Each shape is 2 MiB (the upload limit of the server). Shapes that cost the
 * square of their size before (minutes at 2 MiB): many unclosed <omm> start tags, long runs of
 * blanks inside a line (trailing-blank trim and format detection), many text pieces in one
 * element; shapes that made a million entries: one short line after another, stray text after
 * an <omm>, many JSON objects. The budget is CPU time of this test process (so other work on the
 * machine does not count), one second per shape; the linear parsers need a few tens of ms, the
 * quadratic ones took from 2 s to several minutes. Shapes: hostile-texts.ts; figures:
 * tests/bench/parse.bench.ts.
 */
import { describe, expect, it } from 'vitest';
import { parseElementSets, readElementSets } from './detect.ts';
import { HOSTILE_SHAPES, HOSTILE_TEXT_CHARS } from './hostile-texts.ts';

const CAP = 500;
const BUDGET_MS = 1000;
const SIZE = HOSTILE_TEXT_CHARS;
const fill = (unit: string) => unit.repeat(Math.floor(SIZE / unit.length));

/** CPU time (user + system) of this process, in ms: what the event loop would be blocked for. */
function cpuMs<T>(fn: () => T): { value: T; ms: number } {
  // CPU time, not wall time: other work on a shared machine must not fail the test.
  // eslint-disable-next-line no-restricted-globals
  const before = process.cpuUsage();
  const value = fn();
  // eslint-disable-next-line no-restricted-globals
  const d = process.cpuUsage(before);
  return { value, ms: (d.user + d.system) / 1000 };
}

describe('hostile element-set texts of 2 MiB', () => {
  it.each(HOSTILE_SHAPES)('$name: read with a cap of 500 entries in well under a second', ({ make, hint, overCap }) => {
    const text = make();
    expect(text.length).toBeGreaterThan(SIZE * 0.9);
    const { value: read, ms } = cpuMs(() => readElementSets(text, { hint, maxEntries: CAP }));
    expect(ms).toBeLessThan(BUDGET_MS);
    if (overCap) {
      expect(read).toMatchObject({ ok: false, code: 'too-many-entries', maxEntries: CAP });
      if (!read.ok) expect(read.line).toBeGreaterThan(0);
    } else {
      expect(read.ok).toBe(true);
      if (read.ok) {
        expect(read.entries.length).toBeGreaterThan(0);
        expect(read.entries.length).toBeLessThanOrEqual(CAP);
        for (const e of read.entries) if (!e.result.ok) expect(e.result.message).toMatch(/\S/);
      }
    }
  });

  it('stops at the first entry over the cap and names its line', () => {
    const text = Array.from({ length: 8 }, () => 'x').join('\n');
    expect(readElementSets(text, { maxEntries: 8 })).toMatchObject({ ok: true });
    expect(readElementSets(text, { maxEntries: 5 })).toMatchObject({ ok: false, code: 'too-many-entries', maxEntries: 5, line: 6 });
    const ndm = `<ndm>\n${'<omm version="3.0"></omm>\n'.repeat(4)}</ndm>\n`;
    expect(readElementSets(ndm, { maxEntries: 3 })).toMatchObject({ ok: false, line: 5 });
    expect(readElementSets(ndm, { maxEntries: 4 })).toMatchObject({ ok: true });
  });

  it('reads below the cap exactly as without one', () => {
    const texts = [fill('x\n').slice(0, 4000), fill('<omm>').slice(0, 2000), `[${'{},'.repeat(99)}{}]`];
    for (const t of texts) {
      const read = readElementSets(t, { maxEntries: 10_000 });
      expect(read.ok && read.entries).toEqual(parseElementSets(t));
    }
  });

  it('refuses elements nested deeper than an OMM needs, with the place, instead of running out of stack', () => {
    const text = `<omm version="3.0">\n${'<body>'.repeat(40)}${'</body>'.repeat(40)}\n</omm>`;
    const [entry] = parseElementSets(text, 'omm-xml');
    expect(entry?.result).toMatchObject({ ok: false, code: 'structure', line: 2 });
    expect(entry?.result.ok === false && entry.result.message).toMatch(/nested more than 16 levels/);
  });
});
