/**
 * The widget's clock: `now` steps once a second (every ten seconds with reduced motion) while the
 * element is on screen and the tab visible, and stops otherwise. `running` says which; the data
 * (useTrackerData) pauses and resumes with it. A time control belongs here: it sets what `now`
 * reads, and everything drawn follows.
 */
import { computed, onBeforeUnmount, onMounted, ref, watch } from 'vue';

export function useClock(host: HTMLElement | null) {
  const now = ref(Date.now());
  const docVisible = ref(typeof document === 'undefined' || document.visibilityState !== 'hidden');
  const onScreen = ref(true);
  const running = computed(() => docVisible.value && onScreen.value);
  const reducedMotion =
    typeof matchMedia === 'function' ? matchMedia('(prefers-reduced-motion: reduce)').matches : false;
  /** The marker moves well under a pixel a second at 1280 px, so one step a second looks continuous. */
  const tickMs = reducedMotion ? 10_000 : 1000;
  let tickTimer: ReturnType<typeof setTimeout> | undefined;
  function tick() {
    now.value = Date.now();
    clearTimeout(tickTimer);
    if (running.value) tickTimer = setTimeout(tick, tickMs - (now.value % tickMs));
  }
  watch(running, (r) => {
    if (r) tick();
    else clearTimeout(tickTimer);
  });

  // The first requests leave in setup, before the first render; they wait only when the element
  // starts off-screen (then the IntersectionObserver starts them).
  if (host && typeof window !== 'undefined') {
    const r = host.getBoundingClientRect();
    const sized = r.width > 0 || r.height > 0;
    onScreen.value = !sized || (r.bottom >= 0 && r.top <= window.innerHeight && r.right >= 0 && r.left <= window.innerWidth);
  }

  let seer: IntersectionObserver | undefined;
  function onVisibility() {
    docVisible.value = document.visibilityState !== 'hidden';
  }
  onMounted(() => {
    document.addEventListener('visibilitychange', onVisibility);
    if (typeof IntersectionObserver === 'function' && host) {
      seer = new IntersectionObserver((entries) => {
        const e = entries[entries.length - 1];
        if (e) onScreen.value = e.isIntersecting;
      });
      seer.observe(host);
    }
    if (running.value) tick();
  });
  onBeforeUnmount(() => {
    document.removeEventListener('visibilitychange', onVisibility);
    seer?.disconnect();
    clearTimeout(tickTimer);
  });

  /** Coarser steps for what need not change every second (the night bands, the words). */
  const minute = computed(() => Math.floor(now.value / 60_000));
  const tenSeconds = computed(() => Math.floor(now.value / 10_000));
  return { now, running, minute, tenSeconds };
}

/** theme="auto" follows the reader's colour scheme, live. */
export function usePrefersDark() {
  const darkQuery = typeof matchMedia === 'function' ? matchMedia('(prefers-color-scheme: dark)') : null;
  const prefersDark = ref(darkQuery?.matches ?? false);
  const onSchemeChange = (e: MediaQueryListEvent) => {
    prefersDark.value = e.matches;
  };
  darkQuery?.addEventListener('change', onSchemeChange);
  onBeforeUnmount(() => darkQuery?.removeEventListener('change', onSchemeChange));
  return prefersDark;
}
