/**
 * The widget's default palette (the --nadir-* fallbacks) meets WCAG 2.2 AA in both themes: 4.5:1
 * for text on the paper and cards (success criterion 1.4.3), 3:1 for tracks, markers, the
 * observer and the focus ring against the sea and the land they are drawn on (1.4.11). Ratio and
 * relative luminance as WCAG 2.2 defines them. The palette is read from the component source.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const src = path.dirname(fileURLToPath(import.meta.url));
function files(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? files(path.join(dir, e.name)) : e.name.endsWith('.vue') ? [path.join(dir, e.name)] : []));
}
const home = files(src).find((f) => fs.readFileSync(f, 'utf8').includes('--_paper: var(--nadir-paper,'));

/** The two palette blocks (light, then `.theme-dark`) as token -> colour. */
function palettes(): [Map<string, string>, Map<string, string>] {
  const text = fs.readFileSync(home!, 'utf8');
  const blocks = [...text.matchAll(/\{([^{}]*--_paper: var\(--nadir-paper,[^{}]*)\}/g)].map((m) => m[1]!);
  const read = (b: string) => new Map([...b.matchAll(/--_([a-z0-9-]+):\s*var\(--nadir-[a-z0-9-]+,\s*(#[0-9a-f]{6})\)/gi)].map((m) => [m[1]!, m[2]!.toLowerCase()]));
  return [read(blocks[0]!), read(blocks[1]!)];
}

function luminance(hex: string): number {
  const [r, g, b] = [1, 3, 5].map((i) => {
    const c = parseInt(hex.slice(i, i + 2), 16) / 255;
    return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
  });
  return 0.2126 * r! + 0.7152 * g! + 0.0722 * b!;
}
const contrast = (a: string, b: string) => {
  const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x);
  return (hi! + 0.05) / (lo! + 0.05);
};

const SERIES = [1, 2, 3, 4, 5, 6].map((n) => `series-${n}`);
const PAIRS: Array<[string, string, number]> = [
  ['ink', 'paper', 4.5],
  ['ink', 'card', 4.5],
  ['ink-soft', 'paper', 4.5],
  ['ink-soft', 'card', 4.5],
  ['observer', 'card', 4.5],
  ['observer', 'paper', 4.5],
  ['warn', 'card', 3],
  ['error', 'card', 3],
  ['focus', 'paper', 3],
  ['focus', 'card', 3],
  ['observer', 'sea', 3],
  ['observer', 'land', 3],
  ...SERIES.flatMap((s): Array<[string, string, number]> => [
    [s, 'sea', 3],
    [s, 'land', 3],
  ]),
];

describe('widget palette contrast', () => {
  it('finds the palette with both themes in the component source', () => {
    expect(home, 'a .vue file holding the --nadir-* defaults').toBeDefined();
    const [light, dark] = palettes();
    for (const [fg, bg] of PAIRS) {
      expect(light.has(fg) && light.has(bg), `${fg}/${bg} light`).toBe(true);
      expect(dark.has(fg) && dark.has(bg), `${fg}/${bg} dark`).toBe(true);
    }
  });

  for (const [theme, i] of [['light', 0], ['dark', 1]] as const) {
    it(`meets AA in the ${theme} theme for text, tracks, markers and focus`, () => {
      const p = palettes()[i];
      const failures = PAIRS.flatMap(([fg, bg, min]) => {
        const r = contrast(p.get(fg)!, p.get(bg)!);
        return r >= min ? [] : [`${fg} on ${bg}: ${r.toFixed(2)} < ${min}`];
      });
      expect(failures).toEqual([]);
    });
  }
});
