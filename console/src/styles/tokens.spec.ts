/**
 * The console palette meets WCAG 2.2 AA contrast in both themes: 4.5:1 for text on the grounds it
 * is used on (success criterion 1.4.3), 3:1 for form borders and the focus ring (1.4.11).
 * The ratio and relative luminance are WCAG 2.2's own definitions ("contrast ratio",
 * "relative luminance" in the glossary). Colours are read from tokens.css itself.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const css = fs.readFileSync(path.join(path.dirname(fileURLToPath(import.meta.url)), 'tokens.css'), 'utf8');

/** token -> [light, dark] hex colours, from `--name: light-dark(#light, #dark);` lines. */
function palette(text: string): Map<string, [string, string]> {
  const out = new Map<string, [string, string]>();
  for (const m of text.matchAll(/--([a-z0-9-]+):\s*light-dark\(\s*(#[0-9a-f]{6})\s*,\s*(#[0-9a-f]{6})\s*\)/gi)) out.set(m[1]!, [m[2]!, m[3]!]);
  return out;
}

/** WCAG 2.2 relative luminance of an sRGB colour. */
export function luminance(hex: string): number {
  const [r, g, b] = [1, 3, 5].map((i) => {
    const c = parseInt(hex.slice(i, i + 2), 16) / 255;
    return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
  });
  return 0.2126 * r! + 0.7152 * g! + 0.0722 * b!;
}

export function contrast(a: string, b: string): number {
  const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x);
  return (hi! + 0.05) / (lo! + 0.05);
}

const tokens = palette(css);
const TEXT = ['ink', 'ink-soft', 'link', 'accent', 'ok', 'warn', 'bad', 'info'];
/** [foreground, background, minimum ratio] */
const PAIRS: Array<[string, string, number]> = [
  ...TEXT.flatMap((t): Array<[string, string, number]> => [
    [t, 'paper', 4.5],
    [t, 'paper-raised', 4.5],
  ]),
  ['ink-faint', 'paper', 4.5],
  ['ink-faint', 'paper-raised', 4.5],
  ['ink', 'paper-sunk', 4.5],
  ['ink-soft', 'paper-sunk', 4.5],
  ['accent-ink', 'accent', 4.5],
  ['accent-ink', 'accent-hover', 4.5],
  ['accent', 'accent-soft', 4.5],
  ['ok', 'ok-soft', 4.5],
  ['warn', 'warn-soft', 4.5],
  ['bad', 'bad-soft', 4.5],
  ['info', 'info-soft', 4.5],
  ['ink', 'accent-soft', 4.5],
  ['rule-strong', 'paper-raised', 3],
  ['rule-strong', 'paper', 3],
  ['focus', 'paper', 3],
  ['focus', 'paper-raised', 3],
];

describe('console palette contrast', () => {
  it('computes the WCAG ratio of known pairs', () => {
    // black on white is 21:1 and a colour on itself 1:1 by the definition
    expect(contrast('#000000', '#ffffff')).toBeCloseTo(21, 5);
    expect(contrast('#777777', '#777777')).toBe(1);
    // #767676 on white is the familiar lightest grey that passes 4.5:1 (common practice)
    expect(contrast('#767676', '#ffffff')).toBeGreaterThan(4.5);
    expect(contrast('#777777', '#ffffff')).toBeLessThan(4.5);
  });

  it('reads every token the pairs name from tokens.css', () => {
    for (const [fg, bg] of PAIRS) {
      expect(tokens.has(fg), fg).toBe(true);
      expect(tokens.has(bg), bg).toBe(true);
    }
  });

  for (const [theme, i] of [['light', 0], ['dark', 1]] as const) {
    it(`meets AA in the ${theme} theme for every text, border and focus pair`, () => {
      const failures = PAIRS.flatMap(([fg, bg, min]) => {
        const ratio = contrast(tokens.get(fg)![i], tokens.get(bg)![i]);
        return ratio >= min ? [] : [`${fg} on ${bg}: ${ratio.toFixed(2)} < ${min}`];
      });
      expect(failures).toEqual([]);
    });
  }
});
