/**
 * The reader's words for every component of one <nadir-track>: the root calls provideWords with
 * its settled locale; children call useWords. English is there at once; another language's table
 * is fetched once per page (assets.ts loadWords) and replaces the English words when it arrives.
 */
import { computed, inject, provide, shallowRef, watch, type ComputedRef, type InjectionKey } from 'vue';
import { loadWords } from '../lib/assets.ts';
import { chooseLang, english, translator, type Lang, type Translate, type WordTable } from '../lib/words.ts';

const WORDS: InjectionKey<ComputedRef<Translate>> = Symbol('nadir-words');

export function provideWords(locale: () => string | undefined): { t: ComputedRef<Translate>; lang: ComputedRef<Lang> } {
  const lang = computed(() => chooseLang(locale()));
  const tables = shallowRef<Partial<Record<Lang, WordTable>>>({});
  watch(
    lang,
    (l) => {
      if (l === 'en' || tables.value[l]) return;
      void loadWords(l).then((w) => {
        if (w) tables.value = { ...tables.value, [l]: w };
      });
    },
    { immediate: true },
  );
  const t = computed<Translate>(() => (lang.value === 'en' ? english : translator(lang.value, tables.value[lang.value] ?? null)));
  provide(WORDS, t);
  return { t, lang };
}

export function useWords(): ComputedRef<Translate> {
  return inject(WORDS, () => computed<Translate>(() => english), true);
}
