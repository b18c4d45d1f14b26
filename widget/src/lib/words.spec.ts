import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { chooseLang, compassIn, compassPhrase, EN, LANGS, translator, type Msg, type WordTable } from './words.ts';

const dir = path.join(path.dirname(fileURLToPath(import.meta.url)), '..', 'locales');
const table = (lang: string) => {
  const { countries: _names, ...words } = JSON.parse(fs.readFileSync(path.join(dir, `${lang}.json`), 'utf8')) as Record<string, Msg> & { countries?: Record<string, string> };
  return words as Record<string, Msg>;
};
const countryNames = (lang: string) => (JSON.parse(fs.readFileSync(path.join(dir, `${lang}.json`), 'utf8')) as { countries?: Record<string, string> }).countries ?? {};
/** The areas of world-atlas countries-110m, keyed as the locale files key them: the id, else the English name. */
const atlas = (() => {
  const topo = JSON.parse(fs.readFileSync(createRequire(import.meta.url).resolve('world-atlas/countries-110m.json'), 'utf8')) as { objects: { countries: { geometries: { id?: string; properties: { name: string } }[] } } };
  return topo.objects.countries.geometries.map((g) => ({ key: String(g.id ?? g.properties.name), name: g.properties.name }));
})();
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

    it(`${lang} names every country of the map (world-atlas countries-110m), and nothing else`, () => {
      const names = countryNames(lang);
      expect(atlas.length).toBe(177);
      expect(Object.keys(names).sort()).toEqual(atlas.map((a) => a.key).sort());
      for (const a of atlas) {
        const n = names[a.key]!;
        expect(n.trim(), `${lang} ${a.name}`).toBe(n);
        expect(n.length, `${lang} ${a.name}`).toBeGreaterThan(2);
        expect(n, `${lang} ${a.name}`).not.toMatch(/[{}]/);
      }
      // translated, not the map's English copied: most names differ from it
      expect(atlas.filter((a) => names[a.key] !== a.name).length).toBeGreaterThan(90);
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

  it('carries the language’s country names, and none for English', () => {
    expect(translator('de', { countries: { '276': 'Deutschland' } }).countries).toEqual({ '276': 'Deutschland' });
    expect(translator('de').countries).toBeUndefined();
    expect(translator('en').countries).toBeUndefined();
  });
});

describe('reader-facing words live in the table', () => {
  const src = path.join(path.dirname(fileURLToPath(import.meta.url)), '..');
  const files = (d: string): string[] => fs.readdirSync(d, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? files(path.join(d, e.name)) : [path.join(d, e.name)]));
  const vue = files(src).filter((f) => f.endsWith('.vue'));
  const ts = files(src).filter((f) => f.endsWith('.ts') && !f.endsWith('.spec.ts') && !f.endsWith(`${path.sep}words.ts`));

  it('no component template holds English text or a fixed label, title or role description', () => {
    expect(vue.length).toBeGreaterThan(5);
    const found: string[] = [];
    for (const f of vue) {
      const tpl = fs.readFileSync(f, 'utf8').match(/<template>([\s\S]*)<\/template>/)?.[1] ?? '';
      // text between tags, outside {{ }}: words of two letters or more
      const bare = tpl.replace(/<!--[\s\S]*?-->/g, '').replace(/\{\{[\s\S]*?\}\}/g, '').replace(/<\/?[A-Za-z][^>"]*(?:"[^"]*"[^>"]*)*>/g, '\n');
      // units (km, km/s) are the same in every language
      for (const line of bare.split('\n')) if (/[A-Za-z]{2,}/.test(line.replace(/\bkm(\/s)?\b/g, ''))) found.push(`${path.basename(f)}: ${line.trim()}`);
      for (const m of tpl.matchAll(/\s(aria-label|aria-roledescription|aria-description|title|alt|placeholder)="([^"]*)"/g)) found.push(`${path.basename(f)}: ${m[1]}="${m[2]}"`);
    }
    expect(found).toEqual([]);
  });

  it('no script sets a notice heading or text, or a word table, outside words.ts', () => {
    const found: string[] = [];
    for (const f of ts) {
      const code = fs.readFileSync(f, 'utf8');
      for (const m of code.matchAll(/\b(heading|text):\s*['`"][A-Z]/g)) found.push(`${path.basename(f)}: ${m[0]}`);
      for (const m of code.matchAll(/export const \w+_WORDS\b/g)) found.push(`${path.basename(f)}: ${m[0]}`);
    }
    expect(found).toEqual([]);
  });
});
