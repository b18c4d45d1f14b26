import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { clampOffsetMs, offsetWords, parseAt, spanWords } from './timeline.ts';
import { translator, type Lang, type WordTable } from './words.ts';

const words = (lang: Exclude<Lang, 'en'>) => translator(lang, JSON.parse(fs.readFileSync(path.join(path.dirname(fileURLToPath(import.meta.url)), '..', 'locales', `${lang}.json`), 'utf8')) as WordTable);

const MIN = 60_000;

describe('the time control model', () => {
  it('keeps the offset within 12 h either side, on whole minutes', () => {
    expect(clampOffsetMs(90.4 * MIN)).toBe(90 * MIN);
    expect(clampOffsetMs(13 * 60 * MIN)).toBe(12 * 60 * MIN);
    expect(clampOffsetMs(-13 * 60 * MIN)).toBe(-12 * 60 * MIN);
  });

  it('says the offset in plain words', () => {
    expect(offsetWords(0)).toBe('now');
    expect(offsetWords(130 * MIN)).toBe('2 h 10 min ahead');
    expect(offsetWords(-35 * MIN)).toBe('35 min back');
    expect(offsetWords(60 * MIN, true)).toBe('1 h after the pinned time');
    expect(offsetWords(0, true)).toBe('the pinned time');
    expect(spanWords(-61 * MIN)).toBe('1 h 1 min');
  });

  it('says the offset in German, French and Spanish from the locale tables', () => {
    const de = words('de');
    expect(offsetWords(0, false, de)).toBe('jetzt');
    expect(offsetWords(130 * MIN, false, de)).toBe('in 2 Std. 10 Min.');
    expect(offsetWords(-35 * MIN, false, de)).toBe('vor 35 Min.');
    expect(offsetWords(-120 * MIN, true, de)).toBe('2 Std. vor der festgelegten Zeit');
    expect(offsetWords(0, true, de)).toBe('die festgelegte Zeit');
    const fr = words('fr');
    expect(offsetWords(-150 * MIN, false, fr)).toBe('il y a 2 h 30 min');
    expect(offsetWords(20 * MIN, true, fr)).toBe('20 min après l’heure fixée');
    const es = words('es');
    expect(offsetWords(-150 * MIN, false, es)).toBe('hace 2 h 30 min');
    expect(offsetWords(60 * MIN, false, es)).toBe('dentro de 1 h');
  });

  it('reads the at attribute only as an ISO time with a zone', () => {
    expect(parseAt('2026-03-20T21:43:00Z')).toBe(Date.UTC(2026, 2, 20, 21, 43));
    expect(parseAt('2026-03-20T23:43+02:00')).toBe(Date.UTC(2026, 2, 20, 21, 43));
    expect(parseAt('2026-03-20 21:43')).toBeUndefined();
    expect(parseAt('')).toBeUndefined();
    expect(parseAt('2026-13-45T99:00Z')).toBeUndefined();
  });
});
