/**
 * Light (paper) or dark: follows the system unless the person picks one. The choice is a display
 * preference, kept in localStorage; the page reads it before mounting (main.ts).
 */
import { computed, ref } from 'vue';

export type ThemeChoice = 'system' | 'light' | 'dark';
const KEY = 'nadir.theme';

function read(): ThemeChoice {
  try {
    const v = localStorage.getItem(KEY);
    return v === 'light' || v === 'dark' ? v : 'system';
  } catch {
    return 'system';
  }
}

const choice = ref<ThemeChoice>('system');
const systemDark = ref(false);
let started = false;

function apply() {
  const root = document.documentElement;
  if (choice.value === 'system') delete root.dataset.theme;
  else root.dataset.theme = choice.value;
}

/** Read the saved choice and follow the system setting. Call once before mounting. */
export function startTheme() {
  if (started) return;
  started = true;
  choice.value = read();
  const mq = typeof matchMedia === 'function' ? matchMedia('(prefers-color-scheme: dark)') : null;
  systemDark.value = mq?.matches ?? false;
  mq?.addEventListener('change', (e) => (systemDark.value = e.matches));
  apply();
}

export function useTheme() {
  const effective = computed<'light' | 'dark'>(() => (choice.value === 'system' ? (systemDark.value ? 'dark' : 'light') : choice.value));
  function set(c: ThemeChoice) {
    choice.value = c;
    try {
      if (c === 'system') localStorage.removeItem(KEY);
      else localStorage.setItem(KEY, c);
    } catch {
      // not saved: the choice still holds for this visit
    }
    apply();
  }
  return { choice, effective, set };
}
