/**
 * Short messages about finished actions, shown as toasts and read out by the live region in the
 * shell. Each leaves by itself (6 s, errors 12 s); while the pointer or the keyboard focus is on
 * the toasts (`hold`) none leaves, and each gets back the time it had left (`release`).
 */
import { defineStore } from 'pinia';
import { ref } from 'vue';

export interface Notice {
  id: number;
  kind: 'success' | 'error' | 'info';
  text: string;
  /** Read out but not drawn: the page already shows the same thing in place (an upload report). */
  spokenOnly?: boolean;
}

export const NOTICE_TTL_MS: Record<Notice['kind'], number> = { success: 6000, info: 6000, error: 12_000 };
/** At most this many toasts at once; the oldest leaves first. */
export const MAX_NOTICES = 3;
/** A toast that was held keeps at least this long after release, so it can still be read. */
export const MIN_AFTER_HOLD_MS = 2000;

interface Timer {
  handle: ReturnType<typeof setTimeout> | undefined;
  remainingMs: number;
  startedAt: number;
}

export const useNoticesStore = defineStore('notices', () => {
  const notices = ref<Notice[]>([]);
  const held = ref(false);
  const timers = new Map<number, Timer>();
  let next = 1;

  function arm(id: number, t: Timer, ms: number) {
    t.startedAt = Date.now();
    t.remainingMs = ms;
    t.handle = setTimeout(() => dismiss(id), ms);
  }

  /** `ttlMs` 0 keeps the toast until it is dismissed. */
  function push(text: string, kind: Notice['kind'] = 'success', ttlMs = NOTICE_TTL_MS[kind], options: { spokenOnly?: boolean } = {}): number {
    const id = next++;
    const kept = notices.value.slice(-(MAX_NOTICES - 1));
    for (const n of notices.value) if (!kept.includes(n)) forget(n.id);
    notices.value = [...kept, { id, kind, text, ...(options.spokenOnly ? { spokenOnly: true } : {}) }];
    if (ttlMs > 0) {
      const t: Timer = { handle: undefined, remainingMs: ttlMs, startedAt: Date.now() };
      timers.set(id, t);
      if (!held.value) arm(id, t, ttlMs);
    }
    return id;
  }

  function forget(id: number) {
    const t = timers.get(id);
    if (t) clearTimeout(t.handle);
    timers.delete(id);
  }

  function dismiss(id: number) {
    forget(id);
    notices.value = notices.value.filter((n) => n.id !== id);
  }

  /** The person is reading (pointer over, or focus in, the toasts): stop every clock. */
  function hold() {
    if (held.value) return;
    held.value = true;
    const now = Date.now();
    for (const t of timers.values()) {
      if (t.handle === undefined) continue;
      clearTimeout(t.handle);
      t.handle = undefined;
      t.remainingMs -= now - t.startedAt;
    }
  }

  /** Start the clocks again with the time each toast had left. */
  function release() {
    if (!held.value) return;
    held.value = false;
    for (const [id, t] of timers) arm(id, t, Math.max(t.remainingMs, MIN_AFTER_HOLD_MS));
  }

  return { notices, held, push, dismiss, hold, release };
});
