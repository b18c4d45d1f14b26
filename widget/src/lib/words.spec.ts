import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { chooseLang, compassIn, compassPhrase, EN, LANGS, translator, type Msg, type WordTable } from './words.ts';

const dir = path.join(path.dirname(fileURLToPath(import.meta.url)), '..', 'locales');
const table = (lang: string) => JSON.parse(fs.readFileSync(path.join(dir, `${lang}.json`), 'utf8')) as Record<string, Msg>;
const holes = (m: Msg) => [...new Set((typeof m === 'string' ? [m] : Object.values(m)).flatMap((s) => [...s.matchAll(/\{(\w+)\}/g)].map((x) => x[1])))].sort();

describe('locale tables', () => {
  for (const lang of LANGS.filter((l) => l !== 'en')) {
    it(`${lang} has every English key, no other, with the same placeholders and plural shape`, () => {
      const t = table(lang);
      expect(Object.keys(t).sort()).toEqual(Object.keys(EN).sort());
      for (const [key, en] of Object.entries(EN) as [string, Msg][]) {
        const m = t[key]!;
        expect(typeof m, key).toBe(typeof en);
        expect(holes(m), `${lang} ${key}`).toEqual(holes(en));
        if (typeof m !== 'string') expect(Object.keys(m), key).toEqual(expect.arrayContaining(['one', 'other']));
        // a copy of the English sentence is a missed translation (short shared words aside)
        if (typeof m === 'string' && m.length > 24) expect(m, `${lang} ${key}`).not.toBe(en);
      }
    });
  }
});

describe('chooseLang', () => {
  it('takes the locale attribute first, then the first browser language we speak, else English', () => {
    expect(chooseLang('de-AT', ['fr-FR'])).toBe('de');
    expect(chooseLang(undefined, ['ja-JP', 'es-MX', 'de'])).toBe('es');
    expect(chooseLang(undefined, ['fr_CA'])).toBe('fr');
    expect(chooseLang(undefined, ['ja'])).toBe('en');
    expect(chooseLang('pt-BR', ['de'])).toBe('en');
  });
});

describe('translator', () => {
  it('fills placeholders, chooses plural forms by n, and falls back to English for a missing key', () => {
    const de = translator('de', { hours: { one: '{n} Stunde', other: '{n} Stunden' }, over: 'Über {place}' } as WordTable);
    expect(de('over', { place: 'dem Nordatlantik' })).toBe('Über dem Nordatlantik');
    expect(de('hours', { n: 1 })).toBe('1 Stunde');
    expect(de('hours', { n: 5 })).toBe('5 Stunden');
    expect(de('altitude')).toBe('Altitude');
    const fr = translator('fr', table('fr') as WordTable);
    expect(compassIn(fr, 90)).toBe('est');
    expect(compassPhrase(fr, 90)).toBe('à l’est');
    expect(compassPhrase(translator('en'), 225)).toBe('in the south-west');
  });
});
