/**
 * Loads `<nadir-track>` from the server at run time (it is served at /widget/nadir-track.js and
 * is not part of the console bundle), once for the whole app.
 */
import { ref } from 'vue';

export type WidgetState = 'idle' | 'loading' | 'ready' | 'failed';

const state = ref<WidgetState>('idle');
let loading: Promise<void> | null = null;

export const WIDGET_URL = '/widget/nadir-track.js';

export function useWidget() {
  function load(): Promise<void> {
    if (typeof customElements !== 'undefined' && customElements.get('nadir-track')) {
      state.value = 'ready';
      return Promise.resolve();
    }
    loading ??= (async () => {
      state.value = 'loading';
      try {
        await import(/* @vite-ignore */ WIDGET_URL);
        state.value = 'ready';
      } catch {
        state.value = 'failed';
        loading = null;
      }
    })();
    return loading;
  }
  return { state, load };
}
